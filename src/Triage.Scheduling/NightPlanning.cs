using Triage.Core.Planning;

namespace Triage.Scheduling;

/// <summary>
/// The whole planning run for hosts (API, CLI): solve, re-check every entry against the sky
/// (Sun avoidance, altitude and airmass limits, Moon avoidance, dark window), drop anything that
/// fails, and explain the result.
/// </summary>
public static class NightPlanning
{
    /// <summary>Plans a built night.</summary>
    /// <param name="night">From <see cref="NightProblemBuilder.Build"/>.</param>
    /// <param name="settings">Solver settings (time limit, workers, determinism).</param>
    /// <param name="cancellationToken">Stops the search early; the best plan so far is returned.</param>
    public static NightPlan Plan(PlanningNight night, SolverSettings? settings = null, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(night);
        var outcome = NightPlanner.Solve(night.Problem, settings, cancellationToken);
        var rejected = night.SafetyViolations(outcome.Observations);
        if (rejected.Count > 0)
        {
            var kept = outcome.Observations.Where(o => !rejected.ContainsKey(night.Problem.Options[o.Option].Candidate)).ToArray();
            var objective = kept.Sum(o => night.Problem.NetValue(night.Problem.Options[o.Option], night.Problem.Options[o.Option].Levels[o.Level]));
            outcome = outcome with
            {
                Observations = kept,
                Objective = objective,
                Notes = [.. outcome.Notes, $"The final safety check removed {rejected.Count} observation(s); see the unassigned list."],
            };
        }

        return PlanReport.Build(night.Problem, outcome, night.AirmassAt, rejected, night.Notes, night);
    }
}
