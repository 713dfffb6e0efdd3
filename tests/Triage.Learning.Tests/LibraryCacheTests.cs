using Triage.Core.Spectra;
using Triage.Core.Spectra.Synthetic;

namespace Triage.Learning.Tests;

public sealed class LibraryCacheTests : IDisposable
{
    private readonly string _root = Path.Combine(Path.GetTempPath(), "triage-cache-test-" + Guid.NewGuid().ToString("N"));

    public void Dispose()
    {
        if (Directory.Exists(_root)) Directory.Delete(_root, true);
    }

    private (string Lib, string Cache, SpectralLibrary Generated) WriteSmallLibrary()
    {
        string lib = Path.Combine(_root, "lib"), cache = Path.Combine(_root, "cache");
        var generated = SyntheticLibrary.Generate(new SynthOptions { Objects = 14, MinObjectsPerSubtype = 1, MeanSpectraPerObject = 2, Seed = 2, NativeResolution = 600 }).Library;
        LibraryFiles.Write(lib, generated, [SyntheticLibrary.Label]);
        return (lib, cache, generated);
    }

    [Fact]
    public void Load_SecondTime_ComesFromCacheAndEqualsTheParsedLibrary()
    {
        var (lib, cache, generated) = WriteSmallLibrary();
        var (first, hit1) = LibraryCache.Load(lib, Taxonomy.Default, cache);
        var (second, hit2) = LibraryCache.Load(lib, Taxonomy.Default, cache);
        Assert.False(hit1);
        Assert.True(hit2);
        Assert.Equal(first.Fingerprint(), second.Fingerprint());
        Assert.Equal(LibraryFiles.Load(lib, Taxonomy.Default).Fingerprint(), second.Fingerprint());
        Assert.True(second.Synthetic);
        Assert.All(second.Spectra, s => Assert.True(s.NoiseFree && s.Spectrum.FluxError is not null));
    }

    [Fact]
    public void Load_AfterAFileChanges_ParsesAgainAndSeesTheChange()
    {
        var (lib, cache, generated) = WriteSmallLibrary();
        var (before, _) = LibraryCache.Load(lib, Taxonomy.Default, cache);
        // Change one flux value of one spectrum file (same size on disk, same modification second is irrelevant: content is hashed).
        string file = Path.Combine(lib, generated.Spectra[3].File);
        var lines = File.ReadAllLines(file);
        int row = Array.FindIndex(lines, l => !l.StartsWith('#'));
        var parts = lines[row].Split(' ');
        parts[1] = "123.5";
        lines[row] = string.Join(' ', parts);
        File.WriteAllLines(file, lines);
        var (after, hit) = LibraryCache.Load(lib, Taxonomy.Default, cache);
        Assert.False(hit);
        Assert.NotEqual(before.Fingerprint(), after.Fingerprint());
        Assert.Equal(123.5, after.Spectra[3].Spectrum.Flux[0]);
        // And the manifest is part of the key too.
        File.AppendAllText(Path.Combine(lib, "manifest.csv"), "# a comment changes the bytes\n");
        Assert.False(LibraryCache.Load(lib, Taxonomy.Default, cache).FromCache);
        Assert.True(LibraryCache.Load(lib, Taxonomy.Default, cache).FromCache);
    }

    [Fact]
    public void Load_FitsLibraryWithAWarning_HitReportsTheSameWarning()
    {
        // A FITS export carries SPEC_RP = 600 in each header; a manifest R 10 % off makes the import warn (and use the manifest).
        var (_, cache, generated) = WriteSmallLibrary();
        string fits = Path.Combine(_root, "fits");
        LibraryFiles.Export(generated, fits, LibraryFormat.Fits, [SyntheticLibrary.Label]);
        string manifest = Path.Combine(fits, "manifest.csv");
        var lines = File.ReadAllLines(manifest);
        int row = Array.FindIndex(lines, l => l.Contains(".fits", StringComparison.Ordinal));
        lines[row] = lines[row].Replace(",600,", ",540,", StringComparison.Ordinal);
        File.WriteAllLines(manifest, lines);

        var (parsed, hit1) = LibraryCache.Load(fits, Taxonomy.Default, cache);
        var (cached, hit2) = LibraryCache.Load(fits, Taxonomy.Default, cache);
        Assert.False(hit1);
        Assert.True(hit2);
        var warning = Assert.Single(parsed.Warnings);
        Assert.Equal([warning], cached.Warnings);
        Assert.Equal(540, cached.Spectra[0].SourceResolution);
        Assert.Equal(parsed.Fingerprint(), cached.Fingerprint());
    }
}
