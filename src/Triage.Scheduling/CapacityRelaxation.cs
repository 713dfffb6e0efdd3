// Linear relaxation of the night plan that keeps only time capacity [1, ch. 8; 2]:
//   max Σⱼ vⱼ xⱼ   s.t.  Σ_{j∈c} xⱼ ≤ 1 (each candidate),  Σ_{j∈u} dⱼ xⱼ ≤ Tᵤ (each unit),
//                         Σⱼ costⱼ xⱼ ≤ cap,  0 ≤ xⱼ ≤ 1,
// with Tᵤ = min(budget, dark-window length). Windows and no-overlap are dropped, so its optimum
// bounds every feasible plan from above; the dual yᵤ of a unit's capacity row is the marginal
// value of one more second there (LP duality, [1, ch. 4]), ×3600 for one more hour.
//
// References
// [1] D. Bertsimas, J. N. Tsitsiklis, Introduction to Linear Optimization, Athena 1997, ch. 4 and 8.
// [2] S. Martello, P. Toth, Knapsack Problems, Wiley 1990, ch. 10 (multiple knapsack, LP bound).
using Google.OrTools.LinearSolver;
using Triage.Core.Planning;

namespace Triage.Scheduling;

/// <summary>Result of the capacity relaxation.</summary>
/// <param name="Bound">Optimum of the relaxation: an upper bound on any plan's objective.</param>
/// <param name="MarginalValuePerHour">Per unit, the dual of its time capacity × 3600 (≥ 0).</param>
/// <param name="Solved">False when GLOP did not reach optimality (then the bound is the trivial Σ of best values).</param>
public sealed record RelaxationResult(double Bound, IReadOnlyList<double> MarginalValuePerHour, bool Solved);

/// <summary>The LP capacity relaxation, solved with GLOP.</summary>
public static class CapacityRelaxation
{
    // Windows play no part in the relaxation, so per (candidate, unit) a choice that takes at least as
    // long as another and is worth no more can be dropped without changing the optimum.
    private static List<Choice> ParetoPerCandidateUnit(PlanningModel model)
    {
        var kept = new List<Choice>(model.Choices.Count);
        foreach (var group in model.Choices.GroupBy(c => (c.Candidate, c.Unit)))
        {
            var best = double.NegativeInfinity;
            foreach (var c in group.OrderBy(c => Duration(model, c)).ThenByDescending(c => c.NetValue))
            {
                if (c.NetValue > best)
                {
                    kept.Add(c);
                    best = c.NetValue;
                }
            }
        }

        return kept;
    }

    private static double Duration(PlanningModel model, Choice c) => model.Problem.Options[c.Option].Levels[c.Level].DurationSeconds;

    /// <summary>Solves the relaxation over every choice of <paramref name="model"/> (exact durations, not ticks).</summary>
    public static RelaxationResult Solve(PlanningModel model)
    {
        ArgumentNullException.ThrowIfNull(model);
        var problem = model.Problem;
        var choices = ParetoPerCandidateUnit(model);
        var trivial = choices.GroupBy(c => c.Candidate).Sum(g => g.Max(c => c.NetValue));
        using var solver = Solver.CreateSolver("GLOP") ?? throw new InvalidOperationException("GLOP is not available.");
        var x = new Variable[choices.Count];
        for (var j = 0; j < choices.Count; j++)
        {
            x[j] = solver.MakeNumVar(0, 1, string.Empty);
        }

        foreach (var group in Enumerable.Range(0, choices.Count).GroupBy(j => choices[j].Candidate))
        {
            var row = solver.MakeConstraint(double.NegativeInfinity, 1);
            foreach (var j in group)
            {
                row.SetCoefficient(x[j], 1);
            }
        }

        var capacity = new Constraint[problem.Units.Count];
        for (var u = 0; u < problem.Units.Count; u++)
        {
            var unit = problem.Units[u];
            capacity[u] = solver.MakeConstraint(double.NegativeInfinity, Math.Min(unit.BudgetSeconds, unit.Available.LengthSeconds));
        }

        Constraint? costRow = problem.NetworkCostCap is { } cap ? solver.MakeConstraint(double.NegativeInfinity, cap) : null;
        var objective = solver.Objective();
        for (var j = 0; j < choices.Count; j++)
        {
            var c = choices[j];
            var duration = problem.Options[c.Option].Levels[c.Level].DurationSeconds;
            capacity[c.Unit].SetCoefficient(x[j], duration);
            costRow?.SetCoefficient(x[j], problem.Cost(c.Unit, duration));
            objective.SetCoefficient(x[j], c.NetValue);
        }

        objective.SetMaximization();
        // Thousands of columns and few rows: the dual simplex is much faster here than the primal.
        solver.SetSolverSpecificParametersAsString("use_dual_simplex: true");
        var status = solver.Solve();
        if (status != Solver.ResultStatus.OPTIMAL)
        {
            return new RelaxationResult(trivial, new double[problem.Units.Count], false);
        }

        // Guard against round-off in the reported optimum: the bound must never undercut a plan.
        var bound = Math.Min(trivial, objective.Value() * (1 + 1e-9) + 1e-9);
        var duals = capacity.Select(row => Math.Max(0, row.DualValue()) * 3600.0).ToArray();
        return new RelaxationResult(bound, duals, true);
    }
}
