using System.Globalization;
using System.Text;
using Triage.Core.Spectra;

namespace Triage.Core.Tests.Spectra;

public class LibraryImportTests
{
    private static string GoodSpectrum(double from = 3500, double to = 9000, int n = 200)
    {
        var sb = new StringBuilder("# wavelength flux\n");
        for (int i = 0; i < n; i++)
            sb.Append(string.Create(CultureInfo.InvariantCulture, $"{from + i * (to - from) / (n - 1):0.###} {1 + 0.1 * Math.Sin(i)}\n"));
        return sb.ToString();
    }

    private const string Header = "file,object_id,subtype,phase_days,redshift,source_resolution\n";

    private static Dictionary<string, string> Valid() => new()
    {
        ["manifest.csv"] = "# a small library\n" + Header +
                           "s/a1.txt,A,Ia,-3.5,0.02,1500\n" +
                           "s/a2.txt,A,Ia,10,0.02,1500\n" +
                           "s/b1.txt,B,IIn,5,0.01,\n",
        ["s/a1.txt"] = GoodSpectrum(),
        ["s/a2.txt"] = GoodSpectrum(),
        ["s/b1.txt"] = GoodSpectrum(),
    };

    private static bool Import(Dictionary<string, string> files, out SpectralLibrary? lib, out IReadOnlyList<ImportError> errors) =>
        LibraryImport.TryImport(new StringReader(files["manifest.csv"]),
            f => files.TryGetValue(f, out var text) ? new StringReader(text) : null,
            Taxonomy.Default, new SpectrumReadOptions(), out lib, out errors);

    [Fact]
    public void TryImport_ValidLibrary_ReadsAllRows()
    {
        Assert.True(Import(Valid(), out var lib, out var errors), string.Join("\n", errors));
        Assert.Equal(3, lib!.Spectra.Count);
        Assert.Equal(2, lib.ObjectCount);
        Assert.Equal(1500, lib.Spectra[0].SourceResolution);
        Assert.Null(lib.Spectra[2].SourceResolution);
        Assert.Equal(-3.5, lib.Spectra[0].PhaseDays);
    }

    [Fact]
    public void TryImport_UnsortedRowsWithNaNAndCommentsAndErrors_SortsAndSkipsNaN()
    {
        var files = Valid();
        files["s/a1.txt"] = "# three columns, any order\n9000 1 0.1\n3500 2 0.1  # inline comment\nnan 3 0.1\n5000 NaN 0.1\n" +
                            string.Join("\n", Enumerable.Range(0, 30).Select(i => string.Create(CultureInfo.InvariantCulture, $"{4000 + 100 * i} 1.5 0.2"))) + "\n";
        Assert.True(Import(files, out var lib, out var errors), string.Join("\n", errors));
        var s = lib!.Spectra[0].Spectrum;
        Assert.Equal(3500, s.MinWavelengthAngstrom);
        Assert.Equal(9000, s.MaxWavelengthAngstrom);
        Assert.Equal(32, s.Count);
        Assert.NotNull(s.FluxError);
        Assert.True(s.WavelengthAngstrom.Zip(s.WavelengthAngstrom.Skip(1)).All(p => p.First < p.Second));
    }

    // Each case: a mutation of the valid library, and the file and line (null: file-level) the error must name.
    public static TheoryData<string, Action<Dictionary<string, string>>, string, int?> Malformed() => new()
    {
        { "missing column", f => f["manifest.csv"] = "file,object_id,subtype,phase_days\ns/a1.txt,A,Ia,1\n", "manifest.csv", 1 },
        { "duplicate header column", f => f["manifest.csv"] = "file,file,object_id,subtype,phase_days,redshift\n", "manifest.csv", 1 },
        { "empty manifest", f => f["manifest.csv"] = "# nothing\n", "manifest.csv", null },
        { "header only", f => f["manifest.csv"] = Header, "manifest.csv", null },
        { "too few fields", f => f["manifest.csv"] = Header + "s/a1.txt,A,Ia,1,0.02\n", "manifest.csv", 2 },
        { "unknown subtype", f => f["manifest.csv"] = Header + "s/a1.txt,A,Ia,1,0.02,1500\ns/a2.txt,A,Type-Z,5,0.02,1500\n", "manifest.csv", 3 },
        { "phase not a number", f => f["manifest.csv"] = Header + "s/a1.txt,A,Ia,soon,0.02,1500\n", "manifest.csv", 2 },
        { "negative redshift", f => f["manifest.csv"] = Header + "s/a1.txt,A,Ia,1,-0.1,1500\n", "manifest.csv", 2 },
        { "zero source resolution", f => f["manifest.csv"] = Header + "s/a1.txt,A,Ia,1,0.02,0\n", "manifest.csv", 2 },
        { "duplicate file", f => f["manifest.csv"] = Header + "s/a1.txt,A,Ia,1,0.02,1500\ns/a1.txt,B,Ia,2,0.02,1500\n", "manifest.csv", 3 },
        { "duplicate epoch", f => f["manifest.csv"] = Header + "s/a1.txt,A,Ia,1,0.02,1500\ns/a2.txt,A,Ia,1,0.02,1500\n", "manifest.csv", 3 },
        { "path escapes folder", f => f["manifest.csv"] = Header + "../secret.txt,A,Ia,1,0.02,1500\n", "manifest.csv", 2 },
        { "absolute path", f => f["manifest.csv"] = Header + "/etc/x.txt,A,Ia,1,0.02,1500\n", "manifest.csv", 2 },
        { "empty object id", f => f["manifest.csv"] = Header + "s/a1.txt,,Ia,1,0.02,1500\n", "manifest.csv", 2 },
        { "missing spectrum file", f => f.Remove("s/b1.txt"), "manifest.csv", 5 },
        { "non-numeric flux", f => f["s/a2.txt"] = GoodSpectrum() + "6000 bright\n", "s/a2.txt", 202 },
        { "one column", f => f["s/a2.txt"] = GoodSpectrum() + "6000\n", "s/a2.txt", 202 },
        { "four columns", f => f["s/a2.txt"] = GoodSpectrum() + "6000 1 0.1 7\n", "s/a2.txt", 202 },
        { "mixed column counts", f => f["s/a2.txt"] = "4000 1\n" + GoodSpectrum().Replace("# wavelength flux\n", "") + "6000 1 0.1\n", "s/a2.txt", 202 },
        { "negative wavelength", f => f["s/a2.txt"] = GoodSpectrum() + "-5 1\n", "s/a2.txt", 202 },
        { "zero wavelength", f => f["s/a2.txt"] = GoodSpectrum() + "0 1\n", "s/a2.txt", 202 },
        { "infinite flux", f => f["s/a2.txt"] = GoodSpectrum() + "6000.5 Infinity\n", "s/a2.txt", 202 },
        { "negative error", f => f["s/b1.txt"] = "3500 1 0.1\n" + string.Concat(Enumerable.Range(1, 40).Select(i => $"{3500 + 100 * i} 1 {(i == 7 ? "-0.2" : "0.1")}\n")), "s/b1.txt", 8 },
        { "duplicated wavelength", f => f["s/b1.txt"] = GoodSpectrum() + "3500 1.2\n", "s/b1.txt", 202 },
        { "too little span", f => f["s/b1.txt"] = GoodSpectrum(5000, 6000), "s/b1.txt", null },
        { "too few samples", f => f["s/b1.txt"] = GoodSpectrum(3500, 9000, 10), "s/b1.txt", null },
        { "all NaN", f => f["s/b1.txt"] = "4000 nan\n5000 nan\n", "s/b1.txt", null },
    };

    [Theory]
    [MemberData(nameof(Malformed))]
    public void TryImport_MalformedLibrary_RejectsNamingFileAndLineAndImportsNothing(string @case, Action<Dictionary<string, string>> mutate,
        string file, int? line)
    {
        var files = Valid();
        mutate(files);
        bool ok = Import(files, out var lib, out var errors);
        Assert.False(ok, @case);
        Assert.Null(lib);
        Assert.Contains(errors, e => e.File == file && e.Line == line);
        Assert.All(errors, e => Assert.False(string.IsNullOrWhiteSpace(e.Message)));
    }

    [Fact]
    public void TryImport_SeveralProblems_ReportsEveryOne()
    {
        var files = Valid();
        files["manifest.csv"] = Header + "s/a1.txt,A,Ia,1,0.02,1500\ns/a2.txt,A,Iz,2,0.02,1500\ns/b1.txt,B,IIn,x,0.01,\n";
        files["s/a1.txt"] = GoodSpectrum() + "7000 oops\n";
        Assert.False(Import(files, out _, out var errors));
        Assert.Contains(errors, e => e.File == "manifest.csv" && e.Line == 3 && e.Message.Contains("Iz"));
        Assert.Contains(errors, e => e.File == "manifest.csv" && e.Line == 4 && e.Message.Contains("phase_days"));
        Assert.Contains(errors, e => e.File == "s/a1.txt" && e.Line == 202);
        Assert.Equal("manifest.csv:3: unknown subtype label 'Iz' (not in the taxonomy)", errors.First(e => e.Line == 3).ToString());
    }

    [Fact]
    public void Import_Malformed_ThrowsWithAllErrors()
    {
        var files = Valid();
        files.Remove("s/a2.txt");
        var ex = Assert.Throws<LibraryImportException>(() => LibraryImport.Import(new StringReader(files["manifest.csv"]),
            f => files.TryGetValue(f, out var t) ? new StringReader(t) : null, Taxonomy.Default));
        Assert.Single(ex.Errors);
        Assert.Contains("s/a2.txt", ex.Message);
    }

    [Fact]
    public void WriteManifest_RoundTrip_ReimportsSameLibrary()
    {
        Assert.True(Import(Valid(), out var lib, out _));
        var manifest = new StringWriter();
        LibraryImport.WriteManifest(manifest, lib!, ["round trip"]);
        var texts = lib!.Spectra.ToDictionary(s => s.File, s => { var w = new StringWriter(); SpectrumText.Write(w, s.Spectrum); return w.ToString(); });
        var again = LibraryImport.Import(new StringReader(manifest.ToString()), f => new StringReader(texts[f]), Taxonomy.Default);
        Assert.Equal(lib.Spectra.Select(s => (s.File, s.ObjectId, s.Subtype, s.PhaseDays, s.Redshift, s.SourceResolution)),
            again.Spectra.Select(s => (s.File, s.ObjectId, s.Subtype, s.PhaseDays, s.Redshift, s.SourceResolution)));
        // The writer keeps six significant digits of flux (relative rounding error ≤ 5e-6).
        Assert.All(lib.Spectra[0].Spectrum.Flux.Zip(again.Spectra[0].Spectrum.Flux), p => Assert.Equal(p.First, p.Second, 5e-6 * Math.Abs(p.First)));
    }

    [Fact]
    public void TryImport_EmptyRedshift_ParsesAsNotGivenAndRoundTrips()
    {
        var files = Valid();
        files["manifest.csv"] = Header + "s/a1.txt,A,Ia,-3.5,,1500\n" + "s/a2.txt,A,Ia,10, ,1500\n" + "s/b1.txt,B,IIn,5,0.01,\n";
        Assert.True(Import(files, out var lib, out var errors), string.Join("\n", errors));
        Assert.Equal([null, null, 0.01], lib!.Spectra.Select(s => s.Redshift));
        Assert.Equal(2, lib.WithoutRedshiftCount);
        foreach (bool exact in new[] { false, true })
        {
            var manifest = new StringWriter();
            LibraryImport.WriteManifest(manifest, lib, ["round trip"], exact);
            var again = LibraryImport.Import(new StringReader(manifest.ToString()), f => new StringReader(files[f]), Taxonomy.Default);
            Assert.Equal(lib.Spectra.Select(s => s.Redshift), again.Spectra.Select(s => s.Redshift));
        }
    }

    [Fact]
    public void TryImport_RedshiftNotANumber_StillRefusedWithItsColumn()
    {
        var files = Valid();
        files["manifest.csv"] = Header + "s/a1.txt,A,Ia,-3.5,abc,1500\n";
        Assert.False(Import(files, out _, out var errors));
        Assert.Contains(errors, e => e.Message.Contains("redshift 'abc'"));
    }
}
