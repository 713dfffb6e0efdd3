namespace Triage.Core.Planning;

/// <summary>
/// Two rules a scheduler would apply without Triage, on the same options, windows and budgets:
/// brightest first onto the largest telescope, and science priority filling the highest-R unit
/// first. Both take the exposure level nearest S/N 10 (a common fixed target) and the earliest free start.
/// </summary>
public static class BaselineSchedulers
{
    private const double TargetSnr = 10;

    /// <summary>Brightest candidate first; units tried from the largest aperture down.</summary>
    /// <param name="problem">The night's problem.</param>
    /// <param name="apertureByUnitId">Telescope aperture (m) of every unit id.</param>
    public static IReadOnlyList<PlannedObservation> BrightestFirstLargestTelescope(PlanningProblem problem, IReadOnlyDictionary<string, double> apertureByUnitId)
    {
        var candidateOrder = Enumerable.Range(0, problem.Candidates.Count)
            .OrderBy(c => problem.Options.Where(o => o.Candidate == c).Select(o => o.PredictedMagnitude).DefaultIfEmpty(double.PositiveInfinity).Min())
            .ThenBy(c => c);
        var unitOrder = Enumerable.Range(0, problem.Units.Count).OrderByDescending(u => apertureByUnitId[problem.Units[u].Id]).ToArray();
        return Fill(problem, candidateOrder, unitOrder);
    }

    /// <summary>Highest science weight first (then brightest); units tried from the highest R down.</summary>
    /// <param name="problem">The night's problem.</param>
    public static IReadOnlyList<PlannedObservation> PriorityHighestResolutionFirst(PlanningProblem problem)
    {
        var candidateOrder = Enumerable.Range(0, problem.Candidates.Count)
            .OrderByDescending(c => problem.Candidates[c].ScienceWeight)
            .ThenBy(c => problem.Options.Where(o => o.Candidate == c).Select(o => o.PredictedMagnitude).DefaultIfEmpty(double.PositiveInfinity).Min())
            .ThenBy(c => c);
        var unitOrder = Enumerable.Range(0, problem.Units.Count).OrderByDescending(u => problem.Units[u].ResolvingPower).ToArray();
        return Fill(problem, candidateOrder, unitOrder);
    }

    private static IReadOnlyList<PlannedObservation> Fill(PlanningProblem problem, IEnumerable<int> candidateOrder, int[] unitOrder)
    {
        var model = PlanningModel.Compile(problem, new PlanningSettings
        {
            UnitsKeptByValue = int.MaxValue,
            UnitsKeptByDensity = 0,
            LevelsKeptPerOption = int.MaxValue,
        });
        var byCandidate = Enumerable.Range(0, model.Choices.Count).GroupBy(i => model.Choices[i].Candidate).ToDictionary(g => g.Key, g => g.ToArray());
        var state = new GreedyPlanner.PlacementState(model);
        foreach (var c in candidateOrder)
        {
            if (!byCandidate.TryGetValue(c, out var choices))
            {
                continue;
            }

            foreach (var u in unitOrder)
            {
                var onUnit = choices.Where(i => model.Choices[i].Unit == u).ToArray();
                if (onUnit.Length == 0)
                {
                    continue;
                }

                var snr = onUnit.Select(i => problem.Options[model.Choices[i].Option].Levels[model.Choices[i].Level].Snr)
                    .OrderBy(s => Math.Abs(Math.Log(s / TargetSnr))).First();
                var placed = onUnit
                    .Where(i => problem.Options[model.Choices[i].Option].Levels[model.Choices[i].Level].Snr == snr)
                    .OrderBy(i => model.Choices[i].EarliestTick)
                    .Any(state.TryPlace);
                if (placed)
                {
                    break;
                }
            }
        }

        return model.ToObservations(state.Placed);
    }
}
