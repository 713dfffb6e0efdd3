using Triage.Core.Calibration;

namespace Triage.Core.Tests.Calibration;

public class EqualExposureTests
{
    // Accuracy = 0.1·log2(S/N) + 0.05·log10(R): known values at each measured point.
    private static double Truth(double r, double snr) => 0.1 * Math.Log2(snr) + 0.05 * Math.Log10(r);

    private static readonly double[] Grid = [25, 100, 400, 1600];

    private static AccuracySummary[] Summaries() =>
        (from r in Grid
         from s in new double?[] { 5, 10, 20, null }
         let a = s is double v ? Truth(r, v) : 0.99
         select new AccuracySummary(r, s, a, a - 0.02, a + 0.02, a + 0.1, a + 0.08, a + 0.12, a - 0.1, 500)).ToArray();

    [Fact]
    public void Build_SnrFallsAsTheSquareRootOfR_FromEachLevelAtTheTopR()
    {
        var view = EqualExposureView.Build(Summaries());

        Assert.Equal(3 * Grid.Length, view.Count);
        foreach (var p in view)
        {
            Assert.Equal(1600, p.ReferenceResolution);
            Assert.Equal(p.ReferenceSnr * Math.Sqrt(1600 / p.Resolution), p.Snr, 12);
        }
        // Fixed photons per Å: four times lower R means twice the S/N per element (1600 → 400: 5 → 10).
        Assert.Equal(10, view.Single(p => p.ReferenceSnr == 5 && p.Resolution == 400).Snr, 12);
    }

    [Fact]
    public void Build_InsideTheMeasuredLevels_InterpolatesInLogSnr_OutsideReportsNothing()
    {
        var view = EqualExposureView.Build(Summaries());

        // S/N 5 at R = 1600 → 10 at R = 400 (a measured level) → 20 at R = 100 → 40 at R = 25 (not measured).
        var curve = view.Where(p => p.ReferenceSnr == 5).OrderByDescending(p => p.Resolution).ToArray();
        Assert.Equal(Truth(1600, 5), curve[0].Accuracy!.Value, 12);
        Assert.Equal(Truth(400, 10), curve[1].Accuracy!.Value, 12);
        Assert.Equal(Truth(100, 20), curve[2].Accuracy!.Value, 12);
        Assert.Null(curve[3].Accuracy);
        Assert.Null(curve[3].BalancedAccuracy);
        // The S/N 10 curve reaches 20 at R = 400.
        var between = view.Single(p => p.ReferenceSnr == 10 && p.Resolution == 400);
        Assert.Equal(Truth(400, 20), between.Accuracy!.Value, 12);
        // The native column never enters (it has no single S/N).
        Assert.DoesNotContain(view, p => p.Accuracy is > 0.98);
    }

    [Fact]
    public void Build_BetweenLevels_IsLinearInLogSnr()
    {
        // A grid whose √ steps fall between levels: R = 800 from 1600 is a factor √2 in S/N (5 → 7.07).
        double[] grid = [800, 1600];
        var summaries = (from r in grid from s in new double?[] { 5, 10 } select new AccuracySummary(r, s, Truth(r, s!.Value), 0, 1, 0.5, 0, 1, 0.4, 100)).ToArray();

        var p = EqualExposureView.Build(summaries).Single(x => x.ReferenceSnr == 5 && x.Resolution == 800);

        // Truth is linear in log S/N, so interpolation in ln S/N reproduces it exactly.
        Assert.Equal(5 * Math.Sqrt(2), p.Snr, 12);
        Assert.Equal(Truth(800, 5 * Math.Sqrt(2)), p.Accuracy!.Value, 12);
    }
}
