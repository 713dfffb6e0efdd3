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
    public void FeatureLength_CappedAndWithColours()
    {
        var o = new PreprocessOptions();
        // 2 pixels per element over 3600–8600 Å: N = 2 R ln(8600/3600) (check-values §6 formula), capped at MaxBins.
        Assert.Equal((int)Math.Round(2 * 50 * Math.Log(8600.0 / 3600)) + o.ColourPoints, Preprocessing.FeatureLength(50, o));
        Assert.Equal(o.MaxBins + o.ColourPoints, Preprocessing.FeatureLength(1500, o));
        Assert.Equal(o.MaxBins, Preprocessing.FeatureLength(1500, o with { Continuum = ContinuumHandling.Divide }));
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
}
