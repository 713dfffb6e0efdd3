using Triage.Core.Spectra;
using Triage.Core.Spectra.Synthetic;

namespace Triage.Core.Tests.Spectra;

public class SyntheticLibraryTests
{
    private static double MinimumOfRatio(double[] w, double[] flux, double[] continuum, double from, double to)
    {
        int best = -1;
        for (int i = 0; i < w.Length; i++)
            if (w[i] >= from && w[i] <= to && (best < 0 || flux[i] / continuum[i] < flux[best] / continuum[best])) best = i;
        // Parabolic refinement through the three samples around the minimum.
        double y0 = flux[best - 1] / continuum[best - 1], y1 = flux[best] / continuum[best], y2 = flux[best + 1] / continuum[best + 1];
        double h = w[best + 1] - w[best];
        return w[best] + 0.5 * h * (y0 - y2) / (y0 - 2 * y1 + y2);
    }

    private static (double[] W, double[] Cont) Grid(SubtypeModel m, SyntheticObject obj, double phase)
    {
        var w = Enumerable.Range(0, 60000).Select(i => 3500 + i * 0.1).ToArray();
        var bare = m with { Lines = [] };
        return (w, SyntheticLibrary.Render(bare, obj, phase, w));
    }

    [Theory]
    // NIST rest wavelengths (air) from check-values §5 (recalled, from memory); Doppler: relativistic radial
    // formula λ = λ₀ √((1−β)/(1+β)) (check-values §5, derived). Tolerance 0.05 Å: parabolic interpolation
    // of a 0.1 Å grid.
    [InlineData(5875.62, 9000)]
    [InlineData(6562.79, 12000)]
    [InlineData(4861.35, 7000)]
    [InlineData(7065.19, 15000)]
    public void Render_SingleAbsorption_MinimumAtDopplerShiftedRestWavelength(double rest, double velocity)
    {
        var feature = new LineList.Feature("test", [new LineList.Transition(rest, 1)]);
        var model = new SubtypeModel("Ib", 1, 9000, 9000, 10, 0, velocity, 0.25, 0, 1, [new LineSpec(feature, 0.8, 0, 1, 0, [])]);
        var obj = new SyntheticObject("T", "Ib", 0, velocity, 1, 0, false, 100, [1.0]);
        // Phase 0: v(φ) = v₀ (the velocity law is 1 − 0.007 φ).
        var (w, cont) = Grid(model, obj, 0);
        var flux = SyntheticLibrary.Render(model, obj, 0, w);
        double beta = velocity / 299792.458;
        double expected = rest * Math.Sqrt((1 - beta) / (1 + beta));
        Assert.Equal(expected, MinimumOfRatio(w, flux, cont, rest - 800, rest), 1);
        Assert.InRange(Math.Abs(MinimumOfRatio(w, flux, cont, rest - 800, rest) - expected), 0, 0.05);
    }

    [Fact]
    public void BlueshiftedAngstrom_CheckValue_SiII6355At12270()
    {
        // check-values §5 worked value: Si II 6355 observed at 6100 Å ⇒ v_rel = −12 270.6 km/s. Tolerance 0.01 Å
        // (the velocity is printed to 0.1 km/s = 0.002 Å).
        Assert.Equal(6100, LineList.BlueshiftedAngstrom(6355.0, 12270.6), 2);
    }

    [Fact]
    public void Render_RedshiftedObject_ShiftsFeatureByOnePlusZ()
    {
        var feature = new LineList.Feature("test", [new LineList.Transition(6562.79, 1)]);
        var model = new SubtypeModel("II", 1, 9000, 9000, 10, 0, 8000, 0.25, 0, 1, [new LineSpec(feature, 0.8, 0, 1, 0, [])]);
        var obj = new SyntheticObject("T", "II", 0.05, 8000, 1, 0, false, 100, [1.0]);
        var (w, cont) = Grid(model, obj, 0);
        var flux = SyntheticLibrary.Render(model, obj, 0, w);
        double expected = 1.05 * LineList.BlueshiftedAngstrom(6562.79, 8000);
        Assert.InRange(Math.Abs(MinimumOfRatio(w, flux, cont, 6400, 7000) - expected), 0, 0.05);
    }

    [Fact]
    public void Generate_SmallLibrary_IsLabelledImbalancedAndReproducible()
    {
        var options = new SynthOptions { Objects = 40, Seed = 3, MinObjectsPerSubtype = 2, MeanSpectraPerObject = 3 };
        var (lib, objects) = SyntheticLibrary.Generate(options);
        var (again, _) = SyntheticLibrary.Generate(options);
        Assert.True(lib.Synthetic);
        Assert.Equal(40, objects.Count);
        Assert.Equal(lib.Fingerprint(), again.Fingerprint());
        Assert.All(lib.Spectra, s => Assert.Equal(6000, s.SourceResolution));
        Assert.All(lib.Spectra, s => Assert.True(Taxonomy.Default.Contains(s.Subtype)));
        Assert.All(lib.Spectra, s => Assert.True(s.NoiseFree && s.Spectrum.FluxError is not null));
        // Native sampling: 2 pixels per element of R = 6000 (N = R ln(λ2/λ1), check-values §6).
        var first = lib.Spectra[0].Spectrum;
        double elements = LogWavelengthGrid.ResolutionElements(6000, first.MinWavelengthAngstrom, first.MaxWavelengthAngstrom);
        Assert.InRange(first.Count / elements, 1.99, 2.01);
    }

    [Fact]
    public void ObjectCounts_DefaultSize_FloorAndMajority()
    {
        var counts = SyntheticLibrary.ObjectCounts(400, 8);
        Assert.Equal(400, counts.Values.Sum());
        Assert.All(counts.Values, c => Assert.True(c >= 8));
        Assert.Equal("Ia", counts.MaxBy(kv => kv.Value).Key);
        Assert.Equal(Taxonomy.Default.Subtypes.OrderBy(s => s), counts.Keys.OrderBy(s => s));
    }

    [Fact]
    public void Knobs_DocumentedTable_EqualsCodeDefaults()
    {
        // One source of the knobs: SynthOptions' defaults. docs/synthetic-library.md lists them in a table
        // "| `Name` | value | meaning |"; every knob must be there with the same value, and nothing else.
        string docs = File.ReadAllText(Path.Combine(RepoRoot(), "docs", "synthetic-library.md"));
        var rows = System.Text.RegularExpressions.Regex.Matches(docs, @"^\| `(\w+)` \| ([^|]+) \|", System.Text.RegularExpressions.RegexOptions.Multiline)
            .ToDictionary(m => m.Groups[1].Value, m => m.Groups[2].Value.Trim());
        var knobs = SynthOptions.Knobs();
        Assert.Equal(knobs.Select(k => k.Name).Order(), rows.Keys.Order());
        foreach (var (name, value) in knobs)
            Assert.True(string.Equals(Convert.ToString(value, System.Globalization.CultureInfo.InvariantCulture), rows[name], StringComparison.Ordinal),
                $"{name}: code {value}, docs {rows[name]}");
    }

    [Fact]
    public void Generate_NoisyTwin_DiffersFromNoiseFreeByTheStatedNoise()
    {
        // The error column states the noise; the noisy library's residual against its noise-free twin must have that σ
        // (normalised residuals: unit variance within 5 % over ~10^5 pixels; mean 0 within 0.02).
        var options = new SynthOptions { Objects = 14, MinObjectsPerSubtype = 1, MeanSpectraPerObject = 2, Seed = 4, NativeResolution = 1500 };
        var clean = SyntheticLibrary.Generate(options).Library.Spectra;
        var noisy = SyntheticLibrary.Generate(options with { NoiseFree = false }).Library.Spectra;
        var z = clean.Zip(noisy).Take(10).SelectMany(p => p.First.Spectrum.Flux.Select((f, i) => (p.Second.Spectrum.Flux[i] - f) / p.First.Spectrum.FluxError![i])).ToArray();
        double mean = z.Average(), variance = z.Select(v => (v - mean) * (v - mean)).Average();
        Assert.InRange(mean, -0.02, 0.02);
        Assert.InRange(variance, 0.95, 1.05);
        // Lower S/N in the blue: the stated error at 4000 Å exceeds that at 6000 Å by (6000/4000)^1.5 ≈ 1.84.
        var s0 = clean[0].Spectrum;
        double At(double l) => s0.FluxError![Array.FindIndex(s0.WavelengthAngstrom, w => w >= l)];
        Assert.InRange(At(4000) / At(6000), 1.80, 1.88);
    }

    [Fact]
    public void Generate_WithoutRedshiftShare_OmitsWholeObjectsAndChangesNothingElse()
    {
        // Share 0.5 of 28 objects: binomial, 14 ± 2.6 expected; 6–22 is beyond 3σ. Every spectrum of an object agrees,
        // and apart from the redshift the library equals the one with every redshift given (its own generator).
        var options = new SynthOptions { Objects = 28, MinObjectsPerSubtype = 2, MeanSpectraPerObject = 2, Seed = 6, NativeResolution = 300 };
        var all = SyntheticLibrary.Generate(options).Library.Spectra;
        var (some, truth) = SyntheticLibrary.Generate(options with { WithoutRedshiftShare = 0.5 });
        var missing = truth.Where(o => o.GivenRedshift is null).Select(o => o.ObjectId).ToHashSet();
        Assert.InRange(missing.Count, 6, 22);
        Assert.All(some.Spectra, s => Assert.Equal(missing.Contains(s.ObjectId), s.Redshift is null));
        Assert.All(all.Zip(some.Spectra), p =>
        {
            Assert.Equal(p.First.Spectrum.Flux, p.Second.Spectrum.Flux);
            Assert.True(p.Second.Redshift is null || p.Second.Redshift == p.First.Redshift);
        });
    }

    private static string RepoRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "Triage.sln"))) dir = dir.Parent;
        return dir?.FullName ?? throw new DirectoryNotFoundException("Triage.sln not found above the test binaries.");
    }
}
