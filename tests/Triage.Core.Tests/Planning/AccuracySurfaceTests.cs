using Triage.Core.Calibration;
using Triage.Core.Planning;

namespace Triage.Core.Tests.Planning;

public class AccuracySurfaceTests
{
    private static readonly AccuracySurface Surface = AccuracySurface.FromDocument(
        CalibrationFixtures.Document(), new AccuracySurfaceOptions { Recall = RecallEstimate.Point });

    private static double[] OneHot(int s) => Enumerable.Range(0, 3).Select(i => i == s ? 1.0 : 0.0).ToArray();

    // Phase exactly inside a bin with σ = 0 selects that bin alone.
    private static PhaseBelief InBin(int bin) => new(new[] { -10.0, 0, 20 }[bin], 0);

    [Theory]
    [InlineData(0, 10, 5, 0)]
    [InlineData(1, 100, 20, 1)]
    [InlineData(2, 1000, 5, 2)]
    [InlineData(0, 1000, 20, 1)]
    public void Evaluate_AtGridPoint_ReturnsTheCellRecall(int subtype, double r, double snr, int bin)
    {
        var value = Surface.Evaluate(OneHot(subtype), r, snr, InBin(bin));

        // Exact at grid points: interpolation weights are 0/1 (tolerance: rounding only).
        Assert.Equal(CalibrationFixtures.Recall(subtype, r, snr, bin), value.ExpectedAccuracy, 12);
        Assert.False(value.Clamped);
    }

    [Fact]
    public void Evaluate_AboveTheHighestNumericSnr_ClampsToIt_NativeCellsUnused()
    {
        // The fixture has native cells with a higher recall; a native column has no single S/N (it grows as
        // √(R₀/R)), so the planner must not place it anywhere on the S/N axis.
        var value = Surface.Evaluate(OneHot(1), 100, 100, InBin(1));

        Assert.Equal(CalibrationFixtures.Recall(1, 100, 20, 1), value.ExpectedAccuracy, 12);
        Assert.True(value.Clamped);
        Assert.Equal([5.0, 20.0], Surface.SnrAxis);
    }

    [Fact]
    public void FromDocument_OnlyNativeCells_Throws()
    {
        var doc = CalibrationFixtures.Document();
        var native = doc with { SnrLevels = [null], Cells = doc.Cells.Where(c => c.Snr is null).ToArray() };

        var e = Assert.Throws<ArgumentException>(() => AccuracySurface.FromDocument(native));
        Assert.Contains("numeric S/N", e.Message);
    }

    [Fact]
    public void Evaluate_GeometricMidpointInR_IsTheMeanOfTheNeighbours()
    {
        var r = Math.Sqrt(10 * 100);

        var value = Surface.Evaluate(OneHot(0), r, 20, InBin(1));

        var expected = (CalibrationFixtures.Recall(0, 10, 20, 1) + CalibrationFixtures.Recall(0, 100, 20, 1)) / 2;
        Assert.Equal(expected, value.ExpectedAccuracy, 12);
    }

    [Fact]
    public void Evaluate_GeometricMidpointInSnr_IsTheMeanOfTheNeighbours()
    {
        var value = Surface.Evaluate(OneHot(2), 1000, 10, InBin(0));

        var expected = (CalibrationFixtures.Recall(2, 1000, 5, 0) + CalibrationFixtures.Recall(2, 1000, 20, 0)) / 2;
        Assert.Equal(expected, value.ExpectedAccuracy, 12);
    }

    [Fact]
    public void Evaluate_Accuracy_IsThePriorWeightedSumOfRecalls()
    {
        double[] prior = [0.5, 0.3, 0.2];

        var value = Surface.Evaluate(prior, 100, 5, InBin(2));

        var expected = Enumerable.Range(0, 3).Sum(s => prior[s] * CalibrationFixtures.Recall(s, 100, 5, 2));
        Assert.Equal(expected, value.ExpectedAccuracy, 12);
    }

    [Fact]
    public void Evaluate_HigherRAndSnr_NeverLowersAccuracy()
    {
        double[] prior = [0.4, 0.4, 0.2];
        var previousR = 0.0;
        foreach (var r in new[] { 10, 15, 30, 60, 100, 250, 600, 1000 })
        {
            var previousSnr = 0.0;
            foreach (var snr in new[] { 5, 7, 10, 14, 20, 40, 100 })
            {
                var a = Surface.Evaluate(prior, r, snr, new PhaseBelief(2, 4)).ExpectedAccuracy;
                Assert.True(a >= previousSnr - 1e-12, $"accuracy fell with S/N at R={r}, S/N={snr}");
                previousSnr = a;
            }

            var atTwenty = Surface.Evaluate(prior, r, 20, new PhaseBelief(2, 4)).ExpectedAccuracy;
            Assert.True(atTwenty >= previousR - 1e-12, $"accuracy fell with R at R={r}");
            previousR = atTwenty;
        }
    }

    [Theory]
    [InlineData(5000, 20)]
    [InlineData(3, 20)]
    [InlineData(100, 2)]
    [InlineData(100, 500)]
    public void Evaluate_OutsideTheGrid_ClampsAndSaysSo(double r, double snr)
    {
        var value = Surface.Evaluate(OneHot(0), r, snr, InBin(1));

        Assert.True(value.Clamped);
        var edgeR = Math.Clamp(r, 10, 1000);
        double edgeSnr = Math.Clamp(snr, 5, 20);
        Assert.Equal(CalibrationFixtures.Recall(0, edgeR, edgeSnr, 1), value.ExpectedAccuracy, 12);
    }

    [Fact]
    public void Evaluate_PhaseOnABinEdgeWithTinySigma_SplitsEvenly()
    {
        // A normal distribution puts half its mass on each side of its mean (symmetry, common practice).
        var value = Surface.Evaluate(OneHot(0), 100, 20, new PhaseBelief(-3, 1e-6));

        var expected = (CalibrationFixtures.Recall(0, 100, 20, 0) + CalibrationFixtures.Recall(0, 100, 20, 1)) / 2;
        Assert.Equal(expected, value.ExpectedAccuracy, 9);
    }

    [Fact]
    public void Evaluate_PhaseWithSigma_WeighsBinsByNormalProbability()
    {
        // μ = 2, σ = 5: P(φ < −3) = Φ(−1) = 0.158655, P(−3 ≤ φ < 7) = 0.682689, rest 0.158655
        // (standard normal table, Abramowitz & Stegun 26.2; 6 digits).
        var value = Surface.Evaluate(OneHot(1), 1000, 5, new PhaseBelief(2, 5));

        var expected = 0.158655 * CalibrationFixtures.Recall(1, 1000, 5, 0)
                       + 0.682689 * CalibrationFixtures.Recall(1, 1000, 5, 1)
                       + 0.158655 * CalibrationFixtures.Recall(1, 1000, 5, 2);
        Assert.Equal(expected, value.ExpectedAccuracy, 5);
    }

    [Fact]
    public void Information_PerfectlySharpPrior_IsZero()
    {
        var withConfusion = AccuracySurface.FromDocument(CalibrationFixtures.Document(withConfusions: true));

        Assert.Equal(0, withConfusion.Evaluate(OneHot(1), 100, 20, InBin(1)).InformationBits, 12);
    }

    [Fact]
    public void Information_GrowsWithResolution_WhenTheClassifierSeparatesBetter()
    {
        var withConfusion = AccuracySurface.FromDocument(CalibrationFixtures.Document(withConfusions: true));
        double[] prior = [1 / 3.0, 1 / 3.0, 1 / 3.0];

        var low = withConfusion.Evaluate(prior, 10, 20, InBin(1)).InformationBits;
        var high = withConfusion.Evaluate(prior, 1000, 20, InBin(1)).InformationBits;

        Assert.InRange(low, 0, Math.Log2(3));
        Assert.True(high > low);
        Assert.InRange(high, 0, Math.Log2(3));
    }

    [Fact]
    public void AlignPrior_UnknownLabel_KeepsItsMassOut()
    {
        var aligned = Surface.AlignPrior(new Dictionary<string, double> { ["Ia"] = 2, ["SLSN-I"] = 1, ["Ic"] = 1 });

        Assert.Equal([0.5, 0.25, 0], aligned);
    }

    [Fact]
    public void AlignPrior_NegativeProbability_Throws()
        => Assert.Throws<ArgumentException>(() => Surface.AlignPrior(new Dictionary<string, double> { ["Ia"] = -0.1 }));

    [Fact]
    public void FromDocument_MissingCells_FillsAndSaysSo()
    {
        var doc = CalibrationFixtures.Document();
        var sparse = doc with { Cells = doc.Cells.Where(c => !(c.Subtype == "II" && c.PhaseBin == "before")).ToArray() };

        var surface = AccuracySurface.FromDocument(sparse, new AccuracySurfaceOptions { Recall = RecallEstimate.Point });

        Assert.NotEmpty(surface.Notes);
        var filled = surface.Evaluate(OneHot(2), 100, 20, InBin(0)).ExpectedAccuracy;
        Assert.Equal((CalibrationFixtures.Recall(2, 100, 20, 1) + CalibrationFixtures.Recall(2, 100, 20, 2)) / 2, filled, 12);
    }

    [Fact]
    public void FromDocument_EmptyGrid_Throws()
        => Assert.Throws<ArgumentException>(() => AccuracySurface.FromDocument(
            new AccuracyModelDocument("x", 6000, [], [], [], [], [], [])));
}
