using System.Text.Json;
using System.Text.Json.Serialization;

namespace Triage.Api.Errors;

/// <summary>
/// Which characters text may carry. Free text (notes, reasons) may hold tab and line breaks but
/// no other C0 control character, no DEL and no NUL (which PostgreSQL text cannot store); names
/// additionally refuse every control character and the bidirectional embedding, override and
/// isolate characters that make a name display as something it is not.
/// </summary>
public static class TextHygiene
{
    /// <summary>True for C0 controls other than tab, line feed and carriage return, and for DEL.</summary>
    public static bool IsForbiddenInText(char c) => (c < 0x20 && c is not ('\t' or '\n' or '\r')) || c == 0x7F;

    /// <summary>Bidirectional formatting characters: embeddings and overrides (U+202A–U+202E), isolates (U+2066–U+2069), marks.</summary>
    public static bool IsBidiControl(char c) => c is (>= '\u202A' and <= '\u202E') or (>= '\u2066' and <= '\u2069') or '\u200E' or '\u200F' or '\u061C';

    /// <summary>The first forbidden character of free text, or null.</summary>
    public static char? FirstForbidden(string text)
    {
        for (var i = 0; i < text.Length; i++)
        {
            var c = text[i];
            if (IsForbiddenInText(c))
            {
                return c;
            }
            if (char.IsSurrogate(c))
            {
                if (char.IsHighSurrogate(c) && i + 1 < text.Length && char.IsLowSurrogate(text[i + 1]))
                {
                    i++;
                    continue;
                }
                return c;
            }
        }
        return null;
    }

    /// <summary>The sentence a problem uses for a forbidden character.</summary>
    public static string Describe(char c) => char.IsSurrogate(c)
        ? "must be valid Unicode text (it holds an unpaired surrogate)"
        : $"must not contain control characters other than tab and line breaks (found U+{(int)c:X4})";
}

/// <summary>
/// Reads every JSON string of a request body through <see cref="TextHygiene"/>: a string holding a
/// forbidden character fails deserialization, which the problem handler turns into a 400 naming the
/// property. Writing is unchanged.
/// </summary>
public sealed class CleanTextConverter : JsonConverter<string>
{
    public override bool HandleNull => false;

    public override string? Read(ref Utf8JsonReader reader, Type typeToConvert, JsonSerializerOptions options)
    {
        if (reader.TokenType != JsonTokenType.String)
        {
            throw new JsonException("must be a string");
        }
        var text = reader.GetString()!;
        if (TextHygiene.FirstForbidden(text) is { } bad)
        {
            throw new JsonException(TextHygiene.Describe(bad));
        }
        return text;
    }

    public override void Write(Utf8JsonWriter writer, string value, JsonSerializerOptions options) => writer.WriteStringValue(value);
}
