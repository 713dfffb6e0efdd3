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
/// <c>object_id</c>, <c>subtype</c>, <c>phase_days</c>, <c>redshift</c> and optionally
/// <c>source_resolution</c> and <c>noise_free</c> (true: the flux is a noise-free model and its error column states the native noise), in any order; <c>#</c> comment lines) plus one plain-text spectrum per row.
/// </summary>
/// <remarks>
/// All-or-nothing: every row and every spectrum is checked, all problems are returned,
/// and no library is produced unless there are none. Opening files is left to the caller
/// through <c>openSpectrum</c>, which returns null for a missing file.
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

    /// <summary>Imports a library; on failure <paramref name="library"/> is null and <paramref name="errors"/> lists every problem.</summary>
    public static bool TryImport(TextReader manifest, Func<string, TextReader?> openSpectrum, Taxonomy taxonomy,
        SpectrumReadOptions? options, out SpectralLibrary? library, out IReadOnlyList<ImportError> errors)
    {
        options ??= new SpectrumReadOptions();
        var errs = new List<ImportError>();
        var rows = ReadManifest(manifest, taxonomy, errs, out bool synthetic);
        var spectra = new List<LibrarySpectrum>();
        foreach (var row in rows)
        {
            TextReader? reader;
            try { reader = openSpectrum(row.File); }
            catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
            {
                errs.Add(new ImportError(ManifestFileName, row.Line, $"spectrum file '{row.File}' cannot be read: {ex.Message}"));
                continue;
            }
            if (reader is null)
            {
                errs.Add(new ImportError(ManifestFileName, row.Line, $"spectrum file '{row.File}' does not exist"));
                continue;
            }
            using (reader)
            {
                var s = SpectrumText.Read(reader, row.File, options, errs);
                if (s is not null)
                    spectra.Add(new LibrarySpectrum(row.File, row.ObjectId, row.Subtype, row.Phase, row.Redshift, row.SourceR, s)
                        { NoiseFree = row.NoiseFree });
            }
        }
        if (errs.Count == 0 && spectra.Count == 0)
            errs.Add(new ImportError(ManifestFileName, null, "the manifest lists no spectra"));
        errors = errs;
        library = errs.Count == 0 ? new SpectralLibrary(spectra, synthetic) : null;
        return library is not null;
    }

    private sealed record Row(int Line, string File, string ObjectId, string Subtype, double Phase, double Redshift, double? SourceR, bool NoiseFree);

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
            double z = Number(Get("redshift"), "redshift", lineNo, errs, 0, 10);
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
            if (errs.Count > before) continue;
            if (epochs.TryGetValue((objectId, phase), out int dupLine))
            {
                errs.Add(new ImportError(ManifestFileName, lineNo,
                    string.Create(CultureInfo.InvariantCulture, $"duplicate: object '{objectId}' at phase {phase} is already listed on line {dupLine}")));
                continue;
            }
            files[file] = lineNo;
            epochs[(objectId, phase)] = lineNo;
            rows.Add(new Row(lineNo, file, objectId, subtype, phase, z, sourceR, noiseFree));
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
    public static void WriteManifest(TextWriter writer, SpectralLibrary library, IEnumerable<string> comments)
    {
        foreach (var c in comments) writer.Write("# " + c + "\n");
        bool noiseColumn = library.Spectra.Any(s => s.NoiseFree);
        writer.Write("file,object_id,subtype,phase_days,redshift,source_resolution" + (noiseColumn ? ",noise_free\n" : "\n"));
        foreach (var s in library.Spectra)
            writer.Write(string.Create(CultureInfo.InvariantCulture,
                $"{s.File},{s.ObjectId},{s.Subtype},{s.PhaseDays:0.##},{s.Redshift:0.#####},{s.SourceResolution}{(noiseColumn ? (s.NoiseFree ? ",true" : ",false") : "")}\n"));
    }
}
