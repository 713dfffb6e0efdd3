using Triage.Core.Calibration;
using Triage.Core.Spectra;
using Triage.Core.Spectra.Synthetic;
using Triage.Learning;

namespace Triage.Learning.Tests.Libraries;

/// <summary>
/// Export of a library as FITS and as text through real files: the round trip keeps every double, and a
/// calibration of the FITS export gives the same cells as the calibration of the text library it came from.
/// </summary>
public sealed class LibraryExportTests : IDisposable
{
    private readonly string _root = Path.Combine(Path.GetTempPath(), "triage-export-" + Guid.NewGuid().ToString("N"));

    public void Dispose()
    {
        if (Directory.Exists(_root)) Directory.Delete(_root, true);
    }

    private SpectralLibrary SyntheticOnDisk(int objects, out string folder)
    {
        var (lib, _) = SyntheticLibrary.Generate(new SynthOptions { Objects = objects, Seed = 7 });
        folder = Path.Combine(_root, "text");
        LibraryFiles.Write(folder, lib, [SyntheticLibrary.Label]);
        return LibraryFiles.Load(folder, Taxonomy.Default);
    }

    private static void AssertSameSpectra(SpectralLibrary a, SpectralLibrary b)
    {
        Assert.Equal(a.Spectra.Count, b.Spectra.Count);
        for (int i = 0; i < a.Spectra.Count; i++)
        {
            var (x, y) = (a.Spectra[i], b.Spectra[i]);
            Assert.Equal((x.ObjectId, x.Subtype, x.PhaseDays, x.Redshift, x.SourceResolution), (y.ObjectId, y.Subtype, y.PhaseDays, y.Redshift, y.SourceResolution));
            Assert.Equal(x.Spectrum.WavelengthAngstrom, y.Spectrum.WavelengthAngstrom);
            Assert.Equal(x.Spectrum.Flux, y.Spectrum.Flux);
            Assert.Equal(x.Spectrum.FluxError, y.Spectrum.FluxError);
        }
    }

    [Fact]
    public void Export_TextToFitsToText_RoundTripsEveryValue()
    {
        var text = SyntheticOnDisk(20, out _);
        string fitsDir = Path.Combine(_root, "fits"), backDir = Path.Combine(_root, "back");
        LibraryFiles.Export(text, fitsDir, LibraryFormat.Fits, [SyntheticLibrary.Label]);
        Assert.All(Directory.GetFiles(Path.Combine(fitsDir, "spectra")), f => Assert.EndsWith(".fits", f, StringComparison.Ordinal));
        var fits = LibraryFiles.Load(fitsDir, Taxonomy.Default);
        AssertSameSpectra(text, fits);
        Assert.True(fits.Synthetic);
        LibraryFiles.Export(fits, backDir, LibraryFormat.Text, [SyntheticLibrary.Label]);
        var back = LibraryFiles.Load(backDir, Taxonomy.Default);
        AssertSameSpectra(text, back);
        Assert.Equal(text.Fingerprint(), back.Fingerprint()); // same file names again (.txt), same content
    }

    [Fact]
    public void Calibrate_FitsExportOfSyntheticLibrary_GivesTheSameCellsAsText()
    {
        var text = SyntheticOnDisk(40, out _);
        string fitsDir = Path.Combine(_root, "fits");
        LibraryFiles.Export(text, fitsDir, LibraryFormat.Fits, [SyntheticLibrary.Label]);
        var fits = LibraryFiles.Load(fitsDir, Taxonomy.Default);
        var settings = new CalibrationSettings { Resolutions = [30, 300], SnrLevels = [10], Folds = 3, Seed = 4 };
        var fromText = CalibrationPipeline.Run(text, Taxonomy.Default, settings, "test");
        var fromFits = CalibrationPipeline.Run(fits, Taxonomy.Default, settings, "test");
        Assert.NotEmpty(fromText.Cells);
        Assert.Equal(fromText.Cells, fromFits.Cells);
        Assert.Equal(fromText.Summaries, fromFits.Summaries);
    }

    [Theory]
    [InlineData("spectra/a.txt", LibraryFormat.Fits, "spectra/a.fits")]
    [InlineData("spectra/a.fits.gz", LibraryFormat.Text, "spectra/a.txt")]
    [InlineData("b.fit", LibraryFormat.Fits, "b.fits")]
    [InlineData("c", LibraryFormat.Text, "c.txt")]
    public void ExportName_ReplacesTheExtension(string file, LibraryFormat format, string expected) =>
        Assert.Equal(expected, LibraryFiles.ExportName(file, format));

    [Fact]
    public void Export_TwoFilesWithTheSameStem_IsRefused()
    {
        var s = new Spectrum([4000.0, 5000, 6000], [1.0, 1, 1]);
        var lib = new SpectralLibrary([new LibrarySpectrum("a.txt", "A", "Ia", 0, 0, null, s), new LibrarySpectrum("a.fits", "B", "Ia", 0, 0, null, s)], false);
        Assert.Throws<ArgumentException>(() => LibraryFiles.Export(lib, Path.Combine(_root, "x"), LibraryFormat.Fits, []));
    }
}
