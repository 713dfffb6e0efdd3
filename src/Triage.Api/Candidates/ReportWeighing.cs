using System.Globalization;
using System.Text.Json;
using Triage.Api.Errors;
using Triage.Core.Candidates;
using Triage.Core.Identification;
using Triage.Core.Planning;
using Triage.Core.Spectra;
using Triage.Storage.Candidates;

namespace Triage.Api.Candidates;

/// <summary>
/// Checks the classification part of an observation report and weighs its label through the
/// active calibration's confusion channel (<see cref="PosteriorUpdate"/>).
/// </summary>
public static class ReportWeighing
{
    /// <summary>Reported probabilities must sum to 1 within this tolerance.</summary>
    public const double ProbabilitySumTolerance = 0.05;

    /// <summary>Reported phases outside this range (rest-frame days from peak) are refused.</summary>
    public const double MinPhaseDays = -100, MaxPhaseDays = 1000;

    /// <summary>Labels a report may name: the taxonomy's subtypes and broad classes, or, with a calibration, those it can weigh.</summary>
    public static bool IsKnownLabel(string label, IReadOnlyCollection<string> subtypes, ActiveChannel? channel) =>
        channel is null
            ? subtypes.Contains(label, StringComparer.Ordinal) || Taxonomy.Default.Classes.Any(c => c.Name == label)
            : PosteriorUpdate.IsReportable(channel.Surface, channel.BroadClasses, label);

    /// <summary>Adds a failure naming the field for every bad classification member of the request.</summary>
    public static void Check(ObservationReportRequest request, FieldChecks checks, IReadOnlyCollection<string> subtypes, ActiveChannel? channel)
    {
        var what = channel is null ? "the active taxonomy" : "the active calibration";
        if (request.ClassifiedLabel is { } label && !IsKnownLabel(label, subtypes, channel))
        {
            checks.Fail("classifiedLabel", $"'{label}' is not a subtype or broad class of {what}");
        }

        if (request.ClassProbabilities is { } q)
        {
            if (request.ClassifiedLabel is null)
            {
                checks.Fail("classProbabilities", "needs a classifiedLabel");
            }

            foreach (var (key, p) in q)
            {
                if (!IsKnownLabel(key, subtypes, channel))
                {
                    checks.Fail("classProbabilities", $"'{key}' is not a subtype or broad class of {what}");
                }
                else if (!double.IsFinite(p) || p < 0 || p > 1)
                {
                    checks.Fail("classProbabilities", $"the probability of '{key}' must lie in [0, 1]");
                }
            }

            var sum = q.Values.Where(double.IsFinite).Sum();
            if (q.Count == 0 || Math.Abs(sum - 1) > ProbabilitySumTolerance)
            {
                checks.Fail("classProbabilities", string.Create(CultureInfo.InvariantCulture,
                    $"must sum to 1 ± {ProbabilitySumTolerance} (sum {sum:G6})"));
            }
        }

        if (request.PhaseDays is { } phase)
        {
            if (request.Outcome != "done")
            {
                checks.Fail("phaseDays", "is only accepted with outcome 'done'");
            }
            else
            {
                checks.Number("phaseDays", phase, MinPhaseDays, MaxPhaseDays);
            }
        }
    }

    /// <summary>
    /// The evidence handed to the store: under the candidate's row lock, its stored posterior (or
    /// else <paramref name="assessment"/>'s prior) is moved by the label. Without an active
    /// calibration a subtype label is taken as reported and a broad class leaves the candidate unsettled.
    /// </summary>
    public static LabelEvidence Evidence(
        ObservationReportRequest request, ActiveChannel? channel, CandidateAssessment assessment, double resolvingPower,
        string unitName, double confidence)
    {
        var label = request.ClassifiedLabel!;
        var snr = request.AchievedSnr!.Value;
        var observed = request.ObservedUtc!.Value.ToUniversalTime();
        var phase = request.PhaseDays is { } given
            ? new PhaseBelief(given, 0)
            : new AssessedTargetForecast(assessment, 6000).PhaseAt(observed);
        var probabilitiesJson = request.ClassProbabilities is null ? null : JsonSerializer.Serialize(request.ClassProbabilities);
        var inv = CultureInfo.InvariantCulture;

        WeighedLabel Weigh(StoredBelief belief)
        {
            var prior = belief.PosteriorJson is { } stored
                ? JsonSerializer.Deserialize<Dictionary<string, double>>(stored)!
                : assessment.Prior.Probabilities.ToDictionary(p => p.Key, p => p.Value, StringComparer.Ordinal);
            var priorJson = JsonSerializer.Serialize(prior);
            if (channel is null)
            {
                var settles = !Taxonomy.Default.Classes.Any(c => c.Name == label);
                return new WeighedLabel(settles, settles ? label : null, priorJson, null, null, resolvingPower, null,
                    string.Create(inv, $"done on {unitName} (R={resolvingPower:G4}): '{label}' at S/N {snr:F1}; no active calibration, ")
                    + (settles ? "label taken as reported" : "a broad class does not settle the subtype: unsettled"));
            }

            var report = new ReportedClassification(label, request.ClassProbabilities, resolvingPower, snr, phase);
            var result = PosteriorUpdate.Apply(channel.Surface, channel.BroadClasses, prior, report, confidence);
            var cell = result.Cell;
            var bins = string.Join(", ", cell.PhaseBins.Select(b => string.Create(inv, $"{b.Bin} {b.Weight:P0}")));
            var grid = string.Create(inv, $"R {cell.GridResolutionLow:G4}–{cell.GridResolutionHigh:G4}, S/N {cell.GridSnrLow:G4}–{cell.GridSnrHigh:G4}, phase {bins}")
                + (cell.Clamped ? " (clamped to the grid's edge)" : "");
            var before = prior.GetValueOrDefault(result.TopSubtype);
            var detail = string.Create(inv,
                $"done on {unitName} (R={resolvingPower:G4}): '{label}' at S/N {snr:F1}, phase {phase.MeanDays:F1} d; confusion cell {grid}; ")
                + string.Create(inv, $"p({result.TopSubtype}) {before:F3} → {result.TopProbability:F3}; ")
                + (result.Identified
                    ? string.Create(inv, $"identified as {result.TopSubtype} (≥ {confidence:F2})")
                    : string.Create(inv, $"unsettled (below {confidence:F2}): a sharper spectrum is wanted"));
            return new WeighedLabel(result.Identified, result.Identified ? result.TopSubtype : null, priorJson,
                JsonSerializer.Serialize(result.Posterior), CellWithPhase(cell, phase), resolvingPower, channel.CalibrationId, detail);
        }

        return new LabelEvidence(probabilitiesJson, request.PhaseDays, Weigh);
    }

    private static readonly JsonSerializerOptions CellJson = new(JsonSerializerDefaults.Web);

    // The cells used plus the phase belief they were read at (the unit-accuracy trials need it).
    private static string CellWithPhase(ChannelCell cell, PhaseBelief phase)
    {
        var node = JsonSerializer.SerializeToNode(cell, CellJson)!.AsObject();
        node["phaseDays"] = phase.MeanDays;
        node["phaseSigmaDays"] = phase.SigmaDays;
        return node.ToJsonString();
    }
}
