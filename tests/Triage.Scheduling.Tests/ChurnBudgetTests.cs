using Triage.Core.Planning;

namespace Triage.Scheduling.Tests;

/// <summary>
/// A replan changes at most its churn budget of the previous version (anchors not kept + candidates added), however
/// much more valuable the news is, and within the budget it still takes the best changes.
/// </summary>
public class ChurnBudgetTests
{
    // One unit with four hours; the previous version filled them with eight half-hour entries worth 1 each (anchors
    // A0…A7, back to back). Eight new candidates N0…N7 are worth 3 each for the same half hour anywhere in the night.
    // Unlimited, the solver swaps every anchor for a new candidate: 8 × 3 = 24 against 8 × 1.1 = 8.8 kept.
    // With a budget of k changes, one swap costs two (an anchor dropped, a candidate added): ⌊k/2⌋ swaps.
    private static PlanningProblem Replan(int? budget, int anchorsOutOfReach = 0)
    {
        static ExposureLevel Level(double value) => new(10, 1800, 1800, value, value, value);
        var candidates = Enumerable.Range(0, 8).Select(i => new PlanningCandidate($"A{i}", 1))
            .Concat(Enumerable.Range(0, 8).Select(i => new PlanningCandidate($"N{i}", 1))).ToArray();
        // The last anchorsOutOfReach anchors' candidates can now only be observed before 3 h (their previous start is
        // later): those anchors cannot be kept, a change no plan avoids.
        var options = Enumerable.Range(0, 8).Select(i => new PlanOption(i, 0, new SecondsWindow(0, i >= 8 - anchorsOutOfReach ? 10800 : 14400), [Level(1.0)], 1.1, 17))
            .Concat(Enumerable.Range(0, 8).Select(i => new PlanOption(8 + i, 0, new SecondsWindow(0, 14400), [Level(3.0)], 1.1, 17)))
            .ToArray();
        return new PlanningProblem(DateTimeOffset.UnixEpoch,
            [new PlanningUnit("u", "u", "s", 1000, new SecondsWindow(0, 14400), 14400, 0)], candidates, options, PlanObjective.Accuracy)
        {
            Anchors = Enumerable.Range(0, 8).Select(i => new PlanAnchor(i, 0, 1800 * i, 1800)).ToArray(),
            ChurnBudget = budget,
        };
    }

    private static (int KeptAnchors, int Added, double Objective) Outcome(PlanningProblem problem, SolverSettings settings)
    {
        var outcome = NightPlanner.Solve(problem, settings);
        var placed = outcome.Observations.Select(o => (Candidate: problem.Options[o.Option].Candidate, o.StartSeconds)).ToList();
        var kept = placed.Count(p => p.Candidate < 8 && p.StartSeconds == 1800 * p.Candidate);
        return (kept, placed.Count(p => p.Candidate >= 8), outcome.Objective);
    }

    public static TheoryData<int?, bool> Budgets => new()
    {
        { null, false }, { 0, false }, { 1, false }, { 3, false }, { 6, false }, { 3, true }, { 6, true },
    };

    [Theory]
    [MemberData(nameof(Budgets))]
    public void Replan_StaysWithinItsChurnBudget_AndTakesTheBestSwapsInsideIt(int? budget, bool heuristicOnly)
    {
        var problem = Replan(budget);
        var settings = new SolverSettings { Deterministic = true, HeuristicOnly = heuristicOnly };

        var (kept, added, objective) = Outcome(problem, settings);

        var changes = 8 - kept + added;
        if (budget is { } k)
        {
            Assert.True(changes <= k, $"{changes} changes against a budget of {k}");
            if (!heuristicOnly)
            {
                // CP-SAT inside the budget: ⌊k/2⌋ swaps, each worth 3 − 1 more.
                Assert.Equal(8 + 2.0 * (k / 2), objective, 6);
            }
            else
            {
                // The heuristic falls back to the previous version kept whole, which is always within the budget.
                Assert.True(objective >= 8 - 1e-9);
            }
        }
        else
        {
            Assert.Equal(8, added);
            Assert.Equal(24, objective, 6);
        }
    }

    [Theory]
    [InlineData(4, false)]
    [InlineData(4, true)]
    [InlineData(6, false)]
    public void Replan_ChangesNoPlanCanAvoid_UseUpTheBudgetFirst(int budget, bool heuristicOnly)
    {
        // A6 and A7 can no longer be kept where they were: two changes before the solver chooses any. A scheduler sees
        // those too, so at most budget − 2 more may be chosen.
        var problem = Replan(budget, anchorsOutOfReach: 2);
        var settings = new SolverSettings { Deterministic = true, HeuristicOnly = heuristicOnly };

        var (kept, added, objective) = Outcome(problem, settings);

        var changes = 8 - kept + added;
        Assert.True(changes <= budget, $"{changes} changes against a budget of {budget}");
        Assert.True(kept <= 6);
        if (!heuristicOnly)
        {
            // The best use of what is left: two new candidates in the hour A6 and A7 leave free (two changes), then
            // swaps of two changes each: budget 4 → 2 added, 6 → 3 added, and every allowed change used.
            Assert.Equal(2 + (budget - 4) / 2, added);
            Assert.Equal(budget, changes);
        }
    }

    [Theory]
    [InlineData(0, 1)]   // nothing ahead: one change is always allowed
    [InlineData(5, 1)]   // fewer than 10 ahead: still one (then more than 10 % of them)
    [InlineData(10, 1)]  // 10 ahead: one change is exactly 10 %, so fewer than 10 % allows none; one is the floor
    [InlineData(11, 1)]
    [InlineData(20, 1)]  // two would be exactly 10 %
    [InlineData(21, 2)]
    [InlineData(130, 12)]
    [InlineData(131, 13)]
    public void ChurnBudget_IsTheMostChangesBelowTheShare_AtLeastOne(int ahead, int expected)
    {
        var entry = new QueueEntry("c", DateTimeOffset.UnixEpoch, DateTimeOffset.UnixEpoch.AddMinutes(10), 600, 1.2, 18, 10, 0.5, 1, 0.5, "", [], null, 0);
        var kept = Enumerable.Range(0, ahead / 3).Select(_ => new UnitEntry("u", entry)).ToList();
        var anchors = Enumerable.Range(0, ahead - kept.Count).Select(i => new PreviousAssignment($"c{i}", "u", DateTimeOffset.UnixEpoch, 600)).ToList();
        var start = new ReplanStart(kept, anchors, new Dictionary<Guid, DateTimeOffset>());

        Assert.Equal(expected, NightReplan.ChurnBudget(start));
        Assert.True(expected == 1 || expected < 0.1 * ahead);
    }
}
