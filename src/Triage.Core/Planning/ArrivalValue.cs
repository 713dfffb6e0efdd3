// Is a candidate that arrived after the night was planned worth a replan?
//
// The plan's linear relaxation prices each unit's time: its dual λ_u is the objective one more hour of u would add
// ("marginal value per hour", stored per queue). In the relaxation an option o of a new candidate on unit u enters the
// optimum only if its net value per hour of unit time beats that price [1, §5.2 (reduced costs); 2, ch. 4]:
//     ρ_o = max over levels ℓ of (v_ℓ − price·cost_ℓ) / d_ℓ · 3600  >  λ_u,
// where d_ℓ is the time the unit is busy (exposure plus overheads). A candidate is worth a replan when some option on
// some unit of the active version has ρ_o > λ_u (a unit with spare time has λ_u = 0, so any positive value there
// counts). The test ignores the candidate's other constraints (its windows are already cut to what lies ahead of the
// instant the night was built from), so it can only over-trigger, never miss an arrival the relaxation would take;
// the replan itself then decides. Units whose price is unknown (no relaxation solved) are not compared.
//
// References
// [1] D. Bertsimas, J. N. Tsitsiklis, Introduction to Linear Optimization, Athena Scientific 1997, ch. 4–5.
// [2] V. Chvátal, Linear Programming, W. H. Freeman 1983, ch. 5 (economic interpretation of duals).
namespace Triage.Core.Planning;

/// <summary>A newly arrived candidate whose best option beats the price of a unit's time in the active plan.</summary>
/// <param name="CandidateId">Candidate id (as in the problem).</param>
/// <param name="SpectrographId">The unit of the best such option.</param>
/// <param name="UnitName">Its name.</param>
/// <param name="ValuePerHour">Net value per hour of unit time of that option's best level (objective units per hour, ≥ 0).</param>
/// <param name="MarginalValuePerHour">The unit's price in the active plan (objective units per hour, ≥ 0).</param>
public sealed record ValuableArrival(string CandidateId, string SpectrographId, string UnitName, double ValuePerHour, double MarginalValuePerHour)
{
    /// <summary>By how much the option beats the price, objective units per hour (&gt; 0).</summary>
    public double Excess => ValuePerHour - MarginalValuePerHour;
}

/// <summary>Compares the options of newly arrived candidates with the unit prices of the active plan.</summary>
public static class ArrivalValue
{
    /// <summary>
    /// The candidates of <paramref name="built"/> (built from the replanning instant with the arrivals only) that are not in
    /// <paramref name="active"/> and have an option whose net value per hour exceeds its unit's marginal value per hour there;
    /// one row per candidate (its largest excess), largest excess first.
    /// </summary>
    public static IReadOnlyList<ValuableArrival> ExceedingMargin(PlanningNight built, NightPlan active)
    {
        ArgumentNullException.ThrowIfNull(built);
        ArgumentNullException.ThrowIfNull(active);
        var problem = built.Problem;
        var price = active.Spectrographs
            .Where(q => q.MarginalValuePerHour is not null)
            .ToDictionary(q => q.SpectrographId, q => Math.Max(0, q.MarginalValuePerHour!.Value), StringComparer.OrdinalIgnoreCase);
        var planned = active.Spectrographs.SelectMany(q => q.Queue).Select(e => e.CandidateId).ToHashSet(StringComparer.OrdinalIgnoreCase);
        var best = new Dictionary<int, ValuableArrival>();
        foreach (var option in problem.Options)
        {
            var unit = problem.Units[option.Unit];
            var candidate = problem.Candidates[option.Candidate];
            if (planned.Contains(candidate.Id) || !price.TryGetValue(unit.Id, out var lambda))
            {
                continue;
            }

            foreach (var level in option.Levels)
            {
                var perHour = problem.NetValue(option, level) / level.DurationSeconds * 3600.0;
                if (perHour > lambda && (!best.TryGetValue(option.Candidate, out var b) || perHour - lambda > b.Excess))
                {
                    best[option.Candidate] = new ValuableArrival(candidate.Id, unit.Id, unit.Name, perHour, lambda);
                }
            }
        }

        return best.Values.OrderByDescending(a => a.Excess).ThenBy(a => a.CandidateId, StringComparer.Ordinal).ToList();
    }
}
