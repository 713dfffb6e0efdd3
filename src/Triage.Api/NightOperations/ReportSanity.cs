using System.Globalization;
using Triage.Api.Replanning;
using Triage.Core.Candidates;
using Triage.Core.Planning;
using Triage.Core.Roster;
using Triage.Core.Sky;
using Triage.Storage.Plans;

namespace Triage.Api.NightOperations;

/// <summary>
/// Sanity of an observation report against the sky and the plan. A "done" report whose time lies outside the site's
/// dark window (Sun above −18°, with <see cref="DarkToleranceMinutes"/> of slack at each end) is refused: no plan
/// puts an observation there. A report more than <see cref="SlotToleranceHours"/> from every slot the active plan of
/// that night gives the candidate (or for a candidate not in it) is accepted with a warning.
/// </summary>
public static class ReportSanity
{
    /// <summary>Slack at each end of the dark window, minutes (a report may carry the end of the last readout).</summary>
    public const double DarkToleranceMinutes = 15;

    /// <summary>Distance from every planned slot beyond which a report is flagged, hours.</summary>
    public const double SlotToleranceHours = 2;

    /// <summary>The refusal (null when acceptable) and the warnings of a report.</summary>
    public static async Task<(string? Refusal, IReadOnlyList<string> Warnings, DateOnly Night)> CheckAsync(
        Site site, Guid candidateId, Guid spectrographId, ObservationOutcome outcome, DateTimeOffset observedUtc, PlanStore plans, CancellationToken ct)
    {
        var inv = CultureInfo.InvariantCulture;
        var night = ReplanScheduler.NightOf(observedUtc, site.LongitudeDeg);
        var model = NightModel.For(site, night);
        var warnings = new List<string>();
        if (outcome == ObservationOutcome.Done)
        {
            var tolerance = TimeSpan.FromMinutes(DarkToleranceMinutes);
            if (model.DarkWindow.Window is not { } dark || observedUtc < dark.StartUtc - tolerance || observedUtc > dark.EndUtc + tolerance)
            {
                var sun = model.SunAltitudeDeg(observedUtc);
                return (string.Create(inv, $"{observedUtc:yyyy-MM-ddTHH:mm}Z is outside the dark window of {site.Name} (the Sun was at {sun:F1}°); a spectrum reported done must be taken in the dark window (±{DarkToleranceMinutes:F0} min)."),
                    warnings, night);
            }
        }

        if (await plans.GetAsync(night, null, ct) is { } active)
        {
            var id = candidateId.ToString();
            var slots = PlanJson.Deserialize(active.BodyJson).Spectrographs
                .SelectMany(q => q.Queue.Where(e => e.CandidateId == id).Select(e => (q.SpectrographId, e.StartUtc, e.EndUtc))).ToList();
            var slack = TimeSpan.FromHours(SlotToleranceHours);
            if (slots.Count == 0)
            {
                warnings.Add($"The candidate is not in the active plan (version {active.Row.Version}) of the night of {night:yyyy-MM-dd}.");
            }
            else if (!slots.Any(s => observedUtc >= s.StartUtc - slack && observedUtc <= s.EndUtc + slack))
            {
                var nearest = slots.MinBy(s => Math.Min(Math.Abs((observedUtc - s.StartUtc).TotalHours), Math.Abs((observedUtc - s.EndUtc).TotalHours)));
                warnings.Add(string.Create(inv, $"observedUtc is more than {SlotToleranceHours:F0} h from the candidate's planned slot {nearest.StartUtc:HH:mm}–{nearest.EndUtc:HH:mm} UTC."));
            }
            else if (!slots.Any(s => string.Equals(s.SpectrographId, spectrographId.ToString(), StringComparison.OrdinalIgnoreCase)))
            {
                warnings.Add("The candidate was planned on another spectrograph.");
            }
        }

        return (null, warnings, night);
    }
}
