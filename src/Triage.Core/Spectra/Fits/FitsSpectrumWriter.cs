// Writes spectra as FITS: fixed-format cards (value indicator in columns 9-10, numbers right-justified
// to column 30, strings quoted from column 11), headers and data padded to 2880-byte blocks (blanks
// for headers, zeros for data), big-endian IEEE-754 doubles or floats.
// References:
//  1. IAU FITS Working Group, "Definition of the Flexible Image Transport System (FITS), version 4.0" (2016),
//     §3.3 (padding), §4.2 (fixed format), §7.3 (binary tables).
using System.Buffers.Binary;
using System.Globalization;
using System.Text;

namespace Triage.Core.Spectra.Fits;

/// <summary>Writes spectra as FITS files that <see cref="FitsSpectrumReader"/> (and any FITS reader) reads back exactly.</summary>
public static class FitsSpectrumWriter
{
    /// <summary>EXTNAME of the binary table written by <see cref="WriteTable"/>.</summary>
    public const string TableName = "SPECTRUM";

    /// <summary>
    /// Writes an empty primary HDU and a binary table <see cref="TableName"/> with one row per sample:
    /// WAVE (vacuum Å, TCTYP = 'WAVE'), FLUX and, when present, ERR, all 64-bit floats, so that values
    /// round-trip bit for bit. <paramref name="resolvingPower"/> goes in <see cref="FitsSpectrumReader.ResolvingPowerKeyword"/>.
    /// </summary>
    /// <param name="fluxUnit">TUNIT of FLUX and ERR (e.g. "erg/s/cm2/Angstrom"), or null for relative flux.</param>
    /// <param name="comments">COMMENT cards for the primary header (ASCII; long lines are split).</param>
    public static void WriteTable(Stream output, Spectrum spectrum, double? resolvingPower, string? fluxUnit, IEnumerable<string>? comments = null)
    {
        var primary = new List<string> { Logical("SIMPLE", true), Int("BITPIX", 8), Int("NAXIS", 0), Logical("EXTEND", true) };
        if (resolvingPower is double r) primary.Add(Real(FitsSpectrumReader.ResolvingPowerKeyword, r, "resolving power lambda/dlambda"));
        foreach (var c in comments ?? [])
            for (int i = 0; i < c.Length; i += 72)
                primary.Add(Card("COMMENT", Ascii(c.Substring(i, Math.Min(72, c.Length - i)))));
        WriteHeader(output, primary);

        bool hasError = spectrum.FluxError is not null;
        int fields = hasError ? 3 : 2;
        var table = new List<string>
        {
            Str("XTENSION", "BINTABLE"), Int("BITPIX", 8), Int("NAXIS", 2), Int("NAXIS1", 8 * fields),
            Int("NAXIS2", spectrum.Count), Int("PCOUNT", 0), Int("GCOUNT", 1), Int("TFIELDS", fields),
            Str("TTYPE1", "WAVE"), Str("TFORM1", "D"), Str("TUNIT1", "Angstrom"), Str("TCTYP1", "WAVE"),
            Str("TTYPE2", "FLUX"), Str("TFORM2", "D"),
        };
        if (fluxUnit is not null) table.Add(Str("TUNIT2", fluxUnit));
        if (hasError)
        {
            table.Add(Str("TTYPE3", "ERR"));
            table.Add(Str("TFORM3", "D"));
            if (fluxUnit is not null) table.Add(Str("TUNIT3", fluxUnit));
        }
        table.Add(Str("EXTNAME", TableName));
        if (resolvingPower is double r2) table.Add(Real(FitsSpectrumReader.ResolvingPowerKeyword, r2, "resolving power lambda/dlambda"));
        WriteHeader(output, table);

        var data = new byte[8 * fields * spectrum.Count];
        for (int i = 0; i < spectrum.Count; i++)
        {
            var row = data.AsSpan(8 * fields * i);
            BinaryPrimitives.WriteDoubleBigEndian(row, spectrum.WavelengthAngstrom[i]);
            BinaryPrimitives.WriteDoubleBigEndian(row[8..], spectrum.Flux[i]);
            if (hasError) BinaryPrimitives.WriteDoubleBigEndian(row[16..], spectrum.FluxError![i]);
        }
        WriteData(output, data);
    }

    /// <summary>
    /// Writes a primary-HDU image of 32-bit floats with a linear or logarithmic wavelength solution
    /// (CRPIX1 = 1; <paramref name="ctype"/> WAVE, AWAV, WAVE-LOG or AWAV-LOG; CUNIT1 Angstrom).
    /// </summary>
    public static void WriteImage(Stream output, ReadOnlySpan<float> flux, double crvalAngstrom, double cdeltAngstrom,
        string ctype = "WAVE", double? resolvingPower = null)
    {
        var cards = new List<string>
        {
            Logical("SIMPLE", true), Int("BITPIX", -32), Int("NAXIS", 1), Int("NAXIS1", flux.Length),
            Str("CTYPE1", ctype), Str("CUNIT1", "Angstrom"), Real("CRVAL1", crvalAngstrom), Real("CDELT1", cdeltAngstrom),
            Real("CRPIX1", 1),
        };
        if (resolvingPower is double r) cards.Add(Real(FitsSpectrumReader.ResolvingPowerKeyword, r, "resolving power lambda/dlambda"));
        WriteHeader(output, cards);
        var data = new byte[4 * flux.Length];
        for (int i = 0; i < flux.Length; i++) BinaryPrimitives.WriteSingleBigEndian(data.AsSpan(4 * i), flux[i]);
        WriteData(output, data);
    }

    private static string Ascii(string s)
    {
        var sb = new StringBuilder(s.Length);
        foreach (char c in s) sb.Append(c is >= ' ' and <= '~' ? c : '?');
        return sb.ToString();
    }

    private static string Card(string keyword, string rest) => (keyword.PadRight(8) + rest).PadRight(FitsHeader.CardChars)[..FitsHeader.CardChars];

    private static string Value(string keyword, string value, string? comment) =>
        Card(keyword, "= " + value.PadLeft(20) + (comment is null ? "" : " / " + comment));

    private static string Logical(string keyword, bool v) => Value(keyword, v ? "T" : "F", null);

    private static string Int(string keyword, long v) => Value(keyword, v.ToString(CultureInfo.InvariantCulture), null);

    private static string Real(string keyword, double v, string? comment = null)
    {
        string s = v.ToString("R", CultureInfo.InvariantCulture).Replace('e', 'E');
        if (!s.Contains('.') && !s.Contains('E')) s += ".0";
        return Value(keyword, s, comment);
    }

    private static string Str(string keyword, string v) =>
        Card(keyword, "= " + ("'" + Ascii(v).Replace("'", "''").PadRight(8) + "'"));

    private static void WriteHeader(Stream output, List<string> cards)
    {
        cards.Add(Card("END", ""));
        int blocks = (cards.Count * FitsHeader.CardChars + FitsHeader.BlockBytes - 1) / FitsHeader.BlockBytes;
        var bytes = new byte[blocks * FitsHeader.BlockBytes];
        bytes.AsSpan().Fill((byte)' ');
        for (int i = 0; i < cards.Count; i++) Encoding.ASCII.GetBytes(cards[i], bytes.AsSpan(i * FitsHeader.CardChars));
        output.Write(bytes);
    }

    private static void WriteData(Stream output, byte[] data)
    {
        output.Write(data);
        int pad = (FitsHeader.BlockBytes - data.Length % FitsHeader.BlockBytes) % FitsHeader.BlockBytes;
        output.Write(new byte[pad]);
    }
}
