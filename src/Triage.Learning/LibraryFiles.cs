using System.Text;
using Triage.Core.Spectra;

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
            SpectrumText.Write(w, s.Spectrum, [.. comments, $"object {s.ObjectId}, subtype {s.Subtype}, phase {s.PhaseDays} d, z = {s.Redshift}"]);
        });
    }

    /// <summary>Loads a taxonomy file, or the default when <paramref name="path"/> is null.</summary>
    public static Taxonomy LoadTaxonomy(string? path) => path is null ? Taxonomy.Default : Taxonomy.Parse(File.ReadAllText(path));
}
