using System.Globalization;
using System.Text.Json;
using Triage.Core.Spectra;
using Triage.Core.Spectra.Fits;

namespace Triage.Core.Tests.Spectra.Fits;

/// <summary>
/// The FITS reader against files written by Debian's python3-astropy 5.2.1 and astropy's own reading of them
/// (Spectra/TestData/fits/make_fixtures.py and its README): wavelengths from astropy.wcs (WCSLIB), flux from
/// astropy.io.fits, units from astropy.units.
/// </summary>
public sealed class FitsSpectrumReaderTests
{
    private static readonly string Dir = Path.Combine(AppContext.BaseDirectory, "Spectra", "TestData", "fits");

    // 1e-6 relative, the tolerance the issue sets; astropy scales 16-bit integers in 32-bit floats
    // (≈ 6e-8 relative) and the expected values are stored to 10 significant digits (5e-10).
    private const double Tolerance = 1e-6;

    private static string[] ValidNames() =>
        Directory.GetFiles(Path.Combine(Dir, "expected"), "*.json").Select(Path.GetFileNameWithoutExtension).Order(StringComparer.Ordinal).ToArray()!;

    public static TheoryData<string> ValidFiles() => new(ValidNames());

    private static FitsSpectrum ReadFixture(string name, string? hdu, string folder = "")
    {
        using var file = File.OpenRead(Path.Combine(Dir, folder, name));
        using var stream = FitsFile.Decompressed(file, name);
        return FitsSpectrumReader.Read(stream, hdu, new SpectrumReadOptions());
    }

    [Fact]
    public void Fixtures_CoverEveryLayoutTheIssueNames()
    {
        var names = ValidNames();
        Assert.True(names.Length >= 10, string.Join(", ", names));
        foreach (var required in new[] { "linear_vacuum_angstrom.fits", "loglinear_vacuum_nm.fits", "table_ivar_mask.fits",
                     "air_linear_angstrom.fits", "multirow_micrometre.fits", "air_log_gzip.fits.gz", "scaled_int16_blank.fits" })
            Assert.Contains(required, names);
    }

    [Theory]
    [MemberData(nameof(ValidFiles))]
    public void Read_AstropyFixture_MatchesAstropysReadingTo1e6(string name)
    {
        using var json = JsonDocument.Parse(File.ReadAllText(Path.Combine(Dir, "expected", name + ".json")));
        var root = json.RootElement;
        string? hdu = root.GetProperty("hdu").ValueKind == JsonValueKind.Null ? null : root.GetProperty("hdu").GetString();
        double[] Array(string p) => root.GetProperty(p).EnumerateArray().Select(e => e.GetDouble()).ToArray();

        var read = ReadFixture(name, hdu);
        var s = read.Spectrum;
        var wave = Array("wavelength_vacuum_angstrom");
        var flux = Array("flux_erg_s_cm2_angstrom");
        Assert.Equal(wave.Length, s.Count);
        for (int i = 0; i < wave.Length; i++)
        {
            Assert.True(Math.Abs(s.WavelengthAngstrom[i] / wave[i] - 1) <= Tolerance,
                string.Create(CultureInfo.InvariantCulture, $"{name} λ[{i}] = {s.WavelengthAngstrom[i]:R}, astropy {wave[i]:R}"));
            Assert.True(Math.Abs(s.Flux[i] - flux[i]) <= Tolerance * Math.Abs(flux[i]),
                string.Create(CultureInfo.InvariantCulture, $"{name} flux[{i}] = {s.Flux[i]:R}, astropy {flux[i]:R}"));
        }
        if (root.GetProperty("flux_error").ValueKind == JsonValueKind.Array)
        {
            var err = Array("flux_error");
            Assert.NotNull(s.FluxError);
            for (int i = 0; i < err.Length; i++)
                Assert.True(Math.Abs(s.FluxError![i] - err[i]) <= Tolerance * Math.Abs(err[i]), $"{name} error[{i}]");
        }
        var r = root.GetProperty("resolving_power");
        Assert.Equal(r.ValueKind == JsonValueKind.Null ? null : r.GetDouble(), read.ResolvingPower);
    }

    [Fact]
    public void Read_BlankPixelsAndMasks_AreDropped()
    {
        // scaled_int16_blank.fits has 250 pixels, 4 of them BLANK; table_ivar_mask.fits 250 rows,
        // 3 with zero inverse variance and 4 with mask bits set (make_fixtures.py).
        Assert.Equal(246, ReadFixture("scaled_int16_blank.fits", null).Spectrum.Count);
        Assert.Equal(243, ReadFixture("table_ivar_mask.fits", null).Spectrum.Count);
    }

    [Fact]
    public void Read_TableWithoutAirOrVacuum_WarnsAndReadsVacuum()
    {
        var read = ReadFixture("table_vector_loglam.fits.gz", null);
        Assert.Contains(read.Warnings, w => w.Contains("read as vacuum", StringComparison.Ordinal));
        Assert.Empty(ReadFixture("table_ivar_mask.fits", null).Warnings);
    }

    [Fact]
    public void Read_HduByIndexOrName_PicksThatHdu()
    {
        Assert.Equal(50, ReadFixture("two_tables_air_mjy.fits", "A").Spectrum.Count);
        Assert.Equal(200, ReadFixture("two_tables_air_mjy.fits", "b").Spectrum.Count);
        Assert.Equal(200, ReadFixture("two_tables_air_mjy.fits", "2").Spectrum.Count);
        var ex = Assert.Throws<FitsFormatException>(() => ReadFixture("two_tables_air_mjy.fits", "C"));
        Assert.Equal("EXTNAME", ex.Keyword);
        Assert.Contains("HDU 2 'B'", ex.Message, StringComparison.Ordinal);
    }

    private static Dictionary<string, string> Malformed() =>
        JsonSerializer.Deserialize<Dictionary<string, string>>(File.ReadAllText(Path.Combine(Dir, "malformed", "malformed.json")))!;

    public static TheoryData<string, string> MalformedFiles()
    {
        var data = new TheoryData<string, string>();
        foreach (var (file, keyword) in Malformed().OrderBy(p => p.Key, StringComparer.Ordinal)) data.Add(file, keyword);
        return data;
    }

    [Fact]
    public void MalformedFixtures_AreAtLeastTwentyAndAllPresent()
    {
        var expected = Malformed();
        Assert.True(expected.Count >= 20);
        foreach (var file in expected.Keys) Assert.True(File.Exists(Path.Combine(Dir, "malformed", file)), file);
    }

    [Theory]
    [MemberData(nameof(MalformedFiles))]
    public void Read_MalformedFile_IsRefusedNamingTheKeyword(string file, string keyword)
    {
        var ex = Assert.Throws<FitsFormatException>(() => ReadFixture(file, null, "malformed"));
        Assert.Equal(keyword, ex.Keyword);
        Assert.Contains(keyword, ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void WriteTable_ThenRead_RoundTripsBitForBit()
    {
        var rng = new Random(3);
        int n = 300;
        var w = Enumerable.Range(0, n).Select(i => 3500 + 18.123456789 * i + rng.NextDouble()).ToArray();
        var f = w.Select(_ => rng.NextDouble() * 1e-16).ToArray();
        var e = w.Select(_ => rng.NextDouble() * 1e-18).ToArray();
        var ms = new MemoryStream();
        FitsSpectrumWriter.WriteTable(ms, new Spectrum(w, f, e), 1234.5, "erg/s/cm2/Angstrom", ["a comment"]);
        Assert.Equal(0, ms.Length % FitsHeader.BlockBytes);
        ms.Position = 0;
        var read = FitsSpectrumReader.Read(ms, null, new SpectrumReadOptions());
        Assert.Equal(w, read.Spectrum.WavelengthAngstrom);
        Assert.Equal(f, read.Spectrum.Flux);
        Assert.Equal(e, read.Spectrum.FluxError!);
        Assert.Equal(1234.5, read.ResolvingPower);
        Assert.True(read.FluxUnitStated);
        Assert.Empty(read.Warnings);
    }

    [Fact]
    public void WriteImage_ThenRead_GivesTheLinearSolution()
    {
        var flux = Enumerable.Range(0, 400).Select(i => (float)(1 + 0.001 * i)).ToArray();
        var ms = new MemoryStream();
        FitsSpectrumWriter.WriteImage(ms, flux, 3600, 12.5);
        ms.Position = 0;
        var s = FitsSpectrumReader.Read(ms, null, new SpectrumReadOptions()).Spectrum;
        Assert.Equal(400, s.Count);
        Assert.Equal(3600 + 12.5 * 399, s.MaxWavelengthAngstrom, 9);
        Assert.Equal(flux.Select(v => (double)v), s.Flux);
    }

    [Fact]
    public void Read_HugeAxesInTheHeader_AreRefusedWithoutAllocating()
    {
        string[] cards = ["SIMPLE  =                    T", "BITPIX  =                  -64", "NAXIS   =                    2",
                          "NAXIS1  =           2147483647", "NAXIS2  =           2147483647", "END"];
        var bytes = System.Text.Encoding.ASCII.GetBytes(string.Concat(cards.Select(c => c.PadRight(80))).PadRight(2880));
        var ex = Assert.Throws<FitsFormatException>(() => FitsSpectrumReader.Read(new MemoryStream(bytes), null, new SpectrumReadOptions()));
        Assert.Equal("NAXIS2", ex.Keyword);
        Assert.Contains("too large", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Read_TooLittleCoverage_IsRefusedLikeText()
    {
        var ms = new MemoryStream();
        FitsSpectrumWriter.WriteImage(ms, new float[100], 5000, 1);
        ms.Position = 0;
        var ex = Assert.Throws<FitsFormatException>(() => FitsSpectrumReader.Read(ms, null, new SpectrumReadOptions()));
        Assert.Contains("too little coverage", ex.Message, StringComparison.Ordinal);
    }
}
