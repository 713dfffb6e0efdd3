// FITS header: 2880-byte blocks of 80-character ASCII cards; a card is keyword (columns 1-8),
// value indicator "= " (columns 9-10) and a value (string in single quotes with '' for a quote,
// logical T/F, integer, or real with E or D exponent), optionally followed by "/ comment".
// The header ends at the END card; the rest of its block is blank.
// References:
//  1. IAU FITS Working Group, "Definition of the Flexible Image Transport System (FITS), version 4.0" (2016),
//     §3.1-3.2 (blocks), §4.1-4.2 (card syntax and value formats), §4.4.1 (mandatory keywords).
using System.Globalization;
using System.Text;

namespace Triage.Core.Spectra.Fits;

/// <summary>A FITS file or HDU that cannot be read as a spectrum: names the HDU and the keyword at fault.</summary>
public sealed class FitsFormatException(string? hdu, string? keyword, string message) : Exception(message)
{
    /// <summary>The HDU at fault ("primary", "HDU 2 'SPECTRUM'"), or null when the fault precedes any HDU.</summary>
    public string? Hdu { get; } = hdu;

    /// <summary>The keyword (or column) at fault, or null when none is.</summary>
    public string? Keyword { get; } = keyword;
}

/// <summary>The keywords of one header and their values, in file order.</summary>
/// <remarks>
/// Values are kept as <see cref="string"/> (character strings, trailing blanks removed),
/// <see cref="bool"/> (logical), <see cref="long"/> (integer) or <see cref="double"/> (real).
/// Commentary keywords (COMMENT, HISTORY, blank, CONTINUE) and cards without a value
/// indicator are not kept. A repeated keyword keeps its first value (the standard forbids repeats).
/// </remarks>
public sealed class FitsHeader
{
    /// <summary>Bytes in a FITS block.</summary>
    public const int BlockBytes = 2880;

    /// <summary>Characters in a header card.</summary>
    public const int CardChars = 80;

    private readonly Dictionary<string, object> _values = new(StringComparer.Ordinal);
    private readonly List<string> _order = [];

    /// <summary>Name of the HDU for messages: "primary" or "HDU n 'EXTNAME'" (n counting the primary as 0).</summary>
    public string HduName { get; private set; } = "primary";

    /// <summary>Keywords with a value, in file order.</summary>
    public IReadOnlyList<string> Keywords => _order;

    /// <summary>True when <paramref name="keyword"/> has a value.</summary>
    public bool Contains(string keyword) => _values.ContainsKey(keyword);

    /// <summary>The raw value (string, bool, long or double), or null when absent.</summary>
    public object? this[string keyword] => _values.GetValueOrDefault(keyword);

    /// <summary>An integer value, or null when absent; throws naming the keyword when it is not an integer.</summary>
    public long? Integer(string keyword) => _values.GetValueOrDefault(keyword) switch
    {
        null => null,
        long l => l,
        var v => throw Bad(keyword, $"{keyword} = {Show(v)} must be an integer"),
    };

    /// <summary>A real value (integers are accepted), or null when absent; throws naming the keyword otherwise.</summary>
    public double? Real(string keyword) => _values.GetValueOrDefault(keyword) switch
    {
        null => null,
        long l => l,
        double d => d,
        var v => throw Bad(keyword, $"{keyword} = {Show(v)} must be a number"),
    };

    /// <summary>A character-string value without trailing blanks, or null when absent; throws naming the keyword otherwise.</summary>
    public string? Text(string keyword) => _values.GetValueOrDefault(keyword) switch
    {
        null => null,
        string s => s,
        var v => throw Bad(keyword, $"{keyword} = {Show(v)} must be a character string"),
    };

    /// <summary>An integer keyword the standard requires; throws naming it when missing or out of range.</summary>
    public long RequiredInteger(string keyword, long min, long max)
    {
        long v = Integer(keyword) ?? throw Bad(keyword, $"mandatory keyword {keyword} is missing");
        if (v < min || v > max)
            throw Bad(keyword, string.Create(CultureInfo.InvariantCulture, $"{keyword} = {v} is outside [{min}, {max}]"));
        return v;
    }

    /// <summary>An exception naming this HDU and <paramref name="keyword"/>.</summary>
    public FitsFormatException Bad(string? keyword, string message) => new(HduName, keyword, $"{HduName}: {message}");

    internal void Name(int index)
    {
        HduName = index == 0 ? "primary"
            : Text("EXTNAME") is { Length: > 0 } n ? string.Create(CultureInfo.InvariantCulture, $"HDU {index} '{n}'")
            : string.Create(CultureInfo.InvariantCulture, $"HDU {index}");
    }

    private static string Show(object v) => v switch
    {
        string s => $"'{s}'",
        bool b => b ? "T" : "F",
        IFormattable f => f.ToString(null, CultureInfo.InvariantCulture),
        _ => v.ToString() ?? "",
    };

    /// <summary>
    /// Parses header blocks until the END card. <paramref name="readBlock"/> fills a 2880-byte
    /// buffer and returns false at the end of the stream.
    /// </summary>
    /// <param name="index">HDU index (0 = primary), for messages.</param>
    /// <exception cref="FitsFormatException">Truncated header, no END card, or a malformed card.</exception>
    internal static FitsHeader Parse(Func<byte[], bool> readBlock, int index, byte[] block)
    {
        var header = new FitsHeader();
        header.Name(index);
        int cardNo = 0;
        while (true)
        {
            if (!readBlock(block))
                throw header.Bad("END", cardNo == 0
                    ? "the header block is truncated before its END card (a FITS file is made of complete 2880-byte blocks)"
                    : "the header is truncated before its END card");
            for (int c = 0; c < BlockBytes / CardChars; c++, cardNo++)
            {
                var card = new ReadOnlySpan<byte>(block, c * CardChars, CardChars);
                foreach (byte b in card)
                    if (b is < 0x20 or > 0x7e)
                        throw header.Bad("END", string.Create(CultureInfo.InvariantCulture,
                            $"header card {cardNo + 1} holds the non-text byte 0x{b:x2}: the END card is missing or this is not a FITS file"));
                string keyword = Encoding.ASCII.GetString(card[..8]).TrimEnd();
                if (cardNo == 0 && index == 0 && keyword != "SIMPLE")
                    throw header.Bad("SIMPLE", "the first card must be SIMPLE = T (this is not a FITS file)");
                if (cardNo == 0 && index > 0 && keyword != "XTENSION")
                    throw header.Bad("XTENSION", "an extension must start with XTENSION");
                if (keyword == "END")
                {
                    if (cardNo == 0) throw header.Bad("END", "the header is empty");
                    header.Name(index);
                    return header;
                }
                if (keyword is "" or "COMMENT" or "HISTORY" or "CONTINUE" or "HIERARCH") continue;
                if (card[8] != (byte)'=' || card[9] != (byte)' ') continue;
                object? value = ParseValue(Encoding.ASCII.GetString(card[10..]), out string? error);
                if (error is not null) throw header.Bad(keyword, $"{keyword}: {error}");
                if (value is not null && header._values.TryAdd(keyword, value)) header._order.Add(keyword);
            }
        }
    }

    /// <summary>Parses the value field (columns 11-80); null for an undefined value.</summary>
    internal static object? ParseValue(string field, out string? error)
    {
        error = null;
        string s = field.TrimStart();
        if (s.Length == 0 || s[0] == '/') return null;
        if (s[0] == '\'')
        {
            var sb = new StringBuilder();
            for (int i = 1; i < s.Length; i++)
            {
                if (s[i] != '\'') { sb.Append(s[i]); continue; }
                if (i + 1 < s.Length && s[i + 1] == '\'') { sb.Append('\''); i++; continue; }
                return sb.ToString().TrimEnd();
            }
            error = "character string without its closing quote";
            return null;
        }
        int slash = s.IndexOf('/');
        string token = (slash >= 0 ? s[..slash] : s).Trim();
        if (token == "T") return true;
        if (token == "F") return false;
        if (token.StartsWith('(')) return null; // complex values are never needed here
        if (long.TryParse(token, NumberStyles.AllowLeadingSign, CultureInfo.InvariantCulture, out long l)) return l;
        if (double.TryParse(token.Replace('D', 'E').Replace('d', 'e'), NumberStyles.Float, CultureInfo.InvariantCulture, out double d)
            && double.IsFinite(d))
            return d;
        error = $"value '{token}' is neither a string, a logical, an integer nor a real";
        return null;
    }
}
