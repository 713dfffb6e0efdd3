using Triage.Core.Planning;

namespace Triage.Scheduling.Tests;

/// <summary>
/// A test-side oracle of the hard rules, written without the production validator: a plan that
/// passes here has no overlap, stays in its windows and respects budgets, cost cap and "once".
/// </summary>
internal static class PlanChecks
{
    public static void AssertFeasible(PlanningProblem problem, IReadOnlyList<PlannedObservation> plan)
    {
        Assert.Equal(plan.Count, plan.Select(o => problem.Options[o.Option].Candidate).Distinct().Count());
        var cost = 0.0;
        foreach (var unitGroup in plan.GroupBy(o => problem.Options[o.Option].Unit))
        {
            var unit = problem.Units[unitGroup.Key];
            var spans = unitGroup
                .Select(o => (Start: o.StartSeconds, End: o.StartSeconds + problem.Options[o.Option].Levels[o.Level].DurationSeconds, o.Option))
                .OrderBy(s => s.Start).ToList();
            for (var i = 0; i < spans.Count; i++)
            {
                var window = problem.Options[spans[i].Option].Window;
                Assert.True(spans[i].Start >= window.FromSeconds - 1e-6 && spans[i].End <= window.ToSeconds + 1e-6, "entry outside its visibility window");
                Assert.True(spans[i].Start >= unit.Available.FromSeconds - 1e-6 && spans[i].End <= unit.Available.ToSeconds + 1e-6, "entry outside the dark window");
                if (i > 0)
                {
                    Assert.True(spans[i].Start >= spans[i - 1].End - 1e-6, $"overlap on {unit.Name}");
                }
            }

            var used = spans.Sum(s => s.End - s.Start);
            Assert.True(used <= unit.BudgetSeconds + 1e-6, $"budget of {unit.Name} exceeded");
            cost += unit.CostPerHour * used / 3600;
        }

        if (problem.NetworkCostCap is { } cap)
        {
            Assert.True(cost <= cap + 1e-9, "network cost cap exceeded");
        }
    }

    public static double Objective(PlanningProblem problem, IEnumerable<PlannedObservation> plan)
        => plan.Sum(o => problem.Options[o.Option].Levels[o.Level].Value
                         - problem.PricePerCostUnit * problem.Units[problem.Options[o.Option].Unit].CostPerHour
                         * problem.Options[o.Option].Levels[o.Level].DurationSeconds / 3600);
}
