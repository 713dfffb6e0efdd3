using System.Globalization;
using System.Text.Encodings.Web;
using System.Text.Json;
using System.Text.Json.Serialization;

namespace Triage.Cli.Verbs;

/// <summary>JSON conventions shared by the verbs: camelCase names, indented, ISO 8601 UTC times.</summary>
internal static class CliJson
{
    public static readonly JsonSerializerOptions Options = new()
    {
        PropertyNamingPolicy = JsonNamingPolicy.CamelCase,
        WriteIndented = true,
        DefaultIgnoreCondition = JsonIgnoreCondition.Never,
        NumberHandling = JsonNumberHandling.AllowNamedFloatingPointLiterals,
        Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping,
        Converters = { new JsonStringEnumConverter(JsonNamingPolicy.CamelCase), new SecondsUtcConverter() },
    };

    /// <summary>Writes instants as <c>2026-01-16T01:23:03Z</c> (UTC, nearest second); reads any ISO 8601 instant.</summary>
    public sealed class SecondsUtcConverter : JsonConverter<DateTimeOffset>
    {
        public override DateTimeOffset Read(ref Utf8JsonReader reader, Type typeToConvert, JsonSerializerOptions options) =>
            reader.GetDateTimeOffset().ToUniversalTime();

        public override void Write(Utf8JsonWriter writer, DateTimeOffset value, JsonSerializerOptions options) =>
            writer.WriteStringValue(Utc(value));
    }

    /// <summary>An instant as ISO 8601 UTC to the second, e.g. 2026-01-16T01:23:03Z.</summary>
    public static string? Utc(DateTimeOffset? t) => t is { } v
        ? Format(new DateTimeOffset((v.UtcTicks + TimeSpan.TicksPerSecond / 2) / TimeSpan.TicksPerSecond * TimeSpan.TicksPerSecond, TimeSpan.Zero))
        : null;

    /// <summary>A window start rounded up to the second, so a printed window never grows.</summary>
    public static string UtcCeiling(DateTimeOffset t) =>
        Format(new DateTimeOffset((t.UtcTicks + TimeSpan.TicksPerSecond - 1) / TimeSpan.TicksPerSecond * TimeSpan.TicksPerSecond, TimeSpan.Zero));

    /// <summary>A window end rounded down to the second.</summary>
    public static string UtcFloor(DateTimeOffset t) =>
        Format(new DateTimeOffset(t.UtcTicks / TimeSpan.TicksPerSecond * TimeSpan.TicksPerSecond, TimeSpan.Zero));

    private static string Format(DateTimeOffset t) => t.ToString("yyyy-MM-dd'T'HH:mm:ss'Z'", CultureInfo.InvariantCulture);

    /// <summary>Rounds for display (keeps JSON short); NaN stays NaN.</summary>
    public static double Round(double value, int digits) => Math.Round(value, digits);

    public static double? Round(double? value, int digits) => value is { } v ? Math.Round(v, digits) : null;

    /// <summary>Writes a clear error line and returns the exit code for bad input.</summary>
    public static int Fail(TextWriter error, string message)
    {
        error.WriteLine($"error: {message}");
        return 2;
    }
}
