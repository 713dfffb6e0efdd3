using Triage.Core.Calibration;
using Triage.Core.Planning;

namespace Triage.Scheduling.Tests;

/// <summary>
/// The defining behaviour: scarce high-R time goes to the object a low-R unit cannot identify.
/// Invented calibration: at R = 30 the thermonuclear Ia is recognised 90% of the time, stripped-envelope
/// Ib/Ic only 30%; at R = 4000 they reach 95% and 75/70%.
/// </summary>
public class ScarceTimeTests
{
    private static AccuracySurface Surface()
    {
        var recall = new Dictionary<(string, double), double>
        {
            [("Ia", 30)] = 0.90, [("Ic", 30)] = 0.30, [("Ib", 30)] = 0.30,
            [("Ia", 4000)] = 0.95, [("Ic", 4000)] = 0.75, [("Ib", 4000)] = 0.70,
        };
        var cells = recall.SelectMany(kv => new double?[] { 10, 20 }.Select(snr =>
            new CalibrationCell(kv.Key.Item1, kv.Key.Item2, snr, "all", kv.Value, kv.Value - 0.05, kv.Value + 0.05, kv.Value, 200, 40))).ToArray();
        var doc = new AccuracyModelDocument("per resolution element", 6000, ["Ia", "Ic", "Ib"], [30, 4000], [10, 20],
            [new PhaseBin("all", -50, 200)], cells, []);
        return AccuracySurface.FromDocument(doc, new AccuracySurfaceOptions { Recall = RecallEstimate.Point });
    }

    [Fact]
    public void Solve_OneHighRSlotTwoCandidates_GivesItToTheOneLowRCannotIdentify()
    {
        var surface = Surface();
        var brightIa = surface.AlignPrior(new Dictionary<string, double> { ["Ia"] = 0.9, ["Ic"] = 0.05, ["Ib"] = 0.05 });
        var faintStripped = surface.AlignPrior(new Dictionary<string, double> { ["Ic"] = 0.6, ["Ib"] = 0.4 });
        var phase = new PhaseBelief(0, 3);
        ExposureLevel Level(double[] prior, double r, double seconds)
        {
            var v = surface.Evaluate(prior, r, 20, phase);
            return new ExposureLevel(20, seconds - 300, seconds, v.ExpectedAccuracy, v.InformationBits, v.ExpectedAccuracy);
        }

        var units = new[]
        {
            new PlanningUnit("high", "High-R", "Site B", 4000, new SecondsWindow(0, 3600), 3600, 300),
            new PlanningUnit("low", "Low-R", "Site A", 30, new SecondsWindow(0, 8 * 3600), 8 * 3600, 40),
        };
        var candidates = new[] { new PlanningCandidate("bright-ia", 1), new PlanningCandidate("faint-stripped", 1) };
        var options = new[]
        {
            // Both fit the high-R hour alone, not together (1500 + 3000 s > 3600 s).
            new PlanOption(0, 0, new SecondsWindow(0, 3600), [Level(brightIa, 4000, 1500)], 1.1, 15.5),
            new PlanOption(0, 1, new SecondsWindow(0, 8 * 3600), [Level(brightIa, 30, 600)], 1.1, 15.5),
            new PlanOption(1, 0, new SecondsWindow(0, 3600), [Level(faintStripped, 4000, 3000)], 1.3, 19.8),
            new PlanOption(1, 1, new SecondsWindow(0, 8 * 3600), [Level(faintStripped, 30, 2400)], 1.3, 19.8),
        };
        var problem = new PlanningProblem(DateTimeOffset.UnixEpoch, units, candidates, options, PlanObjective.Accuracy);

        var plan = PlanReport.Build(problem, NightPlanner.Solve(problem, new SolverSettings { Deterministic = true }));

        var high = Assert.Single(plan.Spectrographs[0].Queue);
        var low = Assert.Single(plan.Spectrographs[1].Queue);
        Assert.Equal("faint-stripped", high.CandidateId);
        Assert.Equal("bright-ia", low.CandidateId);
        // Hand check: 0.9·0.90 + 0.1·0.30 = 0.84 on low R; 0.6·0.75 + 0.4·0.70 = 0.73 on high R.
        Assert.Equal(0.84 + 0.73, plan.Summary.ExpectedCorrectIdentifications, 9);
        Assert.Equal("low", high.RunnerUpSpectrographId);
        Assert.Equal(0.73 - 0.30, high.LossIfMovedToCheapest, 9);
        Assert.Equal(PlanStatus.Optimal, plan.Summary.Status);
    }
}
