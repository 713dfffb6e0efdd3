using System.CommandLine;
using Triage.Core.Planning;

namespace Triage.Cli.Verbs;

/// <summary>The input options shared by the verbs that plan a night from files (<c>plan</c>, <c>rehearse</c>).</summary>
internal static class NightInputOptions
{
    public static Option<FileInfo> Roster() =>
        new("--roster") { Description = "Sites with their spectrographs (JSON array of { site, spectrographs }).", Required = true };

    public static Option<FileInfo> Candidates() =>
        new("--candidates") { Description = "Broker batch JSON (the intake API's body).", Required = true };

    public static Option<FileInfo> Calibration() =>
        new("--calibration") { Description = "Calibration JSON as written by `calibrate`.", Required = true };

    public static Option<string> Night() =>
        new("--night") { Description = "Local date of the evening the night starts, YYYY-MM-DD.", Required = true };

    /// <summary>What the plan maximises; the default is the service's (<see cref="PlanDefaults.Objective"/>).</summary>
    public static Option<string> Objective() =>
        new("--objective")
        {
            Description = $"identification (sequential: posterior ≥ 0.9, with the value of escalating), accuracy (expected correct subtype of one spectrum) or information (bits); default {PlanDefaults.ObjectiveName}, as the service.",
            DefaultValueFactory = _ => PlanDefaults.ObjectiveName,
        };

    /// <summary>The objective named by <paramref name="text"/> (case-insensitive); false when it names none.</summary>
    public static bool TryObjective(string text, out PlanObjective objective)
    {
        if (PlanDefaults.ByName.TryGetValue(text.ToLowerInvariant(), out objective))
        {
            return true;
        }

        objective = PlanDefaults.Objective;
        return false;
    }
}
