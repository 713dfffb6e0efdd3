// The night plan as a CP-SAT model [1, 2]: for every surviving choice j (candidate, unit,
// window, exposure level) a literal pⱼ and an optional interval [sⱼ, sⱼ + dⱼ) with
// sⱼ ∈ [earliestⱼ, latestⱼ] on a grid of Δ seconds;
//   Σ_{j∈c} pⱼ ≤ 1 (each candidate),  NoOverlap{intervals of unit u},  Σ_{j∈u} dⱼ pⱼ ≤ budgetᵤ,
//   Σⱼ ⌈costⱼ⌉ pⱼ ≤ cap,   maximise Σⱼ round(S·(vⱼ − price·costⱼ)) pⱼ.
// Warm start: the best greedy plan (density, value, and priced by the LP duals of
// CapacityRelaxation) over every choice, improved by ruin and recreate (NeighbourhoodSearch);
// CP-SAT works on the pruned choices plus those of the warm start. Bound reported: the LP relaxation over all units (and the solver's own
// bound when pruning dropped nothing), so the gap is honest about pruning too.
//
// References
// [1] L. Perron, F. Didier, CP-SAT, Google OR-Tools (2024), "Scheduling" and "Solution hinting" chapters of the guide.
// [2] P. Baptiste, C. Le Pape, W. Nuijten, Constraint-Based Scheduling, Kluwer 2001, ch. 2 (disjunctive resource).
using System.Diagnostics;
using System.Globalization;
using Google.OrTools.Sat;
using Triage.Core.Planning;

namespace Triage.Scheduling;

/// <summary>Settings of the solver run.</summary>
public sealed record SolverSettings
{
    /// <summary>Wall-clock limit for the whole solve (relaxation, heuristic and CP-SAT), s. Default 4.</summary>
    public double TimeLimitSeconds { get; init; } = 4;

    /// <summary>CP-SAT search workers. Default 2 (the machine's cores).</summary>
    public int Workers { get; init; } = 2;

    /// <summary>
    /// Reproducible run: one worker, fixed seed and a deterministic-time limit instead of wall time,
    /// so the same input always gives the same plan. Default false.
    /// </summary>
    public bool Deterministic { get; init; }

    /// <summary>Deterministic-time limit used when <see cref="Deterministic"/> is set (solver units ≈ s). Default 5.</summary>
    public double DeterministicTimeLimit { get; init; } = 5;

    /// <summary>Random seed of the search. Default 17.</summary>
    public int Seed { get; init; } = 17;

    /// <summary>Skip CP-SAT and return the heuristic plan (greedy, then the local search unless <see cref="LocalSearchRounds"/> is 0). Default false.</summary>
    public bool HeuristicOnly { get; init; }

    /// <summary>
    /// Ruin-and-recreate rounds run on the greedy plan before CP-SAT, per search (one search per
    /// worker, seeds Seed, Seed + 1, …; one search when deterministic). 0: none. Default 20,000
    /// (about a second on the 500-candidate demo night).
    /// </summary>
    public int LocalSearchRounds { get; init; } = 20000;

    /// <summary>
    /// The local search stops when this share of the time limit (counted from the start of the
    /// solve) has passed, if its rounds are not done by then; 0…1. Default 0.6: on large nights
    /// CP-SAT rarely improves the searched plan within the limit, so the search gets the larger share.
    /// </summary>
    public double LocalSearchShare { get; init; } = 0.6;

    /// <summary>Time grid and pruning.</summary>
    public PlanningSettings Planning { get; init; } = new();
}

/// <summary>Plans a night: LP bound, greedy warm start, CP-SAT, independent validation.</summary>
public static class NightPlanner
{
    private const double ValueScale = 1e6;
    private const double CostScale = 1e4;
    private const double ModelSecondsPerChoice = 4e-5;
    private const double MinimumSearchSeconds = 0.3;
    private const int LargeModelChoices = 5000;

    /// <summary>Solves <paramref name="problem"/> and returns the raw outcome (see <see cref="PlanReport"/> to explain it).</summary>
    /// <exception cref="ArgumentException">The problem or settings are invalid.</exception>
    public static PlanOutcome Solve(PlanningProblem problem, SolverSettings? settings = null, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(problem);
        settings ??= new SolverSettings();
        if (!(settings.TimeLimitSeconds > 0) || settings.Workers < 1 || !(settings.LocalSearchShare is >= 0 and <= 1))
        {
            throw new ArgumentException("TimeLimitSeconds must be > 0, Workers ≥ 1 and LocalSearchShare in [0, 1].", nameof(settings));
        }

        var clock = Stopwatch.StartNew();
        var notes = new List<string>();
        var unpruned = settings.Planning with
        {
            UnitsKeptByValue = int.MaxValue,
            UnitsKeptByDensity = 0,
            LevelsKeptPerOption = int.MaxValue,
        };
        var full = PlanningModel.Compile(problem, unpruned);
        var model = PlanningModel.Compile(problem, settings.Planning);
        if (model.Choices.Count == 0)
        {
            return new PlanOutcome([], PlanStatus.Empty, 0, 0, new double?[problem.Units.Count], model.ChoicesBeforePruning, 0, notes);
        }

        var compiled = clock.Elapsed.TotalSeconds;
        // With anchors (replanning) the choices carry a stability bonus: the bound and the marginal values are
        // computed on the plain values, so that they stay honest.
        var relaxation = CapacityRelaxation.Solve(problem.Anchors.Count == 0 ? full : PlanningModel.Compile(problem with { Anchors = [] }, unpruned));
        if (!relaxation.Solved)
        {
            notes.Add("The LP relaxation did not solve; the bound is the sum of each candidate's best value and no marginal values are given.");
        }

        double? bound = relaxation.Bound;
        var marginal = relaxation.MarginalValuePerHour;
        var relaxed = clock.Elapsed.TotalSeconds;
        var prices = marginal.Select(v => v / 3600.0 * model.StepSeconds).ToArray();

        // The heuristics are cheap enough to work on every choice; CP-SAT sees the pruned model plus
        // the choices of their plan, so its hint is feasible and it can only keep or improve it.
        var found = GreedyPlanner.SolveBest(full, prices);
        var firstValue = full.ObjectiveOf(found);
        found = ImproveLocally(full, found, prices, settings, clock, cancellationToken);
        if (full.ChosenChangeBudget is { } churnBudget && full.ChangesOf(found) is var wanted && wanted > churnBudget)
        {
            // The searched plan changes more of the previous version than a replan may: start instead from the
            // previous version kept whole, filled within the budget; CP-SAT then searches inside the budget.
            found = GreedyPlanner.SolveKeepingAnchors(full, churnBudget);
            var forced = full.ForcedChanges > 0
                ? string.Create(CultureInfo.InvariantCulture, $" ({full.ForcedChanges} more that no plan could avoid used up the rest of the budget of {problem.ChurnBudget})")
                : "";
            notes.Add(string.Create(CultureInfo.InvariantCulture,
                $"Churn budget: the search wanted {wanted} changes to the previous version, {churnBudget} are allowed{forced}; the plan keeps within them."));
        }

        IReadOnlyList<PlacedChoice> greedy;
        (model, greedy) = model.WithChoicesOf(full, found);
        var greedyValue = model.ObjectiveOf(greedy);
        var heuristicDone = clock.Elapsed.TotalSeconds;
        IReadOnlyList<PlacedChoice> best = greedy;
        var status = PlanStatus.Heuristic;

        // Keep back what building the CP model and reading the answer take (measured ≈ 40 µs per choice).
        var remaining = settings.TimeLimitSeconds - clock.Elapsed.TotalSeconds - (0.1 + ModelSecondsPerChoice * model.Choices.Count);
        if (!settings.HeuristicOnly && !settings.Deterministic && remaining < MinimumSearchSeconds)
        {
            notes.Add(string.Create(CultureInfo.InvariantCulture, $"CP-SAT skipped: {Math.Max(0, remaining):F2} s left of the time limit after the bound and the heuristic."));
        }
        else if (!settings.HeuristicOnly && !cancellationToken.IsCancellationRequested)
        {
            var (placed, cpStatus, cpBound) = RunCpSat(model, greedy, settings, remaining, cancellationToken);
            if (placed is not null && model.ObjectiveOf(placed) >= greedyValue - 1e-9)
            {
                best = placed;
                status = cpStatus == CpSolverStatus.Optimal ? PlanStatus.Optimal : PlanStatus.Feasible;
            }

            if (cpBound is { } cb && model.Choices.Count == full.Choices.Count && problem.Anchors.Count == 0)
            {
                bound = Math.Min(bound ?? double.PositiveInfinity, cb);
            }
        }

        notes.Add(string.Create(CultureInfo.InvariantCulture,
            $"Timing: compile and prune {compiled:F2} s, LP relaxation {relaxed - compiled:F2} s, heuristic {heuristicDone - relaxed:F2} s, CP-SAT {clock.Elapsed.TotalSeconds - heuristicDone:F2} s; heuristic objective {firstValue:F3} greedy, {greedyValue:F3} after local search."));
        var observations = model.ToObservations(best);
        var violations = PlanValidator.Violations(problem, observations);
        if (violations.Count > 0)
        {
            // Never hand out a plan that breaks a hard rule: fall back to the greedy plan, which is checked again.
            notes.AddRange(violations.Select(v => "Rejected solver plan: " + v));
            observations = model.ToObservations(greedy);
            status = PlanStatus.Heuristic;
            var greedyViolations = PlanValidator.Violations(problem, observations);
            if (greedyViolations.Count > 0)
            {
                notes.AddRange(greedyViolations.Select(v => "Rejected heuristic plan: " + v));
                observations = [];
                status = PlanStatus.Empty;
            }
        }

        var objective = observations.Sum(o => problem.NetValue(problem.Options[o.Option], problem.Options[o.Option].Levels[o.Level]));
        if (bound is { } b && objective > b)
        {
            bound = objective;
        }

        if (status == PlanStatus.Optimal && bound is { } ob && ob - objective > 1e-6 * Math.Max(1, ob))
        {
            notes.Add(string.Create(CultureInfo.InvariantCulture,
                $"CP-SAT proved the pruned model optimal; the bound {ob:F3} covers every unit and the continuous relaxation."));
        }

        return new PlanOutcome(observations, status, objective, bound,
            marginal.Select(v => relaxation.Solved ? (double?)v : null).ToArray(), full.ChoicesBeforePruning, model.Choices.Count, notes);
    }

    private static IReadOnlyList<PlacedChoice> ImproveLocally(
        PlanningModel model, IReadOnlyList<PlacedChoice> greedy, IReadOnlyList<double> prices, SolverSettings settings, Stopwatch clock, CancellationToken cancellationToken)
    {
        if (settings.LocalSearchRounds <= 0)
        {
            return greedy;
        }

        // One search per worker, each with its own seed; the best plan wins (ties: the lower seed), so
        // the result depends on the seeds and rounds only, not on which thread finishes first.
        var seeds = Enumerable.Range(0, settings.Deterministic ? 1 : settings.Workers).Select(k => settings.Seed + k).ToArray();
        NeighbourhoodSearchSettings Search(int seed) => new() { Rounds = settings.LocalSearchRounds, Seed = seed, PricePerTick = prices };
        if (settings.Deterministic)
        {
            // Reproducible: the rounds alone end the search.
            return NeighbourhoodSearch.Improve(model, greedy, Search(settings.Seed), cancellationToken);
        }

        var allowed = settings.TimeLimitSeconds * settings.LocalSearchShare - clock.Elapsed.TotalSeconds;
        if (allowed <= 0)
        {
            return greedy;
        }

        using var timer = CancellationTokenSource.CreateLinkedTokenSource(cancellationToken);
        timer.CancelAfter(TimeSpan.FromSeconds(allowed));
        var plans = new IReadOnlyList<PlacedChoice>[seeds.Length];
        Parallel.For(0, seeds.Length, new ParallelOptions { MaxDegreeOfParallelism = seeds.Length }, k =>
            plans[k] = NeighbourhoodSearch.Improve(model, greedy, Search(seeds[k]), timer.Token));
        return plans.Select((plan, k) => (Plan: plan, Value: model.ObjectiveOf(plan), K: k))
            .OrderByDescending(x => x.Value).ThenBy(x => x.K).First().Plan;
    }

    private static (IReadOnlyList<PlacedChoice>? Placed, CpSolverStatus Status, double? Bound) RunCpSat(
        PlanningModel model, IReadOnlyList<PlacedChoice> hint, SolverSettings settings, double remainingSeconds, CancellationToken cancellationToken)
    {
        var problem = model.Problem;
        var choices = model.Choices;
        var cp = new CpModel();
        var present = new BoolVar[choices.Count];
        var starts = new IntVar[choices.Count];
        var intervals = new IntervalVar[choices.Count];
        for (var j = 0; j < choices.Count; j++)
        {
            var c = choices[j];
            present[j] = cp.NewBoolVar(string.Empty);
            starts[j] = cp.NewIntVar(c.EarliestTick, c.LatestTick, string.Empty);
            intervals[j] = cp.NewOptionalFixedSizeIntervalVar(starts[j], c.DurationTicks, present[j], string.Empty);
        }

        foreach (var group in Enumerable.Range(0, choices.Count).GroupBy(j => choices[j].Candidate))
        {
            if (group.Count() > 1)
            {
                cp.AddAtMostOne(group.Select(j => (ILiteral)present[j]));
            }
        }

        foreach (var group in Enumerable.Range(0, choices.Count).GroupBy(j => choices[j].Unit))
        {
            var members = group.ToArray();
            cp.AddNoOverlap(members.Select(j => intervals[j]));
            if (members.Sum(j => (long)choices[j].DurationTicks) > model.BudgetTicks[group.Key])
            {
                cp.Add(LinearExpr.WeightedSum(members.Select(j => present[j]), members.Select(j => (long)choices[j].DurationTicks)) <= model.BudgetTicks[group.Key]);
            }
        }

        if (problem.NetworkCostCap is { } cap)
        {
            cp.Add(LinearExpr.WeightedSum(present, choices.Select(c => (long)Math.Ceiling(c.Cost * CostScale))) <= (long)Math.Floor(cap * CostScale));
        }

        if (model.ChosenChangeBudget is { } churnBudget)
        {
            // Anchors not kept + candidates added ≤ budget, i.e. Σ added − Σ anchors kept ≤ budget − |anchors|.
            var terms = Enumerable.Range(0, choices.Count).Select(j => (j, w: (long)model.ChurnWeight(j))).Where(t => t.w != 0).ToArray();
            cp.Add(LinearExpr.WeightedSum(terms.Select(t => present[t.j]), terms.Select(t => t.w)) <= churnBudget - model.AnchorChoices.Count);
        }

        cp.Maximize(LinearExpr.WeightedSum(present, choices.Select(c => (long)Math.Round(c.NetValue * ValueScale))));

        var hinted = hint.ToDictionary(h => h.ChoiceIndex, h => h.StartTick);
        for (var j = 0; j < choices.Count; j++)
        {
            var on = hinted.TryGetValue(j, out var start);
            cp.AddHint(present[j], on);
            cp.AddHint(starts[j], on ? start : choices[j].EarliestTick);
        }

        // Probing and symmetry detection in presolve took the whole budget on a few thousand optional
        // intervals (measured on the demo night), leaving no time to search; they are switched off.
        // Above a few thousand choices even the lighter presolve overran the time limit on the
        // shared 2-core machine; the hint is already feasible, so presolve is skipped there.
        var presolve = model.Choices.Count > LargeModelChoices ? "cp_model_presolve:false" : "cp_model_probing_level:0 symmetry_level:0";
        var parameters = settings.Deterministic
            ? string.Create(CultureInfo.InvariantCulture, $"num_workers:1 random_seed:{settings.Seed} max_deterministic_time:{settings.DeterministicTimeLimit} {presolve}")
            : string.Create(CultureInfo.InvariantCulture, $"num_workers:{settings.Workers} random_seed:{settings.Seed} max_time_in_seconds:{Math.Max(0.05, remainingSeconds):F3} {presolve}");
        var solver = new CpSolver { StringParameters = parameters };
        using var registration = cancellationToken.Register(solver.StopSearch);
        var status = solver.Solve(cp);
        if (status is not (CpSolverStatus.Optimal or CpSolverStatus.Feasible))
        {
            return (null, status, null);
        }

        var placed = new List<PlacedChoice>();
        for (var j = 0; j < choices.Count; j++)
        {
            if (solver.BooleanValue(present[j]))
            {
                placed.Add(new PlacedChoice(j, solver.Value(starts[j])));
            }
        }

        // Coefficients were rounded to 1/S; widen the bound by the worst rounding of the chosen count.
        var bound = solver.BestObjectiveBound / ValueScale + 0.5 * problem.Candidates.Count / ValueScale;
        return (placed, status, bound);
    }
}
