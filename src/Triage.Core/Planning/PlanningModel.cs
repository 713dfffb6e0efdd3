// The problem on a time grid of Δ seconds, with pairs that can never be worth it removed:
//   a choice (option o, level ℓ) occupies d = ⌈duration/Δ⌉ ticks and may start at tick
//   t ∈ [⌈from/Δ⌉, ⌊to/Δ⌋ − d], so the whole observation lies inside the option's window;
//   net value v − price·cost must be positive and d·Δ ≤ the unit's budget;
//   on one option a level is kept only if it is worth more than every shorter level
//   (dominated levels go), then at most L levels (the most valuable and the densest);
//   per candidate only the units of its best K choices by value and by value per second stay.
// Rounding durations up and starts inward makes every grid solution feasible in real time.
namespace Triage.Core.Planning;

/// <summary>Settings of the time grid and of pruning.</summary>
public sealed record PlanningSettings
{
    /// <summary>Start-time grid Δ, s. Default 120 (2 minutes): finer grids cost solver time for little value.</summary>
    public double StepSeconds { get; init; } = 120;

    /// <summary>Units kept per candidate ranked by the best net value there. Default 2.</summary>
    public int UnitsKeptByValue { get; init; } = 2;

    /// <summary>Units kept per candidate ranked by net value per second there (the cheap, quick units). Default 2.</summary>
    public int UnitsKeptByDensity { get; init; } = 2;

    /// <summary>Exposure levels kept per option after removing dominated ones. Default 2.</summary>
    public int LevelsKeptPerOption { get; init; } = 2;
}

/// <summary>One surviving (option, level) pair on the grid.</summary>
/// <param name="Option">Index into <see cref="PlanningProblem.Options"/>.</param>
/// <param name="Level">Index into that option's levels.</param>
/// <param name="Candidate">Candidate index.</param>
/// <param name="Unit">Unit index.</param>
/// <param name="DurationTicks">Ticks occupied (duration rounded up).</param>
/// <param name="EarliestTick">First allowed start tick.</param>
/// <param name="LatestTick">Last allowed start tick (≥ earliest).</param>
/// <param name="NetValue">Value − price × cost.</param>
/// <param name="Cost">Cost of the ticks occupied.</param>
public readonly record struct Choice(
    int Option,
    int Level,
    int Candidate,
    int Unit,
    int DurationTicks,
    long EarliestTick,
    long LatestTick,
    double NetValue,
    double Cost);

/// <summary>A chosen observation: a choice and its start tick.</summary>
public readonly record struct PlacedChoice(int ChoiceIndex, long StartTick);

/// <summary>The pruned, discretised problem shared by the heuristic and the solver.</summary>
public sealed class PlanningModel
{
    private PlanningModel(PlanningProblem problem, PlanningSettings settings, Choice[] choices, long[] budgetTicks, int before, int[] anchorChoices)
    {
        AnchorChoices = anchorChoices;
        Problem = problem;
        Settings = settings;
        Choices = choices;
        BudgetTicks = budgetTicks;
        ChoicesBeforePruning = before;
    }

    /// <summary>The problem compiled.</summary>
    public PlanningProblem Problem { get; }

    /// <summary>The grid and pruning settings.</summary>
    public PlanningSettings Settings { get; }

    /// <summary>Surviving choices.</summary>
    public IReadOnlyList<Choice> Choices { get; }

    /// <summary>Indices of the choices that keep an assignment of the previous version (replanning), pinned to its start.</summary>
    public IReadOnlyList<int> AnchorChoices { get; }

    /// <summary>Per unit, the budget in whole ticks.</summary>
    public IReadOnlyList<long> BudgetTicks { get; }

    /// <summary>How many (option, level) pairs there were before pruning.</summary>
    public int ChoicesBeforePruning { get; }

    /// <summary>Grid step Δ, s.</summary>
    public double StepSeconds => Settings.StepSeconds;

    /// <summary>Compiles and prunes a problem.</summary>
    /// <exception cref="ArgumentException">The problem or settings are invalid.</exception>
    public static PlanningModel Compile(PlanningProblem problem, PlanningSettings? settings = null)
    {
        ArgumentNullException.ThrowIfNull(problem);
        settings ??= new PlanningSettings();
        if (!(settings.StepSeconds > 0) || settings.UnitsKeptByValue < 1 || settings.UnitsKeptByDensity < 0 || settings.LevelsKeptPerOption < 1)
        {
            throw new ArgumentException("StepSeconds must be > 0, UnitsKeptByValue and LevelsKeptPerOption ≥ 1.", nameof(settings));
        }

        problem.Validate();
        var step = settings.StepSeconds;
        var budgetTicks = problem.Units.Select(u => (long)Math.Floor(u.BudgetSeconds / step + 1e-9)).ToArray();
        var before = 0;
        var perCandidate = new List<Choice>[problem.Candidates.Count];
        for (var o = 0; o < problem.Options.Count; o++)
        {
            var option = problem.Options[o];
            before += option.Levels.Count;
            var earliest = (long)Math.Ceiling(option.Window.FromSeconds / step - 1e-9);
            var windowEndTick = (long)Math.Floor(option.Window.ToSeconds / step + 1e-9);
            var kept = new List<Choice>();
            foreach (var l in Enumerable.Range(0, option.Levels.Count).OrderBy(l => option.Levels[l].DurationSeconds).ThenByDescending(l => option.Levels[l].Value))
            {
                var level = option.Levels[l];
                var ticks = (int)Math.Ceiling(level.DurationSeconds / step - 1e-9);
                var latest = windowEndTick - ticks;
                var net = problem.NetValue(option, level);
                if (latest < earliest || net <= 0 || ticks > budgetTicks[option.Unit] || (kept.Count > 0 && net <= kept[^1].NetValue))
                {
                    continue;
                }

                kept.Add(new Choice(o, l, option.Candidate, option.Unit, ticks, earliest, latest, net, problem.Cost(option.Unit, ticks * step)));
            }

            if (kept.Count > settings.LevelsKeptPerOption)
            {
                // The most valuable level, then the densest, then the next most valuable.
                var selected = new HashSet<int> { kept.Count - 1 };
                if (settings.LevelsKeptPerOption >= 2)
                {
                    selected.Add(Enumerable.Range(0, kept.Count).MaxBy(i => kept[i].NetValue / kept[i].DurationTicks));
                }

                for (var i = kept.Count - 2; i >= 0 && selected.Count < settings.LevelsKeptPerOption; i--)
                {
                    selected.Add(i);
                }

                kept = kept.Where((_, i) => selected.Contains(i)).ToList();
            }

            (perCandidate[option.Candidate] ??= []).AddRange(kept);
        }

        var choices = new List<Choice>();
        foreach (var list in perCandidate)
        {
            if (list is null || list.Count == 0)
            {
                continue;
            }

            var byUnit = list.GroupBy(c => c.Unit).Select(g => (Unit: g.Key, Best: g.Max(c => c.NetValue), Density: g.Max(c => c.NetValue / c.DurationTicks))).ToList();
            var keepUnits = byUnit.OrderByDescending(u => u.Best).ThenBy(u => u.Unit).Take(settings.UnitsKeptByValue)
                .Concat(byUnit.OrderByDescending(u => u.Density).ThenBy(u => u.Unit).Take(settings.UnitsKeptByDensity))
                .Select(u => u.Unit).ToHashSet();
            choices.AddRange(list.Where(c => keepUnits.Contains(c.Unit)));
        }

        var firstAnchor = choices.Count;
        choices.AddRange(AnchoredChoices(problem, step, budgetTicks));
        return new PlanningModel(problem, settings, choices.ToArray(), budgetTicks, before, Enumerable.Range(firstAnchor, choices.Count - firstAnchor).ToArray());
    }

    // A previous assignment becomes one more choice pinned to its start tick and worth (1 + share) × its net value,
    // at the level whose open-shutter time is closest to the previous one; it is left out when it no longer fits
    // its option's window (closure, the night moved on) or is worth nothing.
    private static IEnumerable<Choice> AnchoredChoices(PlanningProblem problem, double step, long[] budgetTicks)
    {
        if (problem.Anchors.Count == 0)
        {
            return [];
        }

        var byPair = new Dictionary<(int, int), List<int>>();
        for (var o = 0; o < problem.Options.Count; o++)
        {
            var key = (problem.Options[o].Candidate, problem.Options[o].Unit);
            (byPair.TryGetValue(key, out var l) ? l : byPair[key] = []).Add(o);
        }

        var result = new List<Choice>();
        foreach (var a in problem.Anchors)
        {
            var tick = (long)Math.Round(a.StartSeconds / step);
            foreach (var o in byPair.GetValueOrDefault((a.Candidate, a.Unit)) ?? [])
            {
                var option = problem.Options[o];
                var l = Enumerable.Range(0, option.Levels.Count).MinBy(i => Math.Abs(option.Levels[i].ExposureSeconds - a.ExposureSeconds));
                var level = option.Levels[l];
                var ticks = (int)Math.Ceiling(level.DurationSeconds / step - 1e-9);
                var earliest = (long)Math.Ceiling(option.Window.FromSeconds / step - 1e-9);
                var latest = (long)Math.Floor(option.Window.ToSeconds / step + 1e-9) - ticks;
                var net = problem.NetValue(option, level);
                if (tick < earliest || tick > latest || net <= 0 || ticks > budgetTicks[a.Unit])
                {
                    continue;
                }

                result.Add(new Choice(o, l, a.Candidate, a.Unit, ticks, tick, tick, net * (1 + problem.StabilityShare), problem.Cost(a.Unit, ticks * step)));
                break;
            }
        }

        return result;
    }

    /// <summary>
    /// This model with the choices a plan of <paramref name="other"/> (same problem and grid) uses
    /// added, and that plan re-indexed into the result: the solver then starts from a plan found on
    /// a less pruned model and can only keep or improve it.
    /// </summary>
    /// <exception cref="ArgumentException">The models differ in problem or grid.</exception>
    public (PlanningModel Model, IReadOnlyList<PlacedChoice> Plan) WithChoicesOf(PlanningModel other, IReadOnlyList<PlacedChoice> plan)
    {
        ArgumentNullException.ThrowIfNull(other);
        ArgumentNullException.ThrowIfNull(plan);
        if (!ReferenceEquals(other.Problem, Problem) || other.StepSeconds != StepSeconds)
        {
            throw new ArgumentException("Both models must compile the same problem on the same grid.", nameof(other));
        }

        var choices = Choices.ToList();
        var index = new Dictionary<Choice, int>(choices.Count);
        for (var i = 0; i < choices.Count; i++)
        {
            index.TryAdd(choices[i], i);
        }

        var mapped = new List<PlacedChoice>(plan.Count);
        foreach (var p in plan)
        {
            var c = other.Choices[p.ChoiceIndex];
            if (!index.TryGetValue(c, out var i))
            {
                i = choices.Count;
                choices.Add(c);
                index[c] = i;
            }

            mapped.Add(new PlacedChoice(i, p.StartTick));
        }

        return (new PlanningModel(Problem, Settings, choices.ToArray(), BudgetTicks.ToArray(), ChoicesBeforePruning, AnchorChoices.ToArray()), mapped);
    }

    /// <summary>
    /// Changes a plan makes to the previous version in the sense of <see cref="PlanningProblem.ChurnBudget"/>: anchor
    /// choices not placed plus placed choices of candidates without an anchor, i.e. |anchor choices| + Σ
    /// <see cref="ChurnWeight"/> over the placed choices. 0 for a first plan.
    /// </summary>
    public int ChangesOf(IEnumerable<PlacedChoice> placed)
    {
        ArgumentNullException.ThrowIfNull(placed);
        return Problem.Anchors.Count == 0 ? 0 : AnchorChoices.Count + placed.Sum(p => ChurnWeight(p.ChoiceIndex));
    }

    /// <summary>
    /// Anchors that no choice can keep as they were (their window closed, their time no longer fits the unit's budget,
    /// or their value fell to nothing): changes to the previous version that the plan cannot avoid.
    /// </summary>
    public int ForcedChanges => Problem.Anchors.Count - AnchorChoices.Count;

    /// <summary>
    /// The changes the plan may still choose under <see cref="PlanningProblem.ChurnBudget"/> (null: unlimited): the
    /// budget less the <see cref="ForcedChanges"/>, which use it up first, since a scheduler sees them as changes too;
    /// but at least one when the budget allows any, so that a valuable arrival or a lost observation can still enter.
    /// </summary>
    public int? ChosenChangeBudget => Problem.ChurnBudget is { } k ? Math.Max(Math.Min(k, 1), k - ForcedChanges) : null;

    /// <summary>
    /// What placing choice <paramref name="index"/> does to the count of changes: −1 for an anchor choice (an anchor
    /// kept), +1 for a choice of a candidate without an anchor (an addition), 0 otherwise (another place for an
    /// anchored candidate, whose change the missing anchor already counts).
    /// </summary>
    public int ChurnWeight(int index)
    {
        _churnWeights ??= ChurnWeights();
        return _churnWeights[index];
    }

    private int[]? _churnWeights;

    private int[] ChurnWeights()
    {
        var anchored = new bool[Problem.Candidates.Count];
        foreach (var a in Problem.Anchors)
        {
            anchored[a.Candidate] = true;
        }

        var weights = Choices.Select(c => anchored[c.Candidate] ? 0 : 1).ToArray();
        foreach (var a in AnchorChoices)
        {
            weights[a] = -1;
        }

        return weights;
    }

    /// <summary>Net value of a set of placed choices.</summary>
    public double ObjectiveOf(IEnumerable<PlacedChoice> placed) => placed.Sum(p => Choices[p.ChoiceIndex].NetValue);

    /// <summary>Converts placed choices into planned observations in real time.</summary>
    public IReadOnlyList<PlannedObservation> ToObservations(IEnumerable<PlacedChoice> placed)
        => placed.Select(p =>
        {
            var c = Choices[p.ChoiceIndex];
            return new PlannedObservation(c.Option, c.Level, p.StartTick * StepSeconds);
        }).OrderBy(o => Problem.Options[o.Option].Unit).ThenBy(o => o.StartSeconds).ToArray();
}

/// <summary>An observation in a plan: which option and level, starting when.</summary>
/// <param name="Option">Index into <see cref="PlanningProblem.Options"/>.</param>
/// <param name="Level">Index into the option's levels.</param>
/// <param name="StartSeconds">Start, s from the problem's epoch.</param>
public readonly record struct PlannedObservation(int Option, int Level, double StartSeconds);
