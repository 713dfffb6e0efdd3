using System.Globalization;
using System.Text;
using Triage.Core.Spectra;
using Triage.Core.Spectra.Fits;

namespace Triage.Core.Tests.Spectra.Fits;

/// <summary>Manifests pointing at FITS files next to text files (in-memory streams; the adapter opens real files).</summary>
public sealed class FitsLibraryImportTests
{
    private static readonly string Dir = Path.Combine(AppContext.BaseDirectory, "Spectra", "TestData", "fits");

    private static byte[] Fixture(string name, string folder = "") => File.ReadAllBytes(Path.Combine(Dir, folder, name));

    private static string Text(double from = 3500, double to = 9000, int n = 200)
    {
        var sb = new StringBuilder();
        for (int i = 0; i < n; i++)
            sb.Append(string.Create(CultureInfo.InvariantCulture, $"{from + i * (to - from) / (n - 1):0.###} {1 + 0.1 * Math.Sin(i)}\n"));
        return sb.ToString();
    }

    private static bool Import(string manifest, Dictionary<string, byte[]> files, out SpectralLibrary? lib, out IReadOnlyList<ImportError> errors) =>
        LibraryImport.TryImport(new StringReader(manifest),
            f => files.TryGetValue(f, out var b) ? new MemoryStream(b, writable: false) : null,
            Taxonomy.Default, new SpectrumReadOptions(), out lib, out errors);

    private static Dictionary<string, byte[]> Files() => new()
    {
        ["t/a.txt"] = Encoding.UTF8.GetBytes(Text()),
        ["f/b.fits"] = Fixture("linear_vacuum_angstrom.fits"),
        ["f/c.fits.gz"] = Fixture("air_log_gzip.fits.gz"),
        ["f/d.fit"] = Fixture("two_tables_air_mjy.fits"),
        ["f/e.fits"] = Fixture("scaled_int32_extension.fits"),
    };

    private const string Header = "file,object_id,subtype,phase_days,redshift,source_resolution,hdu\n";

    [Fact]
    public void TryImport_TextAndFitsSideBySide_ReadsEveryRowWithItsHdu()
    {
        string manifest = Header +
                          "t/a.txt,A,Ia,0,0.01,1000,\n" +
                          "f/b.fits,B,II,3,0.02,,\n" +
                          "f/c.fits.gz,C,Ib,5,0.03,700,\n" +
                          "f/d.fit,D,IIn,7,0.01,500,B\n" +
                          "f/e.fits,E,Ic,9,0.01,,SCI\n";
        Assert.True(Import(manifest, Files(), out var lib, out var errors), string.Join("\n", errors));
        Assert.Equal(5, lib!.Spectra.Count);
        Assert.Equal(200, lib.Spectra[0].Spectrum.Count);
        Assert.Equal(300, lib.Spectra[1].Spectrum.Count);
        Assert.Equal(200, lib.Spectra[3].Spectrum.Count); // EXTNAME 'B', not the 50-row table 'A'
        // The source resolution: manifest when given, else the header's SPEC_RP (900 in b.fits, 2500 in e.fits).
        Assert.Equal(new double?[] { 1000, 900, 700, 500, 2500 }, lib.Spectra.Select(s => s.SourceResolution));
        Assert.Empty(lib.Warnings);
    }

    [Fact]
    public void TryImport_ManifestAndHeaderResolutionDisagree_ManifestWinsWithAWarning()
    {
        string manifest = Header + "f/b.fits,B,II,3,0.02,1500,\nf/e.fits,E,Ic,9,0.01,2510,\n";
        Assert.True(Import(manifest, Files(), out var lib, out var errors), string.Join("\n", errors));
        Assert.Equal(1500, lib!.Spectra[0].SourceResolution);
        var w = Assert.Single(lib.Warnings); // 2510 vs 2500 is within 1 %
        Assert.Equal(2, w.Line);
        Assert.Equal(FitsSpectrumReader.ResolvingPowerKeyword, w.Keyword);
        Assert.Contains("900", w.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void TryImport_OneBadFitsFile_ImportsNothingAndNamesFileHduAndKeyword()
    {
        var files = Files();
        files["f/bad.fits"] = Fixture("cdelt1_missing.fits", "malformed");
        files["f/bad2.fits"] = Fixture("table_not_monotonic.fits", "malformed");
        string manifest = Header + "t/a.txt,A,Ia,0,0.01,1000,\nf/bad.fits,B,II,3,0.02,,\nf/bad2.fits,C,II,3,0.02,,\nt/a.txt,D,II,1,0.01,,2\n";
        Assert.False(Import(manifest, files, out var lib, out var errors));
        Assert.Null(lib);
        var e1 = errors.Single(e => e.File == "f/bad.fits");
        Assert.Equal(("primary", "CDELT1"), (e1.Hdu, e1.Keyword));
        var e2 = errors.Single(e => e.File == "f/bad2.fits");
        Assert.Equal(("HDU 1", "WAVE"), (e2.Hdu, e2.Keyword));
        // Duplicate file is reported on its manifest line; an hdu for a text file is refused too.
        Assert.Contains(errors, e => e.File == LibraryImport.ManifestFileName && e.Line == 5);
    }

    [Fact]
    public void TryImport_HduGivenForATextFile_IsRefused()
    {
        var files = Files();
        files["t/z.txt"] = files["t/a.txt"];
        Assert.False(Import(Header + "t/z.txt,A,Ia,0,0.01,1000,1\n", files, out _, out var errors));
        Assert.Contains(errors, e => e.Line == 2 && e.Message.Contains("not a FITS file", StringComparison.Ordinal));
    }

    [Fact]
    public void TryImport_CorruptGzip_IsAnErrorNotACrash()
    {
        var files = Files();
        var gz = Fixture("air_log_gzip.fits.gz");
        files["f/c.fits.gz"] = gz[..(gz.Length / 2)];
        Assert.False(Import(Header + "f/c.fits.gz,C,Ib,5,0.03,700,\n", files, out _, out var errors));
        Assert.Contains(errors, e => e.File == "f/c.fits.gz");
    }

    [Theory]
    [InlineData("a.fits", true)]
    [InlineData("a.FIT", true)]
    [InlineData("a.fits.gz", true)]
    [InlineData("a.txt", false)]
    [InlineData("a.gz", false)]
    public void IsFits_ByExtension(string file, bool expected) => Assert.Equal(expected, LibraryImport.IsFits(file));
}
