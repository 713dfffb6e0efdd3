using System.Globalization;
using System.Text;

namespace Triage.Core.Spectra;

/// <summary>A problem found while reading library files: the file, the 1-based line when known, and what is wrong.</summary>
public sealed record ImportError(string File, int? Line, string Message)
{
    /// <summary>For a FITS file: the HDU at fault ("primary", "HDU 1 'SPECTRUM'"), when known.</summary>
    public string? Hdu { get; init; }

    /// <summary>For a FITS file: the keyword or column at fault, when there is one.</summary>
    public string? Keyword { get; init; }

    /// <inheritdoc />
    public override string ToString() =>
        Line is int l ? string.Create(CultureInfo.InvariantCulture, $"{File}:{l}: {Message}") : $"{File}: {Message}";
}

/// <summary>Limits a spectrum must meet to be accepted.</summary>
public sealed record SpectrumReadOptions
{
    /// <summary>Minimum number of finite samples. Default 20.</summary>
    public int MinSamples { get; init; } = 20;

    /// <summary>Minimum wavelength span (Å) of the finite samples. Default 2000 Å, about a third of the optical window.</summary>
    public double MinCoverageAngstrom { get; init; } = 2000;
}

/// <summary>
/// The plain-text spectrum format: one sample per line, "wavelength_Å flux [flux_error]"
/// separated by white space or commas; <c>#</c> starts a comment; rows in any order;
/// rows with a NaN flux or wavelength are skipped (gaps are tolerated).
/// </summary>
public static class SpectrumText
{
    /// <summary>Reads a spectrum, collecting every problem as an <see cref="ImportError"/> naming <paramref name="fileName"/> and the line.</summary>
    /// <returns>The spectrum sorted by wavelength, or null when <paramref name="errors"/> received anything.</returns>
    public static Spectrum? Read(TextReader reader, string fileName, SpectrumReadOptions options, List<ImportError> errors)
    {
        int before = errors.Count;
        var rows = new List<(double W, double F, double E, int Line)>();
        int columns = 0, columnsLine = 0, lineNo = 0;
        string? line;
        while ((line = reader.ReadLine()) is not null)
        {
            lineNo++;
            int hash = line.IndexOf('#');
            if (hash >= 0) line = line[..hash];
            var parts = line.Split([' ', '\t', ','], StringSplitOptions.RemoveEmptyEntries);
            if (parts.Length == 0) continue;
            if (parts.Length is < 2 or > 3)
            {
                errors.Add(new ImportError(fileName, lineNo, $"expected 2 or 3 columns (wavelength, flux, optional error), found {parts.Length}"));
                continue;
            }
            if (columns == 0) { columns = parts.Length; columnsLine = lineNo; }
            else if (parts.Length != columns)
            {
                errors.Add(new ImportError(fileName, lineNo,
                    string.Create(CultureInfo.InvariantCulture, $"{parts.Length} columns where line {columnsLine} has {columns}")));
                continue;
            }
            var values = new double[parts.Length];
            bool ok = true;
            for (int i = 0; i < parts.Length; i++)
            {
                if (!double.TryParse(parts[i], NumberStyles.Float, CultureInfo.InvariantCulture, out values[i]))
                {
                    string[] names = ["wavelength", "flux", "flux error"];
                    errors.Add(new ImportError(fileName, lineNo, $"{names[i]} '{parts[i]}' is not a number"));
                    ok = false;
                    break;
                }
            }
            if (!ok) continue;
            double w = values[0], f = values[1], e = parts.Length == 3 ? values[2] : double.NaN;
            if (double.IsNaN(w) || double.IsNaN(f)) continue;
            if (double.IsInfinity(w) || w <= 0)
            {
                errors.Add(new ImportError(fileName, lineNo, $"wavelength {parts[0]} must be positive and finite"));
                continue;
            }
            if (double.IsInfinity(f))
            {
                errors.Add(new ImportError(fileName, lineNo, "flux is infinite"));
                continue;
            }
            if (parts.Length == 3 && !double.IsNaN(e) && (e < 0 || double.IsInfinity(e)))
            {
                errors.Add(new ImportError(fileName, lineNo, $"flux error {parts[2]} must be non-negative and finite"));
                continue;
            }
            rows.Add((w, f, e, lineNo));
        }
        if (errors.Count > before) return null;

        rows.Sort((a, b) => a.W.CompareTo(b.W));
        for (int i = 1; i < rows.Count; i++)
        {
            if (rows[i].W == rows[i - 1].W)
                errors.Add(new ImportError(fileName, rows[i].Line,
                    string.Create(CultureInfo.InvariantCulture,
                        $"wavelength {rows[i].W} Å repeats line {rows[i - 1].Line}: wavelengths must be strictly increasing after sorting")));
        }
        var sorted = rows.Select(r => r.W).ToArray();
        if (CoverageProblem(sorted, options) is { } problem) errors.Add(new ImportError(fileName, null, problem));
        if (errors.Count > before) return null;

        return new Spectrum(
            sorted,
            rows.Select(r => r.F).ToArray(),
            columns == 3 ? rows.Select(r => r.E).ToArray() : null);
    }

    /// <summary>
    /// The coverage rule shared by every format: at least <see cref="SpectrumReadOptions.MinSamples"/> usable
    /// samples spanning <see cref="SpectrumReadOptions.MinCoverageAngstrom"/>; null when met, else the reason.
    /// </summary>
    /// <param name="sortedWavelengths">Usable wavelengths (Å) in increasing order.</param>
    internal static string? CoverageProblem(double[] sortedWavelengths, SpectrumReadOptions options)
    {
        var w = sortedWavelengths;
        if (w.Length < Math.Max(options.MinSamples, 1))
            return string.Create(CultureInfo.InvariantCulture, $"too little coverage: {w.Length} usable samples, at least {options.MinSamples} needed");
        if (w[^1] - w[0] < options.MinCoverageAngstrom)
            return string.Create(CultureInfo.InvariantCulture,
                $"too little coverage: {w[0]:0.#}–{w[^1]:0.#} Å spans {w[^1] - w[0]:0.#} Å, at least {options.MinCoverageAngstrom:0.#} Å needed");
        return null;
    }

    /// <summary>Parses a spectrum from a string; throws <see cref="FormatException"/> listing every problem.</summary>
    public static Spectrum Parse(string text, string fileName = "spectrum", SpectrumReadOptions? options = null)
    {
        var errors = new List<ImportError>();
        var s = Read(new StringReader(text), fileName, options ?? new SpectrumReadOptions(), errors);
        return s ?? throw new FormatException(string.Join(Environment.NewLine, errors));
    }

    /// <summary>Writes the plain-text format with optional leading comment lines.</summary>
    /// <param name="exact">
    /// False (default): wavelengths to 0.001 Å, flux to 6 and errors to 4 significant digits (compact).
    /// True: every value in its shortest round-trip form, so that reading the file back gives the same doubles.
    /// </param>
    public static void Write(TextWriter writer, Spectrum spectrum, IEnumerable<string>? comments = null, bool exact = false)
    {
        foreach (var c in comments ?? []) writer.Write("# " + c + "\n");
        var sb = new StringBuilder(32);
        string wf = exact ? "R" : "0.###", ff = exact ? "R" : "G6", ef = exact ? "R" : "G4";
        for (int i = 0; i < spectrum.Count; i++)
        {
            sb.Clear();
            sb.Append(spectrum.WavelengthAngstrom[i].ToString(wf, CultureInfo.InvariantCulture)).Append(' ')
              .Append(spectrum.Flux[i].ToString(ff, CultureInfo.InvariantCulture));
            if (spectrum.FluxError is { } err)
                sb.Append(' ').Append(err[i].ToString(ef, CultureInfo.InvariantCulture));
            sb.Append('\n');
            writer.Write(sb);
        }
    }
}
