using MathNet.Numerics.Distributions;
using Triage.Core.Calibration;
using Triage.Core.Planning;
using Triage.Core.Spectra;

namespace Triage.Core.Tests.Planning;

/// <summary>
/// Empirical-Bayes shrinkage of the accuracy surface towards the broad class, applied to the confusion rows, so
/// expected accuracy and information gain rest on the same numbers.
/// </summary>
public class AccuracySurfaceShrinkageTests
{
    private static readonly string[] Subtypes = ["A1", "A2", "A3", "B1", "B2", "B3"];
    private static readonly BroadClass[] Classes = [new("A", ["A1", "A2", "A3"]), new("B", ["B1", "B2", "B3"])];
    private static readonly double[] Resolutions = [5, 20, 100, 500, 2000];
    private static readonly double?[] SnrLevels = [3, 5, 10, 20];
    private static readonly PhaseBin[] Bins = [new("early", -30, 0), new("mid", 0, 20), new("late", 20, 100), new("later", 100, 300)];

    // Beta-binomial calibration: at each grid point a class mean μ; each subtype's true recall ~ Beta(Mμ, M(1−μ)); the
    // cell measures it on n spectra (independent here, so n is also the effective size). Errors go to the next subtype.
    private static AccuracyModelDocument BetaBinomialDocument(double concentration, int n, int seed, double meanA = 0.7, double meanB = 0.35)
    {
        var random = new Random(seed);
        var cells = new List<CalibrationCell>();
        var confusions = new List<ConfusionMatrix>();
        foreach (var r in Resolutions)
        foreach (var snr in SnrLevels)
        foreach (var bin in Bins)
        {
            var counts = new List<IReadOnlyList<int>>();
            for (int s = 0; s < Subtypes.Length; s++)
            {
                double mu = s < 3 ? meanA : meanB;
                double p = Beta.Sample(random, concentration * mu, concentration * (1 - mu));
                int k = Binomial.Sample(random, p, n);
                cells.Add(new CalibrationCell(Subtypes[s], r, snr, bin.Name, k / (double)n, 0, 1, 1, n, n) { EffectiveSpectra = n, DesignEffect = 1 });
                var row = new int[Subtypes.Length];
                row[s] = k;
                row[(s + 1) % Subtypes.Length] = n - k;
                counts.Add(row);
            }
            confusions.Add(new ConfusionMatrix(r, snr, bin.Name, Subtypes, counts));
        }
        return new AccuracyModelDocument("per resolution element", 6000, Subtypes, Resolutions, SnrLevels, Bins, cells, confusions)
        {
            BroadClasses = Classes,
        };
    }

    [Fact]
    public void Shrinkage_EstimatesTheConcentrationOfBetaBinomialData()
    {
        // True M = 30 (ρ = 1/31 ≈ 0.032) with 40 spectra per cell over 80 grid points per class: the method of moments
        // (Kleinman, JASA 68, 46, 1973) recovers ρ to within a factor of 1.5 (its sampling spread at this size).
        var surface = AccuracySurface.FromDocument(BetaBinomialDocument(30, 40, seed: 5));

        Assert.Equal(2, surface.Shrinkage.Count);
        foreach (var s in surface.Shrinkage)
        {
            Assert.Equal(80, s.GridPoints);
            Assert.InRange(s.IntraClassCorrelation, 1 / 31.0 / 1.5, 1 / 31.0 * 1.5);
        }
    }

    [Fact]
    public void Shrinkage_SubtypesThatDifferOnlyByNoise_ArePooledAlmostFully()
    {
        // Every subtype of a class has the same true recall (M → ∞): the estimate reaches the cap and the shrunk
        // recalls collapse onto the class mean.
        var surface = AccuracySurface.FromDocument(BetaBinomialDocument(1e7, 40, seed: 6));
        var strength = surface.Shrinkage.Single(s => s.BroadClass == "A");
        Assert.True(strength.Concentration >= 100, $"M = {strength.Concentration}");
        var rows = new[] { "A1", "A2", "A3" }.Select(s => surface.ConfusionRow(s, 100, 10, new PhaseBelief(10, 0))[Array.IndexOf(Subtypes, s)]).ToArray();
        Assert.True(rows.Max() - rows.Min() < 0.03, string.Join(", ", rows));
    }

    [Fact]
    public void Shrinkage_TargetsTheBroadClass_NotTheMeanOfAllSubtypes()
    {
        // Class A recalls near 0.9, class B near 0.2: A's subtypes must stay near 0.9 (the old all-subtype target, 0.55,
        // would drag them down by tens of points).
        var doc = BetaBinomialDocument(20, 15, seed: 7, meanA: 0.9, meanB: 0.2);
        var surface = AccuracySurface.FromDocument(doc);
        var cellsA = doc.Cells.Where(c => c.Subtype.StartsWith('A') && c.Resolution == 100 && c.Snr == 10 && c.PhaseBin == "mid").ToArray();
        double classMean = cellsA.Average(c => c.Recall);
        foreach (var c in cellsA)
        {
            double shrunk = surface.ConfusionRow(c.Subtype, 100, 10, new PhaseBelief(10, 0))[Array.IndexOf(Subtypes, c.Subtype)];
            Assert.InRange(shrunk, Math.Min(c.Recall, classMean) - 1e-9, Math.Max(c.Recall, classMean) + 1e-9);
        }
    }

    [Theory]
    [InlineData(7.0, 12.0, 5.0, 0.0)]
    [InlineData(300.0, 7.0, 40.0, 30.0)]
    [InlineData(1500.0, 4.0, 150.0, 60.0)]
    public void ExpectedAccuracy_IsThePriorWeightedDiagonalOfTheChannelUsedForInformation(double r, double snr, double phaseMean, double phaseSigma)
    {
        var surface = AccuracySurface.FromDocument(BetaBinomialDocument(15, 12, seed: 8));
        double[] prior = [0.3, 0.05, 0.1, 0.25, 0.2, 0.1];
        var phase = new PhaseBelief(phaseMean, phaseSigma);

        var value = surface.Evaluate(prior, r, snr, phase);
        var channel = surface.AtResolution(r).Channel(snr, phase);

        double fromRows = 0;
        for (int s = 0; s < Subtypes.Length; s++)
        {
            var row = surface.ConfusionRow(Subtypes[s], r, snr, phase);
            Assert.Equal(1, row.Sum(), 9);
            Assert.All(row, v => Assert.InRange(v, 0, 1));
            fromRows += prior[s] * row[s];
        }
        Assert.Equal(fromRows, value.ExpectedAccuracy, 12);
        Assert.Equal(InformationTheory.MutualInformationBits(prior, channel), value.InformationBits, 12);
    }

    [Fact]
    public void Shrunk_ChangesTheChannel_NotOnlyTheRecall()
    {
        // The confusion rows themselves move: a raw (point) channel and the shrunk one differ off the diagonal too.
        var doc = BetaBinomialDocument(15, 12, seed: 9);
        var point = AccuracySurface.FromDocument(doc, new AccuracySurfaceOptions { Recall = RecallEstimate.Point });
        var shrunk = AccuracySurface.FromDocument(doc);
        var phase = new PhaseBelief(10, 0);

        var raw = point.ConfusionRow("A2", 100, 10, phase);
        var pulled = shrunk.ConfusionRow("A2", 100, 10, phase);

        Assert.Empty(point.Shrinkage);
        var cell = doc.Cells.Single(c => c.Subtype == "A2" && c.Resolution == 100 && c.Snr == 10 && c.PhaseBin == "mid");
        Assert.Equal(cell.Recall, raw[1], 12);
        Assert.NotEqual(raw[1], pulled[1]);
        Assert.Contains(Enumerable.Range(0, 6).Where(j => j != 1), j => Math.Abs(raw[j] - pulled[j]) > 1e-3);
    }
}
