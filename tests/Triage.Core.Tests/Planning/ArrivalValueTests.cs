using Triage.Core.Planning;
using Triage.Core.Sky;

namespace Triage.Core.Tests.Planning;

/// <summary>
/// A candidate arriving after the night was planned is worth a replan when some option's net value per hour of unit
/// time beats the unit's marginal value per hour in the active plan (the LP price of its time); and a replan that keeps
/// the previous version is always among the solver's starting points.
/// </summary>
public class ArrivalValueTests
{
    private static readonly DateOnly Night = new(2030, 3, 14);

    private static LinearTargetForecast Target(string id, double weight, double mag) => new(id, new SkyTarget(180, 30), weight,
        new Dictionary<string, double> { ["Ia"] = 0.6, ["Ic"] = 0.3, ["II"] = 0.1 },
        new DateTimeOffset(2030, 3, 15, 6, 0, 0, TimeSpan.Zero), mag, 0.05, 0.1, new DateTimeOffset(2030, 3, 12, 0, 0, 0, TimeSpan.Zero), 2);

    private static PlanningNight Arrivals() => NightProblemBuilder.Build(
        [NightProblemBuilderTests.Site], [NightProblemBuilderTests.Unit],
        [Target("bright", 1, 17), Target("weightless", 0, 17), Target("faint", 1, 19.5)],
        AccuracySurface.FromDocument(CalibrationFixtures.Document()), Night, new DateTimeOffset(2030, 3, 14, 12, 0, 0, TimeSpan.Zero));

    private static NightPlan Active(double? marginalValuePerHour, params string[] planned)
    {
        var start = new DateTimeOffset(2030, 3, 15, 4, 0, 0, TimeSpan.Zero);
        var queue = planned.Select(id => new QueueEntry(id, start, start.AddMinutes(20), 900, 1.2, 17, 20, 0.8, 0.5, 0.8, "r", [], null, 0)).ToList();
        return new NightPlan("a", PlanObjective.Accuracy,
            [new SpectrographQueue(NightProblemBuilderTests.Unit.Id.ToString(), "Test-1000", "Mesa Test", 1000, 36000, 1200, 0, marginalValuePerHour, queue)],
            [], new PlanSummary(1, queue.Count, 1, 1, 1, null, null, PlanStatus.Feasible, 0, 0, 0), []);
    }

    /// <summary>Best net value per hour of a candidate's options, computed here from the levels.</summary>
    private static double BestPerHour(PlanningNight night, string id)
    {
        var c = night.Problem.Candidates.Select((x, i) => (x, i)).Single(t => t.x.Id == id).i;
        return night.Problem.Options.Where(o => o.Candidate == c)
            .SelectMany(o => o.Levels.Select(l => night.Problem.NetValue(o, l) / l.DurationSeconds * 3600)).Max();
    }

    [Fact]
    public void SpareTime_AnyValuableArrivalTriggers_AWeightlessOneNever()
    {
        var night = Arrivals();

        var found = ArrivalValue.ExceedingMargin(night, Active(0));

        Assert.Contains(found, a => a.CandidateId == "bright");
        Assert.DoesNotContain(found, a => a.CandidateId == "weightless");
        var bright = found.Single(a => a.CandidateId == "bright");
        Assert.Equal(BestPerHour(night, "bright"), bright.ValuePerHour, 9);
        Assert.Equal(0, bright.MarginalValuePerHour);
    }

    [Fact]
    public void Threshold_IsTheUnitsMarginalValuePerHour()
    {
        var night = Arrivals();
        var best = BestPerHour(night, "bright");
        Assert.True(best > 0);

        Assert.Contains(ArrivalValue.ExceedingMargin(night, Active(best * 0.99)), a => a.CandidateId == "bright");
        Assert.DoesNotContain(ArrivalValue.ExceedingMargin(night, Active(best * 1.01)), a => a.CandidateId == "bright");
        // A fainter object needs longer for the same S/N, so it earns less per hour than the bright one.
        Assert.True(BestPerHour(night, "faint") < best);
    }

    [Fact]
    public void AlreadyPlannedOrUnknownPrice_NeverTriggers()
    {
        var night = Arrivals();

        Assert.DoesNotContain(ArrivalValue.ExceedingMargin(night, Active(0, "bright")), a => a.CandidateId == "bright");
        Assert.Empty(ArrivalValue.ExceedingMargin(night, Active(null)));
    }

    // One unit, one hour; anchors A (0–30 min) and B (30–60 min) from the previous version; a new candidate C is worth
    // more than either alone but takes 2,040 s, and D is short and dense. By value the greedy places C first (then D):
    // 1.9; by density D first (A cannot start, B can): 1.8; keeping the anchors gives 2 × 1.1 = 2.2.
    private static PlanningModel Crafted()
    {
        static ExposureLevel Level(double seconds, double value) => new(10, seconds, seconds, value, value, value);
        var problem = new PlanningProblem(DateTimeOffset.UnixEpoch,
            [new PlanningUnit("u", "u", "s", 1000, new SecondsWindow(0, 3600), 3600, 0)],
            [new PlanningCandidate("A", 1), new PlanningCandidate("B", 1), new PlanningCandidate("C", 1), new PlanningCandidate("D", 1)],
            [
                new PlanOption(0, 0, new SecondsWindow(0, 1800), [Level(1800, 1.0)], 1.1, 17),
                new PlanOption(1, 0, new SecondsWindow(1800, 3600), [Level(1800, 1.0)], 1.1, 17),
                new PlanOption(2, 0, new SecondsWindow(0, 3600), [Level(2040, 1.2)], 1.1, 17),
                new PlanOption(3, 0, new SecondsWindow(0, 3600), [Level(600, 0.7)], 1.1, 17),
            ],
            PlanObjective.Accuracy)
        {
            Anchors = [new PlanAnchor(0, 0, 0, 1800), new PlanAnchor(1, 0, 1800, 1800)],
        };
        return PlanningModel.Compile(problem);
    }

    [Fact]
    public void Greedy_KeepingTheAnchors_IsAStartingPoint_SoAReplanNeverDoesWorseThanThePreviousVersion()
    {
        var model = Crafted();
        Assert.Equal(2, model.AnchorChoices.Count);

        var byValue = model.ObjectiveOf(GreedyPlanner.Solve(model, GreedyPlanner.Order.Value));
        var byDensity = model.ObjectiveOf(GreedyPlanner.Solve(model, GreedyPlanner.Order.ValueDensity));
        var kept = GreedyPlanner.SolveKeepingAnchors(model);
        var best = GreedyPlanner.SolveBest(model);

        Assert.Equal(1.9, byValue, 9);
        Assert.Equal(1.8, byDensity, 9);
        Assert.Equal(2.2, model.ObjectiveOf(kept), 9);
        Assert.Equal(2.2, model.ObjectiveOf(best), 9);
        Assert.Equal([0L, 15L], best.Select(p => p.StartTick).Order());
    }
}
