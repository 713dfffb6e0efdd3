// Greedy list scheduling for weighted interval scheduling with alternatives [1, ch. 3]:
// choices are tried in decreasing order of a score and placed at the earliest free start on
// their unit that respects the window, the budget and the cost cap; a candidate is placed once.
// Scores: value density v/d (classic for knapsack-like capacity [2]); value v; or, given prices
// λᵤ per tick of each unit (e.g. LP duals), the reduced profit v − λᵤ·d first and density after,
// which sends a candidate to the unit where its time is cheapest relative to what it yields.
// When replanning, one more run first places every anchored choice (the previous version's assignments, pinned to
// their starts) and fills the rest by density: the best of the runs is then never worse than keeping the previous
// version, so a later search changes an assignment only when that gains more than the stability share.
//
// References
// [1] M. L. Pinedo, Scheduling: Theory, Algorithms, and Systems, 5th ed., Springer 2016, ch. 3–5.
// [2] S. Martello, P. Toth, Knapsack Problems, Wiley 1990, ch. 2.4 (greedy by profit/weight ratio).
namespace Triage.Core.Planning;

/// <summary>Fast heuristic plans: a baseline and the warm start of the solver.</summary>
public static class GreedyPlanner
{
    /// <summary>How the greedy orders its choices.</summary>
    public enum Order
    {
        /// <summary>Net value per tick, descending.</summary>
        ValueDensity,

        /// <summary>Net value, descending.</summary>
        Value,
    }

    /// <summary>Runs the greedy with one ordering (and optional unit prices).</summary>
    /// <param name="model">The compiled problem.</param>
    /// <param name="order">Ordering of choices.</param>
    /// <param name="pricePerTick">Optional λᵤ, value per tick of each unit, ≥ 0; placed first by reduced profit.</param>
    /// <returns>Placed choices, feasible for the model.</returns>
    public static IReadOnlyList<PlacedChoice> Solve(PlanningModel model, Order order = Order.ValueDensity, IReadOnlyList<double>? pricePerTick = null)
    {
        ArgumentNullException.ThrowIfNull(model);
        var state = new PlacementState(model);
        var indices = Enumerable.Range(0, model.Choices.Count).ToArray();
        if (pricePerTick is not null)
        {
            double Reduced(int i) => model.Choices[i].NetValue - pricePerTick[model.Choices[i].Unit] * model.Choices[i].DurationTicks;
            foreach (var i in indices.Where(i => Reduced(i) > 0).OrderByDescending(Reduced).ThenBy(i => i))
            {
                state.TryPlace(i);
            }
        }

        Func<int, double> score = order == Order.Value
            ? i => model.Choices[i].NetValue
            : i => model.Choices[i].NetValue / model.Choices[i].DurationTicks;
        foreach (var i in indices.OrderByDescending(score).ThenBy(i => i))
        {
            state.TryPlace(i);
        }

        return state.Placed;
    }

    /// <summary>Runs every ordering (and the priced one when prices are given) and keeps the best.</summary>
    public static IReadOnlyList<PlacedChoice> SolveBest(PlanningModel model, IReadOnlyList<double>? pricePerTick = null)
    {
        var runs = new List<IReadOnlyList<PlacedChoice>> { Solve(model, Order.ValueDensity), Solve(model, Order.Value) };
        if (pricePerTick is not null)
        {
            runs.Add(Solve(model, Order.ValueDensity, pricePerTick));
        }

        if (model.AnchorChoices.Count > 0)
        {
            runs.Add(SolveKeepingAnchors(model));
        }

        return runs.MaxBy(model.ObjectiveOf)!;
    }

    /// <summary>
    /// Places every anchored choice that still fits (in start order), then the rest by value density. With
    /// <paramref name="churnBudget"/>, candidates without an anchor are added only while the changes (anchors not
    /// placed plus additions) stay within it; candidates whose anchor no longer fits are placed again freely.
    /// </summary>
    public static IReadOnlyList<PlacedChoice> SolveKeepingAnchors(PlanningModel model, int? churnBudget = null)
    {
        ArgumentNullException.ThrowIfNull(model);
        var state = new PlacementState(model);
        var changes = 0;
        foreach (var i in model.AnchorChoices.OrderBy(i => model.Choices[i].EarliestTick).ThenBy(i => i))
        {
            changes += state.TryPlace(i) ? 0 : 1;
        }

        foreach (var i in Enumerable.Range(0, model.Choices.Count).OrderByDescending(i => model.Choices[i].NetValue / model.Choices[i].DurationTicks).ThenBy(i => i))
        {
            var addition = model.ChurnWeight(i) == 1;
            if (addition && churnBudget is { } budget && changes >= budget)
            {
                continue;
            }

            if (state.TryPlace(i) && addition)
            {
                changes++;
            }
        }

        return state.Placed;
    }

    /// <summary>Unit timelines, budgets and cost used so far; places choices at their earliest free start.</summary>
    public sealed class PlacementState
    {
        private readonly PlanningModel _model;
        private readonly List<(long Start, long End)>[] _busy;
        private readonly long[] _usedTicks;
        private readonly bool[] _candidateDone;
        private readonly List<PlacedChoice> _placed = [];
        private double _cost;

        /// <summary>An empty plan for <paramref name="model"/>.</summary>
        public PlacementState(PlanningModel model)
        {
            _model = model;
            _busy = model.Problem.Units.Select(_ => new List<(long, long)>()).ToArray();
            _usedTicks = new long[model.Problem.Units.Count];
            _candidateDone = new bool[model.Problem.Candidates.Count];
        }

        /// <summary>The choices placed so far.</summary>
        public IReadOnlyList<PlacedChoice> Placed => _placed;

        /// <summary>Places choice <paramref name="index"/> at its earliest feasible start; false if none.</summary>
        public bool TryPlace(int index)
        {
            var c = _model.Choices[index];
            if (_candidateDone[c.Candidate] || _usedTicks[c.Unit] + c.DurationTicks > _model.BudgetTicks[c.Unit])
            {
                return false;
            }

            if (_model.Problem.NetworkCostCap is { } cap && _cost + c.Cost > cap + 1e-9)
            {
                return false;
            }

            var busy = _busy[c.Unit];
            var start = c.EarliestTick;
            var at = 0;
            for (; at < busy.Count; at++)
            {
                var (bs, be) = busy[at];
                if (be <= start)
                {
                    continue;
                }

                if (bs >= start + c.DurationTicks)
                {
                    break;
                }

                start = be;
            }

            if (start > c.LatestTick)
            {
                return false;
            }

            busy.Insert(at, (start, start + c.DurationTicks));
            _usedTicks[c.Unit] += c.DurationTicks;
            _cost += c.Cost;
            _candidateDone[c.Candidate] = true;
            _placed.Add(new PlacedChoice(index, start));
            return true;
        }
    }
}
