using System.Text.Json;
using Triage.Api.Jobs;
using Triage.Core.Candidates;
using Triage.Core.Planning;
using Triage.Learning;
using Triage.Scheduling;
using Triage.Storage.Calibrations;
using Triage.Storage.Candidates;
using Triage.Storage.Plans;
using Triage.Storage.Roster;

namespace Triage.Api.Plans;

/// <summary>
/// Computes a new plan version for a night from what the database holds now: the open roster,
/// the candidates still waiting for a spectrum (new or planned), the active calibration. When
/// replanning from an instant during the night, observations executing at that instant are kept
/// and their spectrographs stay busy until they end. The version is stored whole or not at all.
/// </summary>
public sealed class PlanJobHandler(
    RosterStore roster,
    CandidateStore candidates,
    CalibrationStore calibrations,
    PlanStore plans,
    TimeProvider clock,
    ILogger<PlanJobHandler> log) : IJobHandler
{
    public string Kind => PlanEndpoints.PlanJobKind;

    public async Task<string> RunAsync(string inputJson, IProgress<JobProgress> progress, CancellationToken ct)
    {
        var input = JsonSerializer.Deserialize<PlanJobInput>(inputJson, Triage.Api.Operations.OperationsSetup.JobJson)
            ?? throw new JobInputException("The job input is empty.");
        progress.Report(new JobProgress(0.02, "reading the active calibration"));
        var active = await calibrations.GetAsync(null, ct)
            ?? throw new JobInputException("No calibration is active: request one (POST /api/calibrations) or import a table first.");
        var document = CalibrationJson.Deserialize(active.DocumentJson);
        var surface = AccuracySurface.FromDocument(document);

        progress.Report(new JobProgress(0.05, "reading the roster"));
        var sites = (await roster.ListSitesAsync(new SiteFilter(), ct)).Select(v => v.Value).ToList();
        var spectrographs = (await roster.ListSpectrographsAsync(new SpectrographFilter(), ct)).Select(v => v.Value).ToList();

        // Replanning keeps what is executing at the chosen instant.
        var from = input.FromUtc ?? DateTimeOffset.MinValue;
        var kept = new List<(string SpectrographId, QueueEntry Entry)>();
        if (input.FromUtc is not null && await plans.GetAsync(input.Night, null, ct) is { } previous)
        {
            foreach (var q in PlanJson.Deserialize(previous.BodyJson).Spectrographs)
            {
                kept.AddRange(q.Queue.Where(e => e.StartUtc <= from && from < e.EndUtc).Select(e => (q.SpectrographId, e)));
            }
        }
        var keptIds = kept.Select(k => k.Entry.CandidateId).ToHashSet(StringComparer.Ordinal);
        var busy = kept.GroupBy(k => Guid.Parse(k.SpectrographId)).ToDictionary(g => g.Key, g => g.Max(k => k.Entry.EndUtc));

        progress.Report(new JobProgress(0.08, "reading candidates"));
        var waiting = await WaitingCandidatesAsync(keptIds, ct);
        progress.Report(new JobProgress(0.25, $"fitting {waiting.Count} light curves"));
        var labels = document.Subtypes.Concat(DefaultSubtypeLabels.All).Distinct(StringComparer.Ordinal).ToArray();
        var targets = waiting.AsParallel().AsOrdered().WithCancellation(ct)
            .Select(c => (ITargetForecast)new AssessedTargetForecast(CandidateAssessment.Assess(c, labels), document.SnrReferenceWavelengthAngstrom))
            .ToList();

        progress.Report(new JobProgress(0.4, "building the night"));
        var night = NightProblemBuilder.Build(sites, spectrographs, targets, surface, input.Night, from,
            new NightBuildSettings { Objective = input.Objective, BusyUntilUtc = busy });
        progress.Report(new JobProgress(0.5, "solving"));
        var plan = NightPlanning.Plan(night, new SolverSettings { TimeLimitSeconds = input.TimeLimitSeconds }, ct)
            with { Night = input.Night, GeneratedUtc = clock.GetUtcNow() };
        plan = KeepExecuting(plan, kept);

        progress.Report(new JobProgress(0.95, "storing the version"));
        var row = await plans.AddVersionAsync(new NewPlanVersion(
            input.Night, input.FromUtc ?? clock.GetUtcNow(), input.Objective.ToString().ToLowerInvariant(), plan.Summary.Status.ToString().ToLowerInvariant(),
            plan.Summary.ExpectedCorrectIdentifications, plan.Summary.Assigned, null, active.Row.Id, PlanJson.Serialize(plan)), clock.GetUtcNow(), ct);
        await MarkPlannedAsync(plan, ct);
        log.LogInformation("Planned {Assigned} of {Candidates} candidates for {Night} as version {Version}",
            plan.Summary.Assigned, plan.Summary.Candidates, input.Night, row.Version);
        return JsonSerializer.Serialize(new
        {
            night = input.Night.ToString("yyyy-MM-dd", System.Globalization.CultureInfo.InvariantCulture),
            version = row.Version,
            url = $"/api/plans/{input.Night:yyyy-MM-dd}?version={row.Version}",
            assigned = plan.Summary.Assigned,
            expectedCorrectIdentifications = plan.Summary.ExpectedCorrectIdentifications,
        });
    }

    /// <summary>
    /// Candidates in state new, planned or unsettled, with their photometry; the planner's id is the
    /// service's candidate id. A candidate with labelled reports is valued from its posterior.
    /// </summary>
    private async Task<List<Candidate>> WaitingCandidatesAsync(IReadOnlySet<string> exclude, CancellationToken ct)
    {
        // One bulk read of the whole waiting set (rows and photometry), not one query per candidate.
        var waiting = await candidates.InStatesWithPhotometryAsync(
            [CandidateState.New, CandidateState.Planned, CandidateState.Unsettled], ct, posteriorAsPrior: true);
        return waiting
            .Where(w => !exclude.Contains(w.Id.ToString()))
            .Select(w => w.Candidate with { Id = w.Id.ToString() })
            .ToList();
    }

    private static NightPlan KeepExecuting(NightPlan plan, List<(string SpectrographId, QueueEntry Entry)> kept)
    {
        if (kept.Count == 0)
        {
            return plan;
        }
        var byUnit = kept.ToLookup(k => k.SpectrographId, k => k.Entry with { Reason = "Executing when the night was replanned; kept as it was. " + k.Entry.Reason });
        var queues = plan.Spectrographs
            .Select(q => byUnit[q.SpectrographId].Any() ? q with { Queue = byUnit[q.SpectrographId].Concat(q.Queue).OrderBy(e => e.StartUtc).ToList() } : q)
            .ToList();
        return plan with
        {
            Spectrographs = queues,
            Notes = [.. plan.Notes, $"{kept.Count} observation(s) executing at the replanning instant were kept."],
        };
    }

    /// <summary>Candidates in the new version move from new or unsettled to planned (the lifecycle's own rules decide).</summary>
    private async Task MarkPlannedAsync(NightPlan plan, CancellationToken ct)
    {
        foreach (var id in plan.Spectrographs.SelectMany(q => q.Queue).Select(e => e.CandidateId))
        {
            if (Guid.TryParse(id, out var guid))
            {
                await candidates.TransitionAsync(guid, CandidateState.Planned, CandidateLifecycle.Waiting.Contains, "planner", "in a plan version", clock.GetUtcNow(), ct);
            }
        }
    }
}
