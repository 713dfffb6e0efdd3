namespace Triage.Core.Planning;

/// <summary>
/// An independent check of a plan against the problem's hard rules: each observation inside its
/// option's window and its unit's availability, no overlap on a unit, budgets, the cost cap, and
/// at most one observation per candidate. Used after every solve and by the tests.
/// </summary>
public static class PlanValidator
{
    private const double ToleranceSeconds = 1e-6;

    /// <summary>Lists every rule the observations break (empty when the plan is valid).</summary>
    public static IReadOnlyList<string> Violations(PlanningProblem problem, IReadOnlyList<PlannedObservation> observations)
    {
        ArgumentNullException.ThrowIfNull(problem);
        ArgumentNullException.ThrowIfNull(observations);
        var violations = new List<string>();
        var seen = new HashSet<int>();
        var perUnit = new List<(double Start, double End, string Candidate)>[problem.Units.Count];
        var totalCost = 0.0;
        foreach (var obs in observations)
        {
            if (obs.Option < 0 || obs.Option >= problem.Options.Count || obs.Level < 0 || obs.Level >= problem.Options[obs.Option].Levels.Count)
            {
                violations.Add($"Observation refers to option {obs.Option} level {obs.Level}, which does not exist.");
                continue;
            }

            var option = problem.Options[obs.Option];
            var level = option.Levels[obs.Level];
            var unit = problem.Units[option.Unit];
            var id = problem.Candidates[option.Candidate].Id;
            var end = obs.StartSeconds + level.DurationSeconds;
            if (!seen.Add(option.Candidate))
            {
                violations.Add($"Candidate {id} is planned more than once.");
            }

            if (obs.StartSeconds < option.Window.FromSeconds - ToleranceSeconds || end > option.Window.ToSeconds + ToleranceSeconds)
            {
                violations.Add($"Candidate {id} on {unit.Name} runs {obs.StartSeconds:F0}–{end:F0} s, outside its window {option.Window.FromSeconds:F0}–{option.Window.ToSeconds:F0} s.");
            }

            if (obs.StartSeconds < unit.Available.FromSeconds - ToleranceSeconds || end > unit.Available.ToSeconds + ToleranceSeconds)
            {
                violations.Add($"Candidate {id} on {unit.Name} lies outside the unit's dark window.");
            }

            (perUnit[option.Unit] ??= []).Add((obs.StartSeconds, end, id));
            totalCost += problem.Cost(option.Unit, level.DurationSeconds);
        }

        for (var u = 0; u < perUnit.Length; u++)
        {
            var list = perUnit[u];
            if (list is null)
            {
                continue;
            }

            list.Sort((a, b) => a.Start.CompareTo(b.Start));
            for (var i = 1; i < list.Count; i++)
            {
                if (list[i].Start < list[i - 1].End - ToleranceSeconds)
                {
                    violations.Add($"{problem.Units[u].Name}: {list[i - 1].Candidate} and {list[i].Candidate} overlap.");
                }
            }

            var used = list.Sum(x => x.End - x.Start);
            if (used > problem.Units[u].BudgetSeconds + ToleranceSeconds)
            {
                violations.Add($"{problem.Units[u].Name}: {used:F0} s planned exceeds the budget of {problem.Units[u].BudgetSeconds:F0} s.");
            }
        }

        if (problem.NetworkCostCap is { } cap && totalCost > cap + 1e-9)
        {
            violations.Add($"Plan costs {totalCost:F3}, above the network cap of {cap:F3}.");
        }

        return violations;
    }
}
