using System.CommandLine;

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
}
