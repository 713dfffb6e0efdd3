using Microsoft.AspNetCore.Http.HttpResults;
using Triage.Api.Access;
using Triage.Api.Candidates;
using Triage.Api.Errors;
using Triage.Core.Identification;
using Triage.Core.Planning;
using Triage.Storage.Candidates;
using Triage.Storage.Roster;

namespace Triage.Api.Identification;

/// <summary>One unit's modelled against measured accuracy.</summary>
/// <param name="SpectrographId">Unit.</param>
/// <param name="Name">Its name.</param>
/// <param name="ResolvingPower">Its R now.</param>
/// <param name="Trials">Labelled reports of candidates that were finally identified.</param>
/// <param name="Correct">Those naming the final subtype.</param>
/// <param name="MeasuredRecall">Correct/trials (null without trials).</param>
/// <param name="MeasuredLow">Wilson 95 % lower bound.</param>
/// <param name="MeasuredHigh">Wilson 95 % upper bound.</param>
/// <param name="ModelledRecall">Mean recall the active calibration predicts for the same trials (R, S/N, phase, subtype).</param>
/// <param name="ModelledLow">Lower end of the range the measured recall falls in 95 % of the time if the model is right: (E − 1.96 √V)/n, at least 0 (null without trials).</param>
/// <param name="ModelledHigh">Upper end of that range: (E + 1.96 √V)/n, at most 1 (null without trials).</param>
/// <param name="Z">(correct − expected)/√variance under the model.</param>
/// <param name="Flagged">Significantly worse than modelled (one-sided, z below −2.326 with at least 10 trials): a warning, not an error.</param>
/// <param name="Warning">Plain-words warning when flagged.</param>
public sealed record UnitAccuracyResponse(
    Guid SpectrographId, string Name, double ResolvingPower, int Trials, int Correct, double? MeasuredRecall, double MeasuredLow,
    double MeasuredHigh, double? ModelledRecall, double? ModelledLow, double? ModelledHigh, double Z, bool Flagged, string? Warning);

/// <summary>Every unit's accuracy.</summary>
/// <param name="CalibrationId">Calibration the modelled figures come from.</param>
/// <param name="Units">One row per registered spectrograph.</param>
/// <param name="Method">How the figures are computed.</param>
public sealed record UnitAccuracyListResponse(Guid CalibrationId, IReadOnlyList<UnitAccuracyResponse> Units, string Method);

/// <summary>Modelled against measured accuracy per spectrograph, from the labelled reports of identified candidates.</summary>
public static class UnitAccuracyEndpoints
{
    /// <summary>Maps GET /api/units/accuracy.</summary>
    public static IEndpointRouteBuilder MapUnitAccuracy(this IEndpointRouteBuilder app)
    {
        app.MapGroup("/api/units").WithTags("Identification")
            .MapGet("/accuracy", GetUnitAccuracy).RequireAuthorization(Policies.AnyKey).WithName("GetUnitAccuracy");
        return app;
    }

    /// <summary>Each unit's trials scored against the active calibration.</summary>
    public static async Task<Results<Ok<UnitAccuracyListResponse>, ProblemHttpResult>> GetUnitAccuracy(
        CandidateStore store, RosterStore roster, IdentificationModel identification, CancellationToken ct)
    {
        if (await identification.GetAsync(ct) is not { } channel)
        {
            return Problems.NotFound("calibration", "No calibration is active: the modelled accuracy needs one.");
        }

        var units = (await roster.ListSpectrographsAsync(new SpectrographFilter(), ct)).Select(v => v.Value).ToList();
        var settings = new UnitOutcomeSettings();
        var scores = UnitScores.Of(channel.Surface, await store.LabelledTrialsAsync(ct));
        var rows = units.OrderBy(u => u.Name, StringComparer.Ordinal).Select(u =>
        {
            var s = scores.GetValueOrDefault(u.Id);
            var a = UnitOutcomes.Score(u.Id.ToString(), s.N, s.X, s.E, s.V, settings);
            return new UnitAccuracyResponse(u.Id, u.Name, u.ResolvingPower, a.Trials, a.Correct,
                a.Trials > 0 ? a.Measured.Estimate : null, a.Measured.Low, a.Measured.High, a.Trials > 0 ? a.Modelled : null,
                a.Trials > 0 ? Math.Max(0, (s.E - 1.96 * Math.Sqrt(s.V)) / s.N) : null,
                a.Trials > 0 ? Math.Min(1, (s.E + 1.96 * Math.Sqrt(s.V)) / s.N) : null,
                Math.Round(a.Z, 3), a.Flagged,
                a.Flagged
                    ? FormattableString.Invariant($"{u.Name} named the final subtype in {a.Correct} of {a.Trials} spectra; the calibration expected {a.Modelled * a.Trials:0.#}. Its real accuracy looks worse than modelled.")
                    : null);
        }).ToList();
        return TypedResults.Ok(new UnitAccuracyListResponse(channel.CalibrationId, rows,
            "Trials: labelled reports of candidates later identified (posterior ≥ confidence or a confirmed label), true subtype = the final label. " +
            "Modelled: the active calibration's recall at each trial's R, S/N and phase. Flag: one-sided normal test on the sum of the trials' successes (z < −2.326, n ≥ 10)."));
    }
}

/// <summary>Per-unit sums n, x, E, V of the trials against a surface.</summary>
public static class UnitScores
{
    /// <summary>Sums per spectrograph; trials whose labels the calibration does not know are skipped.</summary>
    public static Dictionary<Guid, (int N, int X, double E, double V)> Of(AccuracySurface surface, IEnumerable<LabelledTrialRow> trials)
    {
        ArgumentNullException.ThrowIfNull(surface);
        ArgumentNullException.ThrowIfNull(trials);
        var index = surface.Subtypes.Select((s, i) => (s, i)).ToDictionary(t => t.s, t => t.i, StringComparer.Ordinal);
        var k = index.Count;
        var channel = new double[k * k];
        var sums = new Dictionary<Guid, (int N, int X, double E, double V)>();
        foreach (var t in trials)
        {
            if (!index.TryGetValue(t.Truth, out var truth) || !index.TryGetValue(t.Answer, out var answer))
            {
                continue;
            }

            var phase = t.PhaseDays is { } p ? new PhaseBelief(p, 0) : new PhaseBelief(0, AssessedTargetForecast.UnknownPhaseSigmaDays);
            surface.AtResolution(t.ResolvingPower).FillChannel(t.Snr, phase, channel);
            var q = channel[truth * k + truth];
            var s = sums.GetValueOrDefault(t.SpectrographId);
            sums[t.SpectrographId] = (s.N + 1, s.X + (answer == truth ? 1 : 0), s.E + q, s.V + q * (1 - q));
        }

        return sums;
    }
}
