using Triage.Core.Spectra;
using Triage.Core.Spectra.Synthetic;

namespace Triage.Core.Tests.Spectra;

public class PreprocessingTests
{
    private static float[] FeaturesAt(double z, ContinuumHandling continuum)
    {
        var model = SubtypeModels.All.Single(m => m.Subtype == "Ia");
        var obj = new SyntheticObject("T", "Ia", z, 11000, 1, 0.1, true, 100, model.Lines.Select(_ => 1.0).ToArray());
        var grid = LogWavelengthGrid.ForResolution(3400, 9400, 3000, 4);
        var w = grid.Centres();
        var flux = SyntheticLibrary.Render(model, obj, 0, w);
        var (g, degraded) = Degradation.Degrade(new Spectrum(w, flux), 200, null);
        return Preprocessing.Features(g.Centres(), degraded, z, 200, new PreprocessOptions { Continuum = continuum });
    }

    [Theory]
    [InlineData(ContinuumHandling.DivideKeepColour)]
    [InlineData(ContinuumHandling.Divide)]
    [InlineData(ContinuumHandling.Keep)]
    public void Features_SameObjectAtTwoRedshifts_Agree(ContinuumHandling continuum)
    {
        // De-redshifting must map both onto the same rest-frame features; the residual comes from
        // binning a shifted pixel grid (≤ 2 % of the feature range).
        var a = FeaturesAt(0.0, continuum);
        var b = FeaturesAt(0.06, continuum);
        Assert.Equal(a.Length, b.Length);
        double range = a.Max() - a.Min();
        double worst = a.Zip(b).Max(p => Math.Abs(p.First - p.Second));
        Assert.True(worst < 0.02 * range, $"max difference {worst} vs range {range}");
    }

    [Fact]
    public void At_BelowTheLowResolutionBand_UsesTheBandsChoice()
    {
        var o = new PreprocessOptions { LowResolutionBelow = 30, LowResolution = new PreprocessOptions { Continuum = ContinuumHandling.LogFlux, MinBins = 64 } };

        Assert.Equal(ContinuumHandling.LogFlux, o.At(10).Continuum);
        Assert.Equal(ContinuumHandling.DivideKeepColour, o.At(30).Continuum);
        Assert.Equal(64, Preprocessing.FeatureLength(10, o));
        Assert.Equal(new PreprocessOptions().MinBins + o.ColourPoints, Preprocessing.FeatureLength(10, o with { LowResolutionBelow = 0 }));
    }

    [Fact]
    public void Features_LogFlux_IsTheLogOfTheMeanNormalisedFlux()
    {
        // A power law f ∝ λ^-2 (no lines): ln(f/mean) is linear in ln λ with slope −2 across the grid.
        var w = Enumerable.Range(0, 4000).Select(i => 3400 + i * 1.5).ToArray();
        var f = w.Select(x => Math.Pow(x / 6000, -2)).ToArray();
        var o = new PreprocessOptions { Continuum = ContinuumHandling.LogFlux, MinBins = 4 };
        var x = Preprocessing.Features(w, f, 0, 100, o);
        int n = x.Length;
        // Bins are uniform in ln λ: centres n − 2 and 1 lie (n − 3)·ln(8600/3600)/n apart.
        double slope = (x[n - 2] - x[1]) / (Math.Log(8600.0 / 3600) * (n - 3) / n);
        Assert.Equal(-2, slope, 1);
    }

    [Fact]
    public void FeatureLength_CappedAndWithColours()
    {
        var o = new PreprocessOptions();
        // 2 pixels per element over 3600–8600 Å: N = 2 R ln(8600/3600) (check-values §6 formula), capped at MaxBins.
        Assert.Equal((int)Math.Round(2 * 50 * Math.Log(8600.0 / 3600)) + o.ColourPoints, Preprocessing.FeatureLength(50, o));
        Assert.Equal(o.MaxBins + o.ColourPoints, Preprocessing.FeatureLength(1500, o));
        Assert.Equal(o.MaxBins, Preprocessing.FeatureLength(1500, o with { Continuum = ContinuumHandling.Divide }));
        // Low R: at least MinBins (40) flux bins; R = 5 at 2 pixels per element would give 9.
        Assert.Equal(40 + o.ColourPoints, Preprocessing.FeatureLength(5, o));
        Assert.Equal(9 + o.ColourPoints, Preprocessing.FeatureLength(5, o with { MinBins = 4 }));
    }

    [Fact]
    public void Parse_CommaSeparatedWithTrailingComment_Reads()
    {
        var text = string.Concat(Enumerable.Range(0, 30).Select(i => $"{4000 + 100 * i},{1 + i % 3} # row {i}\n"));
        var s = SpectrumText.Parse(text);
        Assert.Equal(30, s.Count);
        Assert.Null(s.FluxError);
        Assert.Equal(2, s.Flux[1]);
    }

    [Theory]
    // Oracle test (style guide): the continuum fit keeps one QR factorisation per (length, degree) instead of
    // refactorising for every spectrum; it must give MathNet's Fit.Polynomial (the general library routine) bit for
    // bit, on the first call and on later calls that reuse the factorisation.
    [InlineData(40, 3)]
    [InlineData(200, 3)]
    [InlineData(7, 2)]
    [InlineData(1, 0)]
    public void ContinuumCoefficients_AnyValues_EqualFitPolynomialExactly(int length, int degree)
    {
        var rng = new Random(length);
        var t = Enumerable.Range(0, length).Select(i => length == 1 ? 0 : -1 + 2.0 * i / (length - 1)).ToArray();
        for (int trial = 0; trial < 5; trial++)
        {
            var y = t.Select(_ => 0.5 + rng.NextDouble()).ToArray();
            Assert.Equal(MathNet.Numerics.Fit.Polynomial(t, y, degree), Preprocessing.ContinuumCoefficients(y, degree));
        }
    }
}
