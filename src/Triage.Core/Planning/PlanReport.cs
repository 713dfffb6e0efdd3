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
    /// <param name="sky">Optional: the built night, for positions, airmass at start and end and the Moon's distance.</param>
    public static NightPlan Build(
        PlanningProblem problem,
        PlanOutcome outcome,
        Func<int, double, double>? airmassAt = null,
        IReadOnlyDictionary<int, string>? rejected = null,
        IEnumerable<string>? extraNotes = null,
        PlanningNight? sky = null)
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
                var entry = Entry(problem, outcome, bestPerCandidateUnit, obs, option, level, airmass);
                if (sky is not null)
                {
                    var position = sky.PositionOf(option.Candidate);
                    entry = entry with
                    {
                        RaDeg = position.RaDeg,
                        DecDeg = position.DecDeg,
                        AirmassStart = sky.AirmassAt(obs.Option, obs.StartSeconds),
                        AirmassEnd = sky.AirmassAt(obs.Option, obs.StartSeconds + level.DurationSeconds),
                        MoonSeparationDeg = sky.MoonSeparationAt(obs.Option, obs.StartSeconds + level.DurationSeconds / 2),
                    };
                }

                entries.Add(entry);
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
        PlanOutcome outcome,
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
        var loss = cheapest.Alt is null || cheapest.Unit == option.Unit ? 0 : Math.Max(0, level.Value - cheapest.Alt.Value);
        var kept = problem.Anchors.Any(a => a.Candidate == option.Candidate && a.Unit == option.Unit && Math.Abs(a.StartSeconds - obs.StartSeconds) < 60);
        var count = Math.Max(1, level.ExposureCount);
        var reason = Explain(problem, outcome, option, level, runnerUp.Unit, runnerUp.Alt, cheapest.Unit, cheapest.Alt, loss, kept);
        var start = problem.EpochUtc.AddSeconds(obs.StartSeconds);
        return new QueueEntry(problem.Candidates[option.Candidate].Id, start, start.AddSeconds(level.DurationSeconds), level.ExposureSeconds,
            airmass, option.PredictedMagnitude, level.Snr, level.ExpectedAccuracy, level.InformationBits, level.Value, reason,
            alternatives.Select(a => a.Alt).ToArray(), runnerUp.Alt?.SpectrographId, loss)
        {
            ExposureCount = count,
            IfMissed = IfMissed(problem, option.Candidate, obs.StartSeconds + level.DurationSeconds),
            KeptFromPrevious = kept,
        };
    }

    // One sentence: what the observation buys here, why this unit beat the runner-up (in the runner-up's own terms:
    // more value but more time, whose worth elsewhere is the LP dual of that unit's time), and what the cheapest unit
    // would give up. Never a negative loss.
    private static string Explain(
        PlanningProblem problem, PlanOutcome outcome, PlanOption option, ExposureLevel level,
        int runnerUnit, UnitAlternative? runnerUp, int cheapUnit, UnitAlternative? cheapest, double loss, bool kept)
    {
        var inv = CultureInfo.InvariantCulture;
        var here = problem.Units[option.Unit];
        var text = string.Create(inv,
            $"A={level.ExpectedAccuracy:F2} at S/N {level.Snr:F0} per resolution element on {here.Name} (R={here.ResolvingPower:F0}) in {level.DurationSeconds / 60:F0} min, value {level.Value:F3}");
        // Say what the value counts, once: a science weight other than 1 multiplies it, so a value above 1 is never read as
        // more than one identification of one candidate.
        double weight = problem.Candidates[option.Candidate].ScienceWeight;
        bool weighted = Math.Abs(weight - 1) > 1e-9 && weight > 0;
        if (problem.Objective == PlanObjective.Identification)
        {
            text += weighted
                ? string.Create(inv, $" (science weight {weight:0.##} × {level.Value / weight:F3} expected correct identifications at posterior ≥ {problem.IdentificationConfidence:0.##}, a follow-up included)")
                : string.Create(inv, $" (expected correct identifications at posterior ≥ {problem.IdentificationConfidence:0.##}, a follow-up included)");
        }
        else if (weighted)
        {
            text += string.Create(inv, $" (science weight {weight:0.##} × {level.Value / weight:F3})");
        }

        if (level.Explanation is { } why)
        {
            text += "; " + why;
        }

        if (runnerUp is null)
        {
            text += "; no other unit can take it tonight";
        }
        else if (runnerUp.Value <= level.Value + 1e-9)
        {
            text += string.Create(inv, $"; {here.Name} beats the runner-up {runnerUp.Name} (A={runnerUp.ExpectedAccuracy:F2}, value {runnerUp.Value:F3})");
            if (runnerUp.DurationSeconds < level.DurationSeconds)
            {
                text += string.Create(inv, $" although {runnerUp.Name} would need only {runnerUp.DurationSeconds / 60:F0} min");
            }
        }
        else
        {
            var gain = runnerUp.Value - level.Value;
            var lambda = runnerUnit < outcome.MarginalValuePerHour.Count ? outcome.MarginalValuePerHour[runnerUnit] : null;
            // Under the identification and information objectives more value need not mean more accuracy.
            var moreAccuracy = runnerUp.ExpectedAccuracy - level.ExpectedAccuracy;
            text += moreAccuracy >= 0.005
                ? string.Create(inv, $"; {runnerUp.Name} would add {moreAccuracy:F2} accuracy (value +{gain:F3}) but needs {runnerUp.DurationSeconds / 60:F0} min of its time")
                : string.Create(inv, $"; {runnerUp.Name} would be worth {gain:F3} more (A={runnerUp.ExpectedAccuracy:F2}) but needs {runnerUp.DurationSeconds / 60:F0} min of its time");
            text += lambda is { } l && l * runnerUp.DurationSeconds / 3600 > 1e-9
                ? string.Create(inv, $", worth {l * runnerUp.DurationSeconds / 3600:F3} elsewhere tonight ({l:F3} per hour there)")
                : ", and its time tonight is filled by observations that cannot move";
        }

        if (cheapest is not null && cheapUnit != option.Unit && cheapUnit != runnerUnit && loss > 0)
        {
            text += string.Create(inv, $"; on the cheapest unit that sees it ({cheapest.Name}) it would yield {loss:F3} less");
        }

        if (kept)
        {
            text += "; kept where the previous version had it";
        }

        return text + ".";
    }

    // The best observation of the candidate that can still start after the missed slot ends: any unit, any window.
    private static MissedSlotAdvice? IfMissed(PlanningProblem problem, int candidate, double afterSeconds)
    {
        MissedSlotAdvice? best = null;
        foreach (var option in problem.Options.Where(o => o.Candidate == candidate))
        {
            foreach (var level in option.Levels)
            {
                var earliest = Math.Max(option.Window.FromSeconds, afterSeconds);
                var latest = option.Window.ToSeconds - level.DurationSeconds;
                var net = problem.NetValue(option, level);
                if (latest < earliest || net <= 0 || (best is not null && net <= best.Value))
                {
                    continue;
                }

                var unit = problem.Units[option.Unit];
                best = new MissedSlotAdvice(unit.Id, unit.Name, problem.EpochUtc.AddSeconds(earliest), problem.EpochUtc.AddSeconds(latest), level.ExposureSeconds, net);
            }
        }

        return best;
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
                    "Too faint: visible, but no unit reaches the lowest calibrated S/N even in the longest observation allowed.", null, null, null, null),
                CandidateStanding.WindowTooShort => new UnassignedCandidate(candidate.Id, UnassignedReason.WindowTooShort,
                    "Window too short: a unit could reach the lowest calibrated S/N, but not within any of its visibility windows tonight.", null, null, null, null),
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
