using Triage.Core.Planning;

namespace Triage.Core.Tests.Planning;

/// <summary>
/// The reason of an entry in plain words when the objective is not Σ weight · A: a runner-up can be worth more
/// while its expected accuracy is lower, and the sentence must not then say it "would add" a negative accuracy.
/// </summary>
public class PlanExplanationTests
{
    // One candidate, two units; placed on the quick unit, the runner-up is worth 0.2 more with A 0.10 lower.
    private static string ReasonOfTheEntry(PlanObjective objective, double runnerUpAccuracy, double scienceWeight = 1)
    {
        var units = new[]
        {
            new PlanningUnit("quick", "Quick-100", "Site A", 100, new SecondsWindow(0, 7200), 7200, 10),
            new PlanningUnit("sharp", "Sharp-4000", "Site B", 4000, new SecondsWindow(0, 7200), 7200, 300),
        };
        var options = new[]
        {
            new PlanOption(0, 0, new SecondsWindow(0, 7200), [new ExposureLevel(10, 300, 600, 0.60, 1.0, 0.50)], 1.2, 17),
            new PlanOption(0, 1, new SecondsWindow(0, 7200), [new ExposureLevel(10, 1500, 1800, runnerUpAccuracy, 1.2, 0.70)], 1.2, 17),
        };
        var problem = new PlanningProblem(DateTimeOffset.UnixEpoch, units, [new PlanningCandidate("c", scienceWeight)], options, objective);
        var outcome = new PlanOutcome([new PlannedObservation(0, 0, 0)], PlanStatus.Heuristic, 0.5, null, [null, 0.4], 2, 2, []);
        return Assert.Single(PlanReport.Build(problem, outcome).Spectrographs[0].Queue).Reason;
    }

    [Fact]
    public void Reason_RunnerUpWorthMoreButLessAccurate_SaysWorthMoreNotANegativeAccuracy()
    {
        var reason = ReasonOfTheEntry(PlanObjective.Identification, 0.50);

        Assert.DoesNotContain("would add -", reason, StringComparison.Ordinal);
        // 0.70 − 0.50 = 0.200 more value; its 30 min at 0.4 per hour are worth 0.200 elsewhere.
        Assert.Contains("Sharp-4000 would be worth 0.200 more (A=0.50) but needs 30 min of its time, worth 0.200 elsewhere tonight", reason, StringComparison.Ordinal);
        Assert.Contains("value 0.500 (expected correct identifications at posterior ≥ 0.9, a follow-up included)", reason, StringComparison.Ordinal);
    }

    [Theory]
    // The option's value (0.50) already carries the candidate's science weight, as the problem builder makes it
    // (weight × the unweighted value): the reason splits it so that a value above 1 is not read as more than one
    // identification of one candidate.
    [InlineData(PlanObjective.Identification, "value 0.500 (science weight 2.5 × 0.200 expected correct identifications at posterior ≥ 0.9, a follow-up included)")]
    [InlineData(PlanObjective.Accuracy, "value 0.500 (science weight 2.5 × 0.200)")]
    public void Reason_WeightedCandidate_SplitsTheValueIntoWeightAndWhatItCounts(PlanObjective objective, string expected)
    {
        var reason = ReasonOfTheEntry(objective, 0.50, scienceWeight: 2.5);

        Assert.Contains(expected, reason, StringComparison.Ordinal);
    }

    [Fact]
    public void Reason_RunnerUpMoreAccurate_SaysTheAccuracyItWouldAdd()
    {
        var reason = ReasonOfTheEntry(PlanObjective.Accuracy, 0.80);

        Assert.Contains("Sharp-4000 would add 0.20 accuracy (value +0.200)", reason, StringComparison.Ordinal);
        Assert.DoesNotContain("expected correct identifications", reason, StringComparison.Ordinal);
    }

    [Fact]
    public void WithKept_AnEntryKeptByTwoReplans_SaysSoOnce()
    {
        var t0 = new DateTimeOffset(2030, 3, 14, 23, 0, 0, TimeSpan.Zero);
        var entry = new QueueEntry("c", t0, t0.AddMinutes(20), 900, 1.2, 18, 10, 0.7, 0.5, 0.7, "A=0.70 on unit u.", [], null, 0);
        var plan = new NightPlan(NightPlan.AdvisoryStatement, PlanObjective.Identification,
            [new SpectrographQueue("u", "unit u", "Site", 100, 3600, 0, 10, null, [])], [],
            new PlanSummary(1, 0, 0, 0, 0, null, null, PlanStatus.Feasible, 0, 0, 0), []);

        var once = NightReplan.WithKept(plan, [new UnitEntry("u", entry)]);
        var twice = NightReplan.WithKept(plan, [new UnitEntry("u", once.Spectrographs[0].Queue[0])]);

        Assert.Equal(NightReplan.KeptPrefix + "A=0.70 on unit u.", Assert.Single(twice.Spectrographs[0].Queue).Reason);
    }
}
