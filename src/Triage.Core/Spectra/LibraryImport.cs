using System.Globalization;

namespace Triage.Core.Spectra;

/// <summary>Thrown when a library import fails; carries every problem found.</summary>
public sealed class LibraryImportException(IReadOnlyList<ImportError> errors)
    : Exception($"The library was not imported ({errors.Count} problem(s)):{Environment.NewLine}" +
                string.Join(Environment.NewLine, errors.Take(50)))
{
    /// <summary>Every problem found, in file and line order.</summary>
    public IReadOnlyList<ImportError> Errors { get; } = errors;
}

/// <summary>
/// Reads a labelled library: <c>manifest.csv</c> (header row with the columns <c>file</c>,
/// <c>object_id</c>, <c>subtype</c>, <c>phase_days</c>, <c>redshift</c> (empty when none is given: calibration then
/// estimates it from the spectrum) and optionally
/// <c>source_resolution</c>, <c>hdu</c> and <c>noise_free</c> (true: the flux is a noise-free model and its error column states the native noise), in any order; <c>#</c> comment lines) plus one spectrum
/// per row: plain text, or FITS when the file name ends in .fits, .fit, .fits.gz or .fit.gz
/// (<see cref="Fits.FitsSpectrumReader"/>; <c>hdu</c> names the HDU by 0-based index or EXTNAME).
/// </summary>
/// <remarks>
/// All-or-nothing: every row and every spectrum is checked, all problems are returned,
/// and no library is produced unless there are none. Opening files is left to the caller
/// through <c>openSpectrum</c>, which returns null for a missing file.
/// The source resolution comes from the manifest's <c>source_resolution</c> or, when that is blank, from
/// a FITS header's <see cref="Fits.FitsSpectrumReader.ResolvingPowerKeyword"/>; when both are given the
/// manifest wins and a disagreement of more than 1 % is reported in <see cref="SpectralLibrary.Warnings"/>.
/// </remarks>
public static class LibraryImport
{
    /// <summary>The manifest's file name inside a library folder.</summary>
    public const string ManifestFileName = "manifest.csv";

    private static readonly string[] Required = ["file", "object_id", "subtype", "phase_days", "redshift"];

    /// <summary>Imports a library, throwing <see cref="LibraryImportException"/> with every problem.</summary>
    public static SpectralLibrary Import(TextReader manifest, Func<string, TextReader?> openSpectrum, Taxonomy taxonomy,
        SpectrumReadOptions? options = null) =>
        TryImport(manifest, openSpectrum, taxonomy, options, out var lib, out var errors)
            ? lib! : throw new LibraryImportException(errors);

    /// <summary>Imports a library of plain-text spectra; on failure <paramref name="library"/> is null and <paramref name="errors"/> lists every problem.</summary>
    public static bool TryImport(TextReader manifest, Func<string, TextReader?> openSpectrum, Taxonomy taxonomy,
        SpectrumReadOptions? options, out SpectralLibrary? library, out IReadOnlyList<ImportError> errors)
    {
        options ??= new SpectrumReadOptions();
        var opts = options;
        return TryImportCore(manifest, (row, errs, warnings) =>
        {
            var reader = openSpectrum(row.File);
            if (reader is null) return Missing(row, errs);
            using (reader) return (SpectrumText.Read(reader, row.File, opts, errs), null);
        }, taxonomy, out library, out errors);
    }

    /// <summary>Imports a library from streams (plain text or FITS, chosen by file name), throwing <see cref="LibraryImportException"/> with every problem.</summary>
    public static SpectralLibrary Import(TextReader manifest, Func<string, Stream?> openFile, Taxonomy taxonomy,
        SpectrumReadOptions? options = null) =>
        TryImport(manifest, openFile, taxonomy, options, out var lib, out var errors)
            ? lib! : throw new LibraryImportException(errors);

    /// <summary>
    /// Imports a library whose files are opened as streams by <paramref name="openFile"/> (null for a missing
    /// file): plain text, or FITS when <see cref="IsFits"/>. On failure <paramref name="library"/> is null and
    /// <paramref name="errors"/> lists every problem, FITS ones with their HDU and keyword.
    /// </summary>
    public static bool TryImport(TextReader manifest, Func<string, Stream?> openFile, Taxonomy taxonomy,
        SpectrumReadOptions? options, out SpectralLibrary? library, out IReadOnlyList<ImportError> errors)
    {
        var opts = options ?? new SpectrumReadOptions();
        return TryImportCore(manifest, (row, errs, warnings) =>
        {
            var stream = openFile(row.File);
            if (stream is null) return Missing(row, errs);
            using (stream)
            {
                if (!IsFits(row.File))
                {
                    if (row.Hdu is not null)
                        errs.Add(new ImportError(ManifestFileName, row.Line, $"hdu '{row.Hdu}' is given for '{row.File}', which is not a FITS file"));
                    using var text = new StreamReader(stream, System.Text.Encoding.UTF8, true, 1 << 16);
                    return (SpectrumText.Read(text, row.File, opts, errs), null);
                }
                try
                {
                    using var fits = Fits.FitsFile.Decompressed(stream, row.File);
                    var read = Fits.FitsSpectrumReader.Read(fits, row.Hdu, opts);
                    foreach (var w in read.Warnings) warnings.Add(new ImportError(row.File, null, w) { Hdu = read.Hdu });
                    return (read.Spectrum, read.ResolvingPower);
                }
                catch (Fits.FitsFormatException ex)
                {
                    errs.Add(new ImportError(row.File, null, ex.Message) { Hdu = ex.Hdu, Keyword = ex.Keyword });
                }
                catch (InvalidDataException ex)
                {
                    errs.Add(new ImportError(row.File, null, $"the gzip stream is corrupt: {ex.Message}"));
                }
                catch (EndOfStreamException)
                {
                    errs.Add(new ImportError(row.File, null, "the gzip stream is truncated"));
                }
                return (null, null);
            }
        }, taxonomy, out library, out errors);
    }

    /// <summary>True when <paramref name="file"/> names a FITS file (.fits, .fit, .fits.gz, .fit.gz; any case).</summary>
    public static bool IsFits(string file) =>
        file.EndsWith(".fits", StringComparison.OrdinalIgnoreCase) || file.EndsWith(".fit", StringComparison.OrdinalIgnoreCase)
        || file.EndsWith(".fits.gz", StringComparison.OrdinalIgnoreCase) || file.EndsWith(".fit.gz", StringComparison.OrdinalIgnoreCase);

    private static (Spectrum?, double?) Missing(Row row, List<ImportError> errs)
    {
        errs.Add(new ImportError(ManifestFileName, row.Line, $"spectrum file '{row.File}' does not exist"));
        return (null, null);
    }

    private delegate (Spectrum? Spectrum, double? HeaderResolution) ReadRow(Row row, List<ImportError> errors, List<ImportError> warnings);

    private static bool TryImportCore(TextReader manifest, ReadRow read, Taxonomy taxonomy,
        out SpectralLibrary? library, out IReadOnlyList<ImportError> errors)
    {
        var errs = new List<ImportError>();
        var warnings = new List<ImportError>();
        var rows = ReadManifest(manifest, taxonomy, errs, out bool synthetic);
        var spectra = new List<LibrarySpectrum>();
        foreach (var row in rows)
        {
            (Spectrum? s, double? headerR) result;
            try { result = read(row, errs, warnings); }
            catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
            {
                errs.Add(new ImportError(ManifestFileName, row.Line, $"spectrum file '{row.File}' cannot be read: {ex.Message}"));
                continue;
            }
            if (result.s is null) continue;
            double? sourceR = row.SourceR ?? result.headerR;
            if (row.SourceR is double m && result.headerR is double h && Math.Abs(m - h) > 0.01 * m)
                warnings.Add(new ImportError(ManifestFileName, row.Line, string.Create(CultureInfo.InvariantCulture,
                    $"source_resolution {m} differs from the header's {Fits.FitsSpectrumReader.ResolvingPowerKeyword} = {h} in '{row.File}'; the manifest's value is used"))
                    { Keyword = Fits.FitsSpectrumReader.ResolvingPowerKeyword });
            spectra.Add(new LibrarySpectrum(row.File, row.ObjectId, row.Subtype, row.Phase, row.Redshift, sourceR, result.s)
                { NoiseFree = row.NoiseFree });
        }
        if (errs.Count == 0 && spectra.Count == 0)
            errs.Add(new ImportError(ManifestFileName, null, "the manifest lists no spectra"));
        errors = errs;
        library = errs.Count == 0 ? new SpectralLibrary(spectra, synthetic) { Warnings = warnings } : null;
        return library is not null;
    }

    private sealed record Row(int Line, string File, string ObjectId, string Subtype, double Phase, double? Redshift, double? SourceR, string? Hdu, bool NoiseFree);

    private static List<Row> ReadManifest(TextReader reader, Taxonomy taxonomy, List<ImportError> errs, out bool synthetic)
    {
        var rows = new List<Row>();
        synthetic = false;
        Dictionary<string, int>? col = null;
        var files = new Dictionary<string, int>(StringComparer.OrdinalIgnoreCase);
        var epochs = new Dictionary<(string, double), int>();
        int lineNo = 0;
        string? line;
        while ((line = reader.ReadLine()) is not null)
        {
            lineNo++;
            string trimmed = line.Trim();
            if (trimmed.StartsWith('#'))
            {
                if (trimmed.Contains("synthetic", StringComparison.OrdinalIgnoreCase)) synthetic = true;
                continue;
            }
            if (trimmed.Length == 0) continue;
            var f = SplitCsv(trimmed);
            if (col is null)
            {
                col = new Dictionary<string, int>(StringComparer.OrdinalIgnoreCase);
                for (int i = 0; i < f.Count; i++)
                {
                    string name = f[i].Trim();
                    if (!col.TryAdd(name, i)) errs.Add(new ImportError(ManifestFileName, lineNo, $"column '{name}' appears twice in the header"));
                }
                foreach (var r in Required.Where(r => !col.ContainsKey(r)))
                    errs.Add(new ImportError(ManifestFileName, lineNo, $"header lacks the required column '{r}'"));
                if (Required.Any(r => !col.ContainsKey(r))) return rows;
                continue;
            }
            if (f.Count != col.Count)
            {
                errs.Add(new ImportError(ManifestFileName, lineNo,
                    string.Create(CultureInfo.InvariantCulture, $"{f.Count} fields where the header has {col.Count}")));
                continue;
            }
            int before = errs.Count;
            string Get(string c) => f[col[c]].Trim();
            string file = Get("file").Replace('\\', '/');
            if (file.Length == 0) errs.Add(new ImportError(ManifestFileName, lineNo, "file is empty"));
            else if (file.StartsWith('/') || file.Split('/').Contains("..") || file.Contains(':'))
                errs.Add(new ImportError(ManifestFileName, lineNo, $"file '{file}' must be a relative path inside the library folder"));
            else if (files.TryGetValue(file, out int firstLine))
                errs.Add(new ImportError(ManifestFileName, lineNo,
                    string.Create(CultureInfo.InvariantCulture, $"duplicate: file '{file}' is already listed on line {firstLine}")));
            string objectId = Get("object_id");
            if (objectId.Length == 0) errs.Add(new ImportError(ManifestFileName, lineNo, "object_id is empty"));
            string subtype = Get("subtype");
            if (!taxonomy.Contains(subtype))
                errs.Add(new ImportError(ManifestFileName, lineNo, $"unknown subtype label '{subtype}' (not in the taxonomy)"));
            double phase = Number(Get("phase_days"), "phase_days", lineNo, errs, -1000, 5000);
            // An empty redshift means none is given (calibration estimates it from the spectrum).
            double? z = Get("redshift").Length == 0 ? null : Number(Get("redshift"), "redshift", lineNo, errs, 0, 10);
            double? sourceR = null;
            if (col.ContainsKey("source_resolution") && Get("source_resolution").Length > 0)
            {
                double r = Number(Get("source_resolution"), "source_resolution", lineNo, errs, double.Epsilon, 1e7);
                if (!double.IsNaN(r)) sourceR = r;
            }
            bool noiseFree = false;
            if (col.ContainsKey("noise_free") && Get("noise_free").Length > 0)
            {
                string v = Get("noise_free").ToLowerInvariant();
                if (v is "true" or "1" or "yes") noiseFree = true;
                else if (v is not ("false" or "0" or "no"))
                    errs.Add(new ImportError(ManifestFileName, lineNo, $"noise_free '{Get("noise_free")}' must be true or false"));
            }
            string? hdu = col.ContainsKey("hdu") && Get("hdu").Length > 0 ? Get("hdu") : null;
            if (errs.Count > before) continue;
            if (epochs.TryGetValue((objectId, phase), out int dupLine))
            {
                errs.Add(new ImportError(ManifestFileName, lineNo,
                    string.Create(CultureInfo.InvariantCulture, $"duplicate: object '{objectId}' at phase {phase} is already listed on line {dupLine}")));
                continue;
            }
            files[file] = lineNo;
            epochs[(objectId, phase)] = lineNo;
            rows.Add(new Row(lineNo, file, objectId, subtype, phase, z, sourceR, hdu, noiseFree));
        }
        if (col is null) errs.Add(new ImportError(ManifestFileName, null, "the manifest is empty (no header row)"));
        return rows;
    }

    private static double Number(string text, string column, int line, List<ImportError> errs, double min, double max)
    {
        if (!double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out double v) || !double.IsFinite(v))
        {
            errs.Add(new ImportError(ManifestFileName, line, $"{column} '{text}' is not a finite number"));
            return double.NaN;
        }
        if (v < min || v > max)
        {
            errs.Add(new ImportError(ManifestFileName, line,
                string.Create(CultureInfo.InvariantCulture, $"{column} {v} is outside [{(min == double.Epsilon ? 0 : min)}, {max}]")));
            return double.NaN;
        }
        return v;
    }

    /// <summary>Splits one CSV record (RFC 4180 quoting with doubled quotes).</summary>
    internal static List<string> SplitCsv(string line)
    {
        var fields = new List<string>();
        var sb = new System.Text.StringBuilder();
        bool quoted = false;
        for (int i = 0; i < line.Length; i++)
        {
            char c = line[i];
            if (quoted)
            {
                if (c == '"' && i + 1 < line.Length && line[i + 1] == '"') { sb.Append('"'); i++; }
                else if (c == '"') quoted = false;
                else sb.Append(c);
            }
            else if (c == '"') quoted = true;
            else if (c == ',') { fields.Add(sb.ToString()); sb.Clear(); }
            else sb.Append(c);
        }
        fields.Add(sb.ToString());
        return fields;
    }

    /// <summary>Writes a manifest for <paramref name="library"/> with leading comment lines.</summary>
    /// <param name="exact">False (default): phases to 0.01 d, redshifts to 5 decimals. True: round-trip values, quoted CSV fields where needed.</param>
    public static void WriteManifest(TextWriter writer, SpectralLibrary library, IEnumerable<string> comments, bool exact = false)
    {
        foreach (var c in comments) writer.Write("# " + c + "\n");
        bool noiseColumn = library.Spectra.Any(s => s.NoiseFree);
        writer.Write("file,object_id,subtype,phase_days,redshift,source_resolution" + (noiseColumn ? ",noise_free\n" : "\n"));
        foreach (var s in library.Spectra)
            writer.Write((exact
                ? string.Create(CultureInfo.InvariantCulture,
                    $"{Csv(s.File)},{Csv(s.ObjectId)},{Csv(s.Subtype)},{s.PhaseDays:R},{s.Redshift?.ToString("R", CultureInfo.InvariantCulture)},{s.SourceResolution:R}")
                : string.Create(CultureInfo.InvariantCulture,
                    $"{s.File},{s.ObjectId},{s.Subtype},{s.PhaseDays:0.##},{s.Redshift?.ToString("0.#####", CultureInfo.InvariantCulture)},{s.SourceResolution}"))
                + (noiseColumn ? (s.NoiseFree ? ",true\n" : ",false\n") : "\n"));
    }

    private static string Csv(string field) =>
        field.IndexOfAny([',', '"', '\n', '\r']) >= 0 || field != field.Trim() ? "\"" + field.Replace("\"", "\"\"") + "\"" : field;
}
