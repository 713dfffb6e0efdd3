using Triage.Core.Calibration;

namespace Triage.Core.Tests.Calibration;

public class MinimumResolutionTests
{
    private static CalibrationCell Cell(double r, int correct, int n)
    {
        var w = WilsonInterval.Compute(correct, n);
        return new CalibrationCell("Ia", r, null, CalibrationSettings.AllPhases, w.Estimate, w.Low, w.High, 1, n, n);
    }

    [Fact]
    public void Build_PlateauThenDrop_FindsKneeAndChance()
    {
        // Recall 0.90 flat down to R = 50, 0.80 at 20, 0.30 at 10, 0.12 at 5 (n = 100, K = 10 → chance 0.10).
        var cells = new[] { Cell(5, 12, 100), Cell(10, 30, 100), Cell(20, 80, 100), Cell(50, 88, 100), Cell(100, 90, 100), Cell(1000, 89, 100) };
        var row = Assert.Single(MinimumResolutionTable.Build(cells, 10, 0.05));
        Assert.Equal(0.90, row.BestRecall, 12);
        Assert.Equal(100, row.BestResolution);
        Assert.Equal(50, row.MinimumResolution);
        Assert.Equal(20, row.MinimumResolutionBracketLow);
        // Wilson lower bound of 12/100 is 0.070 < 0.10: R = 5 is not distinguishable from chance; 30/100 is.
        Assert.Equal(10, row.DistinguishableFromResolution);
        Assert.Equal(5, row.ChanceBelowResolution);
    }

    [Fact]
    public void Build_DipAtHighR_MinimumStaysAboveTheDip()
    {
        // "Stays within tolerance": a dip at R = 100 blocks lower R even if R = 50 recovers.
        var cells = new[] { Cell(50, 90, 100), Cell(100, 70, 100), Cell(1000, 90, 100) };
        var row = Assert.Single(MinimumResolutionTable.Build(cells, 10, 0.05));
        Assert.Equal(1000, row.MinimumResolution);
        Assert.Null(row.ChanceBelowResolution);
        Assert.Equal(50, row.DistinguishableFromResolution);
    }

    [Fact]
    public void Build_DipWithinSamplingNoise_DoesNotBlockLowerR()
    {
        // 84/100 is 6 points below the best (0.90), but its Wilson score 95 % upper bound (0.899; Wilson,
        // JASA 22, 209, 1927) reaches 0.85: not significantly outside the 5-point tolerance.
        var cells = new[] { Cell(20, 70, 100), Cell(50, 90, 100), Cell(100, 84, 100), Cell(1000, 88, 100) };
        var row = Assert.Single(MinimumResolutionTable.Build(cells, 10, 0.05));
        Assert.Equal(50, row.MinimumResolution);
        Assert.Equal(20, row.MinimumResolutionBracketLow);
    }

    [Fact]
    public void Build_TopPointBelowToleranceByNoise_MinimumIsTheLowestPointWithin()
    {
        // The best point (R = 20) sits lowest on the grid; the top point dips 7 points, within noise at n = 60.
        var cells = new[] { Cell(10, 30, 100), Cell(20, 54, 60), Cell(1000, 50, 60) };
        var row = Assert.Single(MinimumResolutionTable.Build(cells, 10, 0.05));
        Assert.Equal(20, row.BestResolution);
        Assert.Equal(20, row.MinimumResolution);
    }

    [Fact]
    public void ToCsv_HasHeaderAndOneLinePerRow()
    {
        var cells = new[] { Cell(5, 12, 100), Cell(100, 90, 100) };
        var csv = MinimumResolutionTable.ToCsv(MinimumResolutionTable.Build(cells, 10, 0.05));
        var lines = csv.TrimEnd('\n').Split('\n');
        Assert.Equal(2, lines.Length);
        Assert.StartsWith("subtype,snr,tolerance,best_recall", lines[0]);
        Assert.StartsWith("Ia,native,0.05,0.9,100,100,5,", lines[1]);
    }
}
