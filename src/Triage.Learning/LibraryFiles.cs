using System.Text;
using Triage.Core.Spectra;
using Triage.Core.Spectra.Fits;

namespace Triage.Learning;

/// <summary>File-system adapter for spectral libraries: a folder with manifest.csv and text or FITS spectra.</summary>
public static class LibraryFiles
{
    /// <summary>Reads and validates the library in <paramref name="folder"/> (all-or-nothing).</summary>
    /// <exception cref="LibraryImportException">Any problem; the exception lists them all with file and line.</exception>
    public static SpectralLibrary Load(string folder, Taxonomy taxonomy, SpectrumReadOptions? options = null)
    {
        string manifest = Path.Combine(folder, LibraryImport.ManifestFileName);
        if (!File.Exists(manifest))
            throw new LibraryImportException([new ImportError(LibraryImport.ManifestFileName, null, $"no {LibraryImport.ManifestFileName} in '{folder}'")]);
        string root = Path.GetFullPath(folder);
        using var reader = new StreamReader(manifest, Encoding.UTF8);
        return LibraryImport.Import(reader, file =>
        {
            string path = Path.GetFullPath(Path.Combine(root, file));
            return File.Exists(path) ? new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.Read, 1 << 16) : null;
        }, taxonomy, options);
    }

    /// <summary>Writes <paramref name="library"/> into <paramref name="folder"/> (created if needed).</summary>
    public static void Write(string folder, SpectralLibrary library, IReadOnlyList<string> comments)
    {
        Directory.CreateDirectory(folder);
        using (var w = new StreamWriter(Path.Combine(folder, LibraryImport.ManifestFileName), false, new UTF8Encoding(false)))
            LibraryImport.WriteManifest(w, library, comments);
        Parallel.ForEach(library.Spectra, s =>
        {
            string path = Path.Combine(folder, s.File);
            Directory.CreateDirectory(Path.GetDirectoryName(path)!);
            using var w = new StreamWriter(path, false, new UTF8Encoding(false), 1 << 16);
            SpectrumText.Write(w, s.Spectrum, [.. comments, $"object {s.ObjectId}, subtype {s.Subtype}, phase {s.PhaseDays} d, {RedshiftText(s.Redshift)}"]);
        });
    }

    /// <summary>
    /// Writes <paramref name="library"/> into <paramref name="folder"/> as FITS binary tables or as plain text:
    /// vacuum wavelengths (Å), flux and error exactly as read (every double round-trips), a manifest with the
    /// same columns and rows in the same order, each file renamed to the format's extension (.fits or .txt).
    /// </summary>
    /// <returns>The library as written (file names of the export).</returns>
    /// <exception cref="ArgumentException">Two files would get the same exported name.</exception>
    public static SpectralLibrary Export(SpectralLibrary library, string folder, LibraryFormat format, IReadOnlyList<string> comments)
    {
        var renamed = library.Spectra.Select(s => s with { File = ExportName(s.File, format) }).ToList();
        var clash = renamed.GroupBy(s => s.File, StringComparer.OrdinalIgnoreCase).FirstOrDefault(g => g.Count() > 1);
        if (clash is not null)
            throw new ArgumentException($"two spectra would both be exported as '{clash.Key}'; rename one of them in the library");
        var exported = library with { Spectra = renamed };
        Directory.CreateDirectory(folder);
        using (var w = new StreamWriter(Path.Combine(folder, LibraryImport.ManifestFileName), false, new UTF8Encoding(false)))
            LibraryImport.WriteManifest(w, exported, comments, exact: true);
        Parallel.ForEach(renamed, s =>
        {
            string path = Path.Combine(folder, s.File);
            Directory.CreateDirectory(Path.GetDirectoryName(path)!);
            string label = $"object {s.ObjectId}, subtype {s.Subtype}, phase {s.PhaseDays} d, {RedshiftText(s.Redshift)}";
            if (format == LibraryFormat.Fits)
            {
                using var f = new FileStream(path, FileMode.Create, FileAccess.Write, FileShare.None, 1 << 16);
                FitsSpectrumWriter.WriteTable(f, s.Spectrum, s.SourceResolution, null, [.. comments, label]);
            }
            else
            {
                using var w = new StreamWriter(path, false, new UTF8Encoding(false), 1 << 16);
                SpectrumText.Write(w, s.Spectrum, [.. comments, label, "vacuum wavelength (Angstrom), flux, flux error"], exact: true);
            }
        });
        return exported;
    }

    /// <summary>The exported name of <paramref name="file"/>: its extension (with any .gz) replaced by .fits or .txt.</summary>
    public static string ExportName(string file, LibraryFormat format)
    {
        string stem = file.EndsWith(".gz", StringComparison.OrdinalIgnoreCase) ? file[..^3] : file;
        string ext = Path.GetExtension(stem);
        if (ext.Length > 0) stem = stem[..^ext.Length];
        return stem + (format == LibraryFormat.Fits ? ".fits" : ".txt");
    }

    /// <summary>Loads a taxonomy file, or the default when <paramref name="path"/> is null.</summary>
    public static Taxonomy LoadTaxonomy(string? path) => path is null ? Taxonomy.Default : Taxonomy.Parse(File.ReadAllText(path));

    private static string RedshiftText(double? z) =>
        z is double v ? string.Create(System.Globalization.CultureInfo.InvariantCulture, $"z = {v}") : "redshift not given";
}

/// <summary>File format of an exported library.</summary>
public enum LibraryFormat
{
    /// <summary>Plain text: "wavelength flux [error]" per line.</summary>
    Text,

    /// <summary>FITS: an empty primary HDU and a binary table of WAVE, FLUX and ERR (64-bit floats).</summary>
    Fits,
}
