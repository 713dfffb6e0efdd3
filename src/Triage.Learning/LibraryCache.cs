using System.Runtime.InteropServices;
using System.Security.Cryptography;
using System.Text;
using Triage.Core.Spectra;

namespace Triage.Learning;

/// <summary>
/// A binary cache of parsed libraries keyed by the content of the library folder: SHA-256 over the manifest's
/// bytes and, in manifest order, every spectrum file's path and bytes (plus the taxonomy's labels and the
/// read options, which decide what an import accepts). Any change to any of them gives another key, so a stale
/// entry is never read; entries are written atomically (temporary file, then rename). Import warnings are stored with the entry, so a
/// hit reports them as the parse did.
/// </summary>
public static class LibraryCache
{
    private const uint Magic = 0x42494C54; // "TLIB"
    private const int Version = 2;

    /// <summary>The default cache folder: $XDG_CACHE_HOME/triage/libraries, else ~/.cache/triage/libraries.</summary>
    public static string DefaultFolder =>
        Path.Combine(Environment.GetEnvironmentVariable("XDG_CACHE_HOME") is { Length: > 0 } x ? x
            : Path.Combine(Environment.GetFolderPath(Environment.SpecialFolder.UserProfile), ".cache"), "triage", "libraries");

    /// <summary>
    /// Loads <paramref name="folder"/> through the cache in <paramref name="cacheFolder"/>: a hit reads the binary
    /// entry, a miss parses the text files (all-or-nothing, as <see cref="LibraryFiles.Load"/>) and writes the entry.
    /// </summary>
    /// <returns>The library, and whether it came from the cache.</returns>
    /// <exception cref="LibraryImportException">As <see cref="LibraryFiles.Load"/>.</exception>
    public static (SpectralLibrary Library, bool FromCache) Load(string folder, Taxonomy taxonomy, string cacheFolder, SpectrumReadOptions? options = null)
    {
        options ??= new SpectrumReadOptions();
        string? key = ContentKey(folder, taxonomy, options);
        string? path = key is null ? null : Path.Combine(cacheFolder, key + ".tlib");
        if (path is not null && File.Exists(path))
        {
            try { return (Read(path), true); }
            catch (Exception e) when (e is IOException or InvalidDataException or EndOfStreamException) { /* rebuilt below */ }
        }
        var library = LibraryFiles.Load(folder, taxonomy, options);
        if (path is not null)
        {
            try
            {
                Directory.CreateDirectory(cacheFolder);
                string tmp = path + "." + Environment.ProcessId + ".tmp";
                Write(tmp, library);
                File.Move(tmp, path, overwrite: true);
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException) { /* a cache that cannot be written is only slower */ }
        }
        return (library, false);
    }

    /// <summary>
    /// The content key of a library folder (64 hex digits), or null when the manifest is missing (the import then
    /// reports it).
    /// </summary>
    public static string? ContentKey(string folder, Taxonomy taxonomy, SpectrumReadOptions options)
    {
        string manifest = Path.Combine(folder, LibraryImport.ManifestFileName);
        if (!File.Exists(manifest)) return null;
        byte[] manifestBytes = File.ReadAllBytes(manifest);
        var files = new List<string>();
        using (var reader = new StringReader(Encoding.UTF8.GetString(manifestBytes)))
        {
            string? line;
            int fileColumn = -1;
            while ((line = reader.ReadLine()) is not null)
            {
                if (line.TrimStart().StartsWith('#') || line.Trim().Length == 0) continue;
                var f = line.Split(',');
                if (fileColumn < 0) { fileColumn = Array.FindIndex(f, c => c.Trim().Equals("file", StringComparison.OrdinalIgnoreCase)); continue; }
                if (fileColumn < f.Length) files.Add(f[fileColumn].Trim().Trim('"').Replace('\\', '/'));
            }
        }
        // Each file hashed on its own (in parallel), then the digests in manifest order.
        var digests = new byte[files.Count][];
        string root = Path.GetFullPath(folder);
        Parallel.For(0, files.Count, i =>
        {
            string p = Path.GetFullPath(Path.Combine(root, files[i]));
            digests[i] = File.Exists(p) ? SHA256.HashData(File.ReadAllBytes(p)) : new byte[32];
        });
        using var sha = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);
        sha.AppendData(BitConverter.GetBytes(Version));
        sha.AppendData(Encoding.UTF8.GetBytes(string.Join("\n", taxonomy.Subtypes) + "\n" + options.MinSamples + "\n" + options.MinCoverageAngstrom.ToString("R", System.Globalization.CultureInfo.InvariantCulture)));
        sha.AppendData(SHA256.HashData(manifestBytes));
        for (int i = 0; i < files.Count; i++)
        {
            sha.AppendData(Encoding.UTF8.GetBytes(files[i]));
            sha.AppendData(digests[i]);
        }
        return Convert.ToHexString(sha.GetHashAndReset()).ToLowerInvariant();
    }

    private static void Write(string path, SpectralLibrary library)
    {
        using var stream = new FileStream(path, FileMode.Create, FileAccess.Write, FileShare.None, 1 << 20);
        using var w = new BinaryWriter(stream, Encoding.UTF8);
        w.Write(Magic);
        w.Write(Version);
        w.Write(library.Synthetic);
        w.Write(library.Warnings.Count);
        foreach (var e in library.Warnings)
        {
            w.Write(e.File); w.Write(e.Line ?? -1); w.Write(e.Message);
            w.Write(e.Hdu ?? ""); w.Write(e.Keyword ?? "");
        }
        w.Write(library.Spectra.Count);
        foreach (var s in library.Spectra)
        {
            w.Write(s.File); w.Write(s.ObjectId); w.Write(s.Subtype);
            w.Write(s.PhaseDays); w.Write(s.Redshift ?? double.NaN); w.Write(s.SourceResolution ?? double.NaN); w.Write(s.NoiseFree);
            w.Write(s.Spectrum.Count);
            w.Write(s.Spectrum.FluxError is not null);
            w.Write(MemoryMarshal.AsBytes(s.Spectrum.WavelengthAngstrom.AsSpan()));
            w.Write(MemoryMarshal.AsBytes(s.Spectrum.Flux.AsSpan()));
            if (s.Spectrum.FluxError is { } e) w.Write(MemoryMarshal.AsBytes(e.AsSpan()));
        }
    }

    private static SpectralLibrary Read(string path)
    {
        using var stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.Read, 1 << 20);
        using var r = new BinaryReader(stream, Encoding.UTF8);
        if (r.ReadUInt32() != Magic || r.ReadInt32() != Version) throw new InvalidDataException("Not a library cache entry of this version.");
        bool synthetic = r.ReadBoolean();
        var warnings = new ImportError[r.ReadInt32()];
        for (int i = 0; i < warnings.Length; i++)
        {
            string file = r.ReadString();
            int line = r.ReadInt32();
            string message = r.ReadString(), hdu = r.ReadString(), keyword = r.ReadString();
            warnings[i] = new ImportError(file, line < 0 ? null : line, message)
                { Hdu = hdu.Length == 0 ? null : hdu, Keyword = keyword.Length == 0 ? null : keyword };
        }
        int count = r.ReadInt32();
        var spectra = new LibrarySpectrum[count];
        for (int i = 0; i < count; i++)
        {
            string file = r.ReadString(), obj = r.ReadString(), subtype = r.ReadString();
            double phase = r.ReadDouble(), z = r.ReadDouble(), sourceR = r.ReadDouble();
            bool noiseFree = r.ReadBoolean();
            int n = r.ReadInt32();
            bool hasError = r.ReadBoolean();
            var wl = ReadDoubles(r, n);
            var flux = ReadDoubles(r, n);
            var err = hasError ? ReadDoubles(r, n) : null;
            spectra[i] = new LibrarySpectrum(file, obj, subtype, phase, double.IsNaN(z) ? null : z, double.IsNaN(sourceR) ? null : sourceR, new Spectrum(wl, flux, err))
                { NoiseFree = noiseFree };
        }
        return new SpectralLibrary(spectra, synthetic) { Warnings = warnings };
    }

    private static double[] ReadDoubles(BinaryReader r, int n)
    {
        var values = new double[n];
        var bytes = MemoryMarshal.AsBytes(values.AsSpan());
        r.BaseStream.ReadExactly(bytes);
        return values;
    }
}
