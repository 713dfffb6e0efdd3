using Triage.Core.Calibration;
using Triage.Core.Identification;
using Triage.Core.Planning;
using Triage.Core.Spectra;

namespace Triage.Core.Tests.Identification;

/// <summary>
/// The posterior rule against hand computations with Bayes' theorem (E. T. Jaynes, Probability
/// Theory: The Logic of Science, 2003, ch. 4; T. M. Cover, J. A. Thomas, Elements of Information
/// Theory, 2nd ed., §2.1) on a small confusion matrix, worked below in exact fractions.
/// </summary>
public class PosteriorUpdateTests
{
    // One grid point (R = 100, S/N = 10, one phase bin), three subtypes. Counts, rows = truth:
    //   Ia          [40,  8,  2]  → C(·|Ia)  = [0.8, 0.16, 0.04]
    //   Ia-91T-like [10, 10,  0]  → C(·|91T) = [0.5, 0.5,  0   ]
    //   II          [ 3,  0, 27]  → C(·|II)  = [0.1, 0,    0.9 ]
    private static readonly string[] Subtypes = ["Ia", "Ia-91T-like", "II"];

    private static readonly int[][] Counts = [[40, 8, 2], [10, 10, 0], [3, 0, 27]];

    private static readonly IReadOnlyList<BroadClass> Broad =
        [new("thermonuclear", ["Ia", "Ia-91T-like"]), new("hydrogen-rich", ["II", "IIn"])];

    private static readonly Dictionary<string, double> Prior = new() { ["Ia"] = 0.7, ["Ia-91T-like"] = 0.1, ["II"] = 0.2 };

    internal static AccuracySurface Surface()
    {
        var bin = new PhaseBin("all-phases", -1000, 1000);
        var cells = Subtypes.Select((s, i) =>
        {
            var n = Counts[i].Sum();
            var recall = (double)Counts[i][i] / n;
            return new CalibrationCell(s, 100, 10, bin.Name, recall, recall, recall, recall, n, n);
        }).ToList();
        var matrix = new ConfusionMatrix(100, 10, bin.Name, Subtypes, Counts.Select(r => (IReadOnlyList<int>)r).ToList());
        var document = new AccuracyModelDocument("per resolution element", 6000, Subtypes, [100], [10], [bin], cells, [matrix]);
        return AccuracySurface.FromDocument(document, new AccuracySurfaceOptions { Recall = RecallEstimate.Point });
    }

    private static ReportedClassification Report(string label, IReadOnlyDictionary<string, double>? q = null) =>
        new(label, q, 100, 10, new PhaseBelief(0, 0));

    [Fact]
    public void Apply_SubtypeLabel_MatchesHandComputation()
    {
        // L = C(Ia|k) = [0.8, 0.5, 0.1]; p·L = [0.56, 0.05, 0.02], sum 0.63 → [8/9, 5/63, 2/63].
        var result = PosteriorUpdate.Apply(Surface(), Broad, Prior, Report("Ia"));

        Assert.Equal(8.0 / 9, result.Posterior["Ia"], 12);
        Assert.Equal(5.0 / 63, result.Posterior["Ia-91T-like"], 12);
        Assert.Equal(2.0 / 63, result.Posterior["II"], 12);
        Assert.Equal(0.5, result.Likelihood["Ia-91T-like"], 12);
        Assert.Equal("Ia", result.TopSubtype);
        Assert.False(result.Identified); // 8/9 = 0.889 < 0.9
        Assert.Equal(100, result.Cell.GridResolutionLow);
        Assert.Equal(10, result.Cell.GridSnrHigh);
        Assert.Equal("all-phases", Assert.Single(result.Cell.PhaseBins).Bin);
    }

    [Fact]
    public void Apply_TwoAgreeingReports_CrossTheConfidence()
    {
        // Prior × L² = [0.448, 0.025, 0.002], sum 0.475 → p(Ia) = 0.448/0.475 = 0.943158 ≥ 0.9.
        var surface = Surface();
        var first = PosteriorUpdate.Apply(surface, Broad, Prior, Report("Ia"));

        var second = PosteriorUpdate.Apply(surface, Broad, first.Posterior, Report("Ia"));

        Assert.Equal(0.448 / 0.475, second.Posterior["Ia"], 12);
        Assert.True(second.Identified);
    }

    [Fact]
    public void Apply_BroadClassLabel_SumsMemberColumns()
    {
        // L(thermonuclear|k) = [0.96, 1.0, 0.1]; p·L = [0.672, 0.1, 0.02], sum 0.792.
        var result = PosteriorUpdate.Apply(Surface(), Broad, Prior, Report("thermonuclear"));

        Assert.Equal(0.672 / 0.792, result.Posterior["Ia"], 12);
        Assert.Equal(0.1 / 0.792, result.Posterior["Ia-91T-like"], 12);
        Assert.Equal(0.02 / 0.792, result.Posterior["II"], 12);
    }

    [Fact]
    public void Apply_ReportedProbabilities_EnterAsSoftEvidence()
    {
        // q = {Ia: 0.5, II: 0.5}: L = 0.5·C(Ia|k) + 0.5·C(II|k) = [0.42, 0.25, 0.5];
        // p·L = [0.294, 0.025, 0.1], sum 0.419.
        var q = new Dictionary<string, double> { ["Ia"] = 0.5, ["II"] = 0.5 };

        var result = PosteriorUpdate.Apply(Surface(), Broad, Prior, Report("Ia", q));

        Assert.Equal(0.294 / 0.419, result.Posterior["Ia"], 12);
        Assert.Equal(0.025 / 0.419, result.Posterior["Ia-91T-like"], 12);
        Assert.Equal(0.1 / 0.419, result.Posterior["II"], 12);
    }

    [Fact]
    public void Apply_PointMassProbabilities_EqualTheBareLabel()
    {
        var surface = Surface();
        var bare = PosteriorUpdate.Apply(surface, Broad, Prior, Report("II"));
        var soft = PosteriorUpdate.Apply(surface, Broad, Prior, Report("II", new Dictionary<string, double> { ["II"] = 1 }));

        // Hand: L = [0.04, 0, 0.9]; p·L = [0.028, 0, 0.18], sum 0.208.
        Assert.Equal(0.18 / 0.208, bare.Posterior["II"], 12);
        Assert.Equal(0, bare.Posterior["Ia-91T-like"], 12);
        Assert.Equal(bare.Posterior["II"], soft.Posterior["II"], 12);
    }

    [Fact]
    public void Apply_UncalibratedPriorLabel_GetsTheMeanLikelihood()
    {
        // IIn is not calibrated: L(IIn) = mean(0.8, 0.5, 0.1) = 0.4667; p = [0.6, 0.1, 0.2, 0.1].
        var prior = new Dictionary<string, double> { ["Ia"] = 0.6, ["Ia-91T-like"] = 0.1, ["II"] = 0.2, ["IIn"] = 0.1 };

        var result = PosteriorUpdate.Apply(Surface(), Broad, prior, Report("Ia"));

        var joint = new[] { 0.48, 0.05, 0.02, 0.1 * 1.4 / 3 };
        Assert.Equal(joint[3] / joint.Sum(), result.Posterior["IIn"], 12);
        Assert.Equal(1, result.Posterior.Values.Sum(), 12);
    }

    [Fact]
    public void Apply_UnknownLabel_Throws()
    {
        Assert.Throws<ArgumentException>(() => PosteriorUpdate.Apply(Surface(), Broad, Prior, Report("Ia-ish")));
    }

    [Fact]
    public void Apply_ConfidenceIsConfigurable()
    {
        var result = PosteriorUpdate.Apply(Surface(), Broad, Prior, Report("Ia"), confidence: 0.85);

        Assert.True(result.Identified); // 8/9 ≥ 0.85
    }
}
