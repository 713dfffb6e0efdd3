using System.CommandLine;
using System.Diagnostics;
using System.Globalization;
using System.Text.Json;
using Triage.Core.Candidates;
using Triage.Core.Planning;
using Triage.Core.Roster;
using Triage.Scheduling;

namespace Triage.Cli.Verbs;

/// <summary>
/// <c>plan --roster FILE --candidates FILE --calibration FILE --night YYYY-MM-DD [--objective accuracy|information|identification]
/// [--time-limit S] [--from UTC] --out FILE</c>: tonight's plan without a database.
/// </summary>
internal static class PlanVerb
{
    public static Command Create()
    {
        var roster = NightInputOptions.Roster();
        var candidates = NightInputOptions.Candidates();
        var calibration = NightInputOptions.Calibration();
        var night = NightInputOptions.Night();
        var objective = NightInputOptions.Objective();
        var timeLimit = new Option<double>("--time-limit") { Description = "Solver time limit in seconds (default 5).", DefaultValueFactory = _ => 5 };
        var from = new Option<DateTimeOffset?>("--from") { Description = "Plan nothing before this instant (UTC, ISO 8601); default the start of the night." };
        var output = new Option<FileInfo>("--out") { Description = "Where to write the plan JSON.", Required = true };
        var command = new Command("plan", "Plan the night: assign and order candidates on every spectrograph to maximise expected identifications.")
            { roster, candidates, calibration, night, objective, timeLimit, from, output };
        command.SetAction((parse, cancellationToken) => Task.FromResult(Run(
            parse.GetValue(roster)!, parse.GetValue(candidates)!, parse.GetValue(calibration)!, parse.GetValue(night)!,
            parse.GetValue(objective)!, parse.GetValue(timeLimit), parse.GetValue(from), parse.GetValue(output)!, cancellationToken)));
        return command;
    }

    private static int Run(
        FileInfo rosterFile, FileInfo candidatesFile, FileInfo calibrationFile, string nightText, string objectiveText,
        double timeLimit, DateTimeOffset? from, FileInfo outFile, CancellationToken cancellationToken)
    {
        foreach (var (file, option) in new[] { (rosterFile, "--roster"), (candidatesFile, "--candidates"), (calibrationFile, "--calibration") })
        {
            if (!file.Exists)
            {
                return Fail($"{option}: '{file.FullName}' does not exist.");
            }
        }

        if (!DateOnly.TryParseExact(nightText, "yyyy-MM-dd", CultureInfo.InvariantCulture, DateTimeStyles.None, out var night))
        {
            return Fail($"--night: '{nightText}' is not a date YYYY-MM-DD.");
        }

        if (!NightInputOptions.TryObjective(objectiveText, out var objective))
        {
            return Fail($"--objective: '{objectiveText}' is not 'identification', 'accuracy' or 'information'.");
        }

        if (!(timeLimit > 0 && timeLimit <= 3600))
        {
            return Fail("--time-limit: must be in (0, 3600] seconds.");
        }

        try
        {
            var clock = Stopwatch.StartNew();
            var (sites, spectrographs) = RosterJson.Parse(File.ReadAllText(rosterFile.FullName));
            var document = PlanJson.ReadCalibration(File.ReadAllText(calibrationFile.FullName));
            var surface = AccuracySurface.FromDocument(document);
            var labels = new HashSet<string>(DefaultSubtypeLabels.All.Concat(document.Subtypes), StringComparer.Ordinal);
            var batch = CandidateAssessment.ReadBatch(File.ReadAllText(candidatesFile.FullName), labels);
            if (!batch.IsValid)
            {
                Console.Error.WriteLine(JsonSerializer.Serialize(new { errors = batch.Errors }, BrokerBatchJson.Options));
                return 2;
            }

            var labelList = labels.ToArray();
            var targets = batch.Candidates.AsParallel().AsOrdered()
                .Select(c => (ITargetForecast)new AssessedTargetForecast(CandidateAssessment.Assess(c, labelList), document.SnrReferenceWavelengthAngstrom))
                .ToArray();
            var built = NightProblemBuilder.Build(sites, spectrographs, targets, surface, night, from?.ToUniversalTime() ?? DateTimeOffset.MinValue,
                new NightBuildSettings { Objective = objective });
            var plan = NightPlanning.Plan(built, new SolverSettings { TimeLimitSeconds = timeLimit }, cancellationToken)
                with { Night = night, GeneratedUtc = DateTimeOffset.UtcNow };
            File.WriteAllText(outFile.FullName, PlanJson.Serialize(plan));
            var s = plan.Summary;
            Console.Error.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"Planned {s.Assigned} of {s.Candidates} candidates on {plan.Spectrographs.Count} spectrographs: expected correct identifications {s.ExpectedCorrectIdentifications:F1}, objective {s.Objective:F2}, bound {s.Bound:F2}, gap {s.Gap:P1}, status {s.Status}, {clock.Elapsed.TotalSeconds:F1} s. Wrote {outFile.FullName}"));
            Console.Error.WriteLine(NightPlan.AdvisoryStatement);
            return 0;
        }
        catch (Exception ex) when (ex is FormatException or ArgumentException or JsonException)
        {
            return Fail(ex.Message);
        }
    }

    private static int Fail(string message)
    {
        Console.Error.WriteLine(message);
        return 2;
    }
}
