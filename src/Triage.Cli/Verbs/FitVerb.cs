using System.CommandLine;
using System.Text.Json;
using Triage.Core.Candidates;
using Triage.Core.LightCurves;

namespace Triage.Cli.Verbs;

/// <summary><c>fit --candidates FILE [--at UTC] [--labels L1,L2,...] [--out FILE]</c>: prints each candidate's computed state as JSON.</summary>
internal static class FitVerb
{
    public static Command Create()
    {
        var candidates = new Option<FileInfo>("--candidates") { Description = "Broker batch JSON (the intake API's body).", Required = true };
        var at = new Option<DateTimeOffset?>("--at") { Description = "Instant (UTC, ISO 8601) for phase and predicted magnitudes; default now." };
        var labels = new Option<string?>("--labels") { Description = "Comma-separated subtype labels of the taxonomy; default the 14 standard labels." };
        var output = new Option<FileInfo?>("--out") { Description = "Write the JSON here instead of standard output." };
        var command = new Command("fit", "Fit light curves and priors of a candidate batch and print them as JSON.") { candidates, at, labels, output };
        command.SetAction(parse =>
        {
            var file = parse.GetValue(candidates)!;
            if (!file.Exists)
            {
                Console.Error.WriteLine($"Candidates file not found: {file.FullName}");
                return 2;
            }
            var labelSet = ParseLabels(parse.GetValue(labels));
            var result = CandidateAssessment.ReadBatch(File.ReadAllText(file.FullName), labelSet);
            if (!result.IsValid)
            {
                Console.Error.WriteLine(JsonSerializer.Serialize(new { errors = result.Errors }, BrokerBatchJson.Options));
                return 2;
            }
            var when = parse.GetValue(at)?.ToUniversalTime() ?? DateTimeOffset.UtcNow;
            var rows = result.Candidates
                .AsParallel().AsOrdered()
                .Select(c => FitOutputRow.From(CandidateAssessment.Assess(c, labelSet.ToArray()), when))
                .ToArray();
            string json = JsonSerializer.Serialize(new FitOutput(when, rows, result.Notices), new JsonSerializerOptions(BrokerBatchJson.Options) { WriteIndented = true, Converters = { new CliJson.SecondsUtcConverter() } });
            var outFile = parse.GetValue(output);
            if (outFile is null)
            {
                Console.Out.WriteLine(json);
            }
            else
            {
                File.WriteAllText(outFile.FullName, json);
                Console.Error.WriteLine($"Wrote {rows.Length} candidates to {outFile.FullName}");
            }
            return 0;
        });
        return command;
    }

    internal static IReadOnlySet<string> ParseLabels(string? text) =>
        string.IsNullOrWhiteSpace(text)
            ? DefaultSubtypeLabels.Set
            : new HashSet<string>(text.Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries), StringComparer.Ordinal);
}

/// <summary>The JSON the <c>fit</c> verb prints.</summary>
internal sealed record FitOutput(DateTimeOffset AsOfUtc, IReadOnlyList<FitOutputRow> Candidates, IReadOnlyList<BatchError> Notices);

/// <summary>One candidate in the <c>fit</c> output.</summary>
internal sealed record FitOutputRow(
    string Id,
    double RaDeg,
    double DecDeg,
    double? Redshift,
    double ScienceWeight,
    LightCurveSnapshot LightCurve,
    string PriorSource,
    IReadOnlyDictionary<string, double> SubtypePrior,
    IReadOnlyList<string> PriorEvidence)
{
    public static FitOutputRow From(CandidateAssessment a, DateTimeOffset at) => new(
        a.Candidate.Id, a.Candidate.RaDeg, a.Candidate.DecDeg, a.Candidate.Redshift, a.Candidate.ScienceWeight,
        a.LightCurve.Snapshot(at),
        a.Prior.Source switch { Triage.Core.Candidates.PriorSource.Broker => "broker", Triage.Core.Candidates.PriorSource.BaseRates => "base-rates", _ => "base-rates-with-light-curve" },
        a.Prior.Probabilities.ToDictionary(kv => kv.Key, kv => Math.Round(kv.Value, 5)),
        a.Prior.Evidence);
}
