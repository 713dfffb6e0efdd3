using System.Globalization;

namespace Triage.Core.Planning;

/// <summary>
/// Turns a solver outcome into the explained <see cref="NightPlan"/>: queues in start order,
/// for each entry its value on every unit that could take it, the runner-up and the loss if
/// moved to the cheapest unit that can see it; for each left-out candidate the reason.
/// </summary>
public static class PlanReport
{
    /// <summary>Builds the explained plan.</summary>
    /// <param name="problem">The problem solved.</param>
    /// <param name="outcome">The solver's outcome.</param>
    /// <param name="airmassAt">Optional: airmass of an option's target at a time (s from epoch); else the option's airmass is shown.</param>
    /// <param name="rejected">Candidates removed by a safety check after solving, with the reason.</param>
    /// <param name="extraNotes">Notes to add (e.g. from the builder).</param>
    public static NightPlan Build(
        PlanningProblem problem,
        PlanOutcome outcome,
        Func<int, double, double>? airmassAt = null,
        IReadOnlyDictionary<int, string>? rejected = null,
        IEnumerable<string>? extraNotes = null)
    {
        ArgumentNullException.ThrowIfNull(problem);
        ArgumentNullException.ThrowIfNull(outcome);
        var bestPerCandidateUnit = BestLevels(problem);
        var byUnit = outcome.Observations.GroupBy(o => problem.Options[o.Option].Unit).ToDictionary(g => g.Key, g => g.OrderBy(o => o.StartSeconds).ToList());
        var assigned = new HashSet<int>();
        var queues = new List<SpectrographQueue>();
        double correct = 0, bits = 0, totalCost = 0, objective = 0;

        for (var u = 0; u < problem.Units.Count; u++)
        {
            var unit = problem.Units[u];
            var entries = new List<QueueEntry>();
            double used = 0;
            foreach (var obs in byUnit.GetValueOrDefault(u) ?? [])
            {
                var option = problem.Options[obs.Option];
                var level = option.Levels[obs.Level];
                assigned.Add(option.Candidate);
                used += level.DurationSeconds;
                correct += level.ExpectedAccuracy;
                bits += level.InformationBits;
                objective += problem.NetValue(option, level);
                var airmass = airmassAt?.Invoke(obs.Option, obs.StartSeconds + level.DurationSeconds / 2) ?? option.Airmass;
                entries.Add(Entry(problem, bestPerCandidateUnit, obs, option, level, airmass));
            }

            var cost = problem.Cost(u, used);
            totalCost += cost;
            queues.Add(new SpectrographQueue(unit.Id, unit.Name, unit.SiteName, unit.ResolvingPower, unit.BudgetSeconds, used, cost,
                u < outcome.MarginalValuePerHour.Count ? outcome.MarginalValuePerHour[u] : null, entries));
        }

        var unassigned = new List<UnassignedCandidate>();
        for (var c = 0; c < problem.Candidates.Count; c++)
        {
            if (!assigned.Contains(c))
            {
                unassigned.Add(Unassigned(problem, outcome, bestPerCandidateUnit, c, rejected));
            }
        }

        double? gap = outcome.Bound is { } b && b > 1e-12 ? Math.Clamp((b - objective) / b, 0, 1) : outcome.Bound is not null ? 0 : null;
        var summary = new PlanSummary(problem.Candidates.Count, assigned.Count, correct, bits, objective, outcome.Bound, gap,
            outcome.Status, totalCost, outcome.ChoicesBeforePruning, outcome.ChoicesAfterPruning);
        return new NightPlan(NightPlan.AdvisoryStatement, problem.Objective, queues, unassigned, summary,
            outcome.Notes.Concat(extraNotes ?? []).ToArray());
    }

    // Per candidate, per unit: the level with the best net value over all windows.
    private static Dictionary<int, List<(int Unit, PlanOption Option, ExposureLevel Level, double Net)>> BestLevels(PlanningProblem problem)
    {
        var result = new Dictionary<int, List<(int, PlanOption, ExposureLevel, double)>>();
        foreach (var option in problem.Options)
        {
            foreach (var level in option.Levels)
            {
                var net = problem.NetValue(option, level);
                if (level.DurationSeconds > option.Window.LengthSeconds + 1e-6)
                {
                    continue;
                }

                var list = result.TryGetValue(option.Candidate, out var l) ? l : result[option.Candidate] = [];
                var at = list.FindIndex(x => x.Item1 == option.Unit);
                if (at < 0)
                {
                    list.Add((option.Unit, option, level, net));
                }
                else if (net > list[at].Item4)
                {
                    list[at] = (option.Unit, option, level, net);
                }
            }
        }

        return result;
    }

    private static QueueEntry Entry(
        PlanningProblem problem,
        Dictionary<int, List<(int Unit, PlanOption Option, ExposureLevel Level, double Net)>> best,
        PlannedObservation obs, PlanOption option, ExposureLevel level, double airmass)
    {
        var here = problem.Units[option.Unit];
        var alternatives = (best.GetValueOrDefault(option.Candidate) ?? [])
            .OrderByDescending(a => a.Net).ThenBy(a => a.Unit)
            .Select(a => (a.Unit, Alt: new UnitAlternative(problem.Units[a.Unit].Id, problem.Units[a.Unit].Name, problem.Units[a.Unit].ResolvingPower,
                a.Level.ExpectedAccuracy, a.Level.Value, a.Level.DurationSeconds, problem.Units[a.Unit].CostPerHour)))
            .ToList();
        var runnerUp = alternatives.FirstOrDefault(a => a.Unit != option.Unit);
        var cheapest = alternatives.OrderBy(a => a.Alt.CostPerHour).ThenByDescending(a => a.Alt.Value).FirstOrDefault();
        var loss = cheapest.Alt is null || cheapest.Unit == option.Unit ? 0 : level.Value - cheapest.Alt.Value;

        var inv = CultureInfo.InvariantCulture;
        var reason = string.Create(inv, $"A={level.ExpectedAccuracy:F2} at S/N {level.Snr:F0} on {here.Name} (R={here.ResolvingPower:F0}), value {level.Value:F3}");
        if (level.Explanation is { } why)
        {
            reason += "; " + why;
        }
        reason += runnerUp.Alt is null
            ? "; no other unit can take it"
            : string.Create(inv, $"; runner-up {runnerUp.Alt.Name} A={runnerUp.Alt.ExpectedAccuracy:F2} value {runnerUp.Alt.Value:F3}");
        if (cheapest.Alt is not null && cheapest.Unit != option.Unit)
        {
            reason += string.Create(inv, $"; moving it to the cheapest unit that sees it ({cheapest.Alt.Name}) would lose {loss:F3}");
        }

        var start = problem.EpochUtc.AddSeconds(obs.StartSeconds);
        return new QueueEntry(problem.Candidates[option.Candidate].Id, start, start.AddSeconds(level.DurationSeconds), level.ExposureSeconds,
            airmass, option.PredictedMagnitude, level.Snr, level.ExpectedAccuracy, level.InformationBits, level.Value, reason + ".",
            alternatives.Select(a => a.Alt).ToArray(), runnerUp.Alt?.SpectrographId, loss);
    }

    private static UnassignedCandidate Unassigned(
        PlanningProblem problem, PlanOutcome outcome,
        Dictionary<int, List<(int Unit, PlanOption Option, ExposureLevel Level, double Net)>> best,
        int c, IReadOnlyDictionary<int, string>? rejected)
    {
        var candidate = problem.Candidates[c];
        var inv = CultureInfo.InvariantCulture;
        if (rejected is not null && rejected.TryGetValue(c, out var why))
        {
            return new UnassignedCandidate(candidate.Id, UnassignedReason.SafetyRejected, why, null, null, null, null);
        }

        var list = best.GetValueOrDefault(c);
        if (list is null || list.Count == 0)
        {
            return candidate.Standing switch
            {
                CandidateStanding.TooFaint => new UnassignedCandidate(candidate.Id, UnassignedReason.TooFaint,
                    "Visible, but no unit reaches the lowest calibrated S/N within its exposure limit and visibility window.", null, null, null, null),
                _ => new UnassignedCandidate(candidate.Id, UnassignedReason.NeverVisible,
                    "Never above the altitude, airmass, Sun and Moon limits of an open unit during its dark window.", null, null, null, null),
            };
        }

        var top = list.MaxBy(x => x.Net);
        var unit = problem.Units[top.Unit];
        var lambda = top.Unit < outcome.MarginalValuePerHour.Count ? outcome.MarginalValuePerHour[top.Unit] : null;
        double? timeValue = lambda is { } l ? l * top.Level.DurationSeconds / 3600.0 : null;
        string detail;
        if (top.Net <= 0)
        {
            detail = string.Create(inv, $"Its best value ({top.Level.Value:F3} on {unit.Name}) does not cover the price of the {top.Level.DurationSeconds:F0} s it needs.");
        }
        else if (timeValue is { } tv && tv >= top.Net)
        {
            detail = string.Create(inv, $"Outbid: its best option ({unit.Name}, value {top.Net:F3}) needs {top.Level.DurationSeconds:F0} s, worth {tv:F3} at the marginal value of time there ({lambda:F3} per hour).");
        }
        else
        {
            detail = string.Create(inv, $"Outbid: while it is visible, the units that can take it ({string.Join(", ", list.Select(x => problem.Units[x.Unit].Name))}) are busy with observations worth more; best value {top.Net:F3} on {unit.Name}.");
        }

        return new UnassignedCandidate(candidate.Id, UnassignedReason.Outbid, detail, top.Level.Value, unit.Id, top.Level.DurationSeconds, timeValue);
    }
}
