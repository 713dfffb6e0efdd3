using System.Text.Json;
using Triage.Api.Jobs;
using Triage.Core.Candidates;
using Triage.Core.Planning;
using Triage.Learning;
using Triage.Scheduling;
using Triage.Storage.Calibrations;
using Triage.Storage.Candidates;
using Triage.Api.Events;
using Triage.Storage.NightOperations;
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
    NightOperationsStore operations,
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

        // A replan starts at the later of now and the night's start (the builder clamps to the first dark start);
        // what is executing at that instant is kept, the previous version's later assignments are anchored.
        // Whole microseconds: what PostgreSQL stores, so that plannedFrom reads back as the instant used.
        var now = clock.GetUtcNow();
        now = new DateTimeOffset(now.UtcTicks - now.UtcTicks % 10, TimeSpan.Zero);
        var from = input.FromUtc ?? now;
        var previousVersion = await plans.GetAsync(input.Night, null, ct);
        var previous = previousVersion is { } pv ? PlanJson.Deserialize(pv.BodyJson) : null;
        var nightStart = new DateTimeOffset(input.Night.ToDateTime(TimeOnly.MinValue), TimeSpan.Zero);
        var closures = await operations.ClosuresAsync(nightStart.AddHours(-12), nightStart.AddDays(2), null, ct);
        var conditions = await operations.ConditionsAtAsync(from < nightStart ? nightStart : from, null, ct);

        // A closure is a hard constraint even for work under way: an entry that runs into one is not kept.
        var siteOf = spectrographs.ToDictionary(s => s.Id.ToString(), s => s.SiteId, StringComparer.OrdinalIgnoreCase);
        var start = NightReplan.Split(previous, from, NightReplan.DefaultFreeze, k => !closures.Any(c =>
            siteOf.TryGetValue(k.SpectrographId, out var site) && c.SiteId == site
            && (c.SpectrographId is null || string.Equals(c.SpectrographId.ToString(), k.SpectrographId, StringComparison.OrdinalIgnoreCase))
            && k.Entry.StartUtc < c.ToUtc && c.FromUtc < k.Entry.EndUtc));

        progress.Report(new JobProgress(0.08, "reading candidates"));
        var waiting = await WaitingCandidatesAsync(start.KeptIds, ct);
        progress.Report(new JobProgress(0.25, $"fitting {waiting.Count} light curves"));
        var labels = document.Subtypes.Concat(DefaultSubtypeLabels.All).Distinct(StringComparer.Ordinal).ToArray();
        var targets = waiting.AsParallel().AsOrdered().WithCancellation(ct)
            .Select(c => (ITargetForecast)new AssessedTargetForecast(CandidateAssessment.Assess(c, labels), document.SnrReferenceWavelengthAngstrom))
            .ToList();

        progress.Report(new JobProgress(0.4, "building the night"));
        var night = NightProblemBuilder.Build(sites, spectrographs, targets, surface, input.Night, from, new NightBuildSettings
        {
            Objective = input.Objective,
            BusyUntilUtc = start.BusyUntilUtc,
            Previous = start.Anchors,
            Closures = NightOperationsStore.ForPlanner(closures),
            Conditions = NightOperationsStore.ForPlanner(conditions),
        });
        var plannedFrom = from > night.Problem.EpochUtc ? from : night.Problem.EpochUtc;
        progress.Report(new JobProgress(0.5, "solving"));
        var solver = new SolverSettings { TimeLimitSeconds = input.TimeLimitSeconds, Deterministic = input.Deterministic };
        var plan = NightPlanning.Plan(night, solver, ct) with { Night = input.Night, GeneratedUtc = now };
        plan = NightReplan.WithKept(plan, start.Kept);
        plan = await WithBrokerIdsAsync(plan, ct);

        var churn = previous is null ? default : PlanChurn.Between(previous, plan, plannedFrom);
        var churnJson = previous is null ? null : JsonSerializer.Serialize(churn.Churn, PlanJson.Options);
        progress.Report(new JobProgress(0.95, "storing the version"));
        var ids = plan.Spectrographs.SelectMany(q => q.Queue).Select(e => Guid.TryParse(e.CandidateId, out var g) ? g : Guid.Empty).Where(g => g != Guid.Empty).ToList();
        var row = await plans.AddVersionAsync(new NewPlanVersion(
            input.Night, plannedFrom, input.Objective.ToString().ToLowerInvariant(), plan.Summary.Status.ToString().ToLowerInvariant(),
            plan.Summary.ExpectedCorrectIdentifications, plan.Summary.Assigned, null, active.Row.Id, PlanJson.Serialize(plan))
        {
            TriggerKind = input.TriggerKind,
            TriggerDetail = input.TriggerDetail,
            ChurnJson = churnJson,
            CandidateIds = ids,
            EventBody = version => PlanEventBody.Serialize(input.Night, version, previousVersion?.Row.Version, now, plannedFrom,
                input.TriggerKind, input.TriggerDetail, previous is null ? null : churn.Churn, churn.Changes ?? [], plan),
        }, now, ct);
        log.LogInformation("Planned {Assigned} of {Candidates} candidates for {Night} as version {Version} from {From} (trigger {Trigger}, churn {Churn})",
            plan.Summary.Assigned, plan.Summary.Candidates, input.Night, row.Version, plannedFrom, input.TriggerKind, churnJson);
        return JsonSerializer.Serialize(new
        {
            night = input.Night.ToString("yyyy-MM-dd", System.Globalization.CultureInfo.InvariantCulture),
            version = row.Version,
            url = $"/api/plans/{input.Night:yyyy-MM-dd}?version={row.Version}",
            plannedFrom,
            assigned = plan.Summary.Assigned,
            expectedCorrectIdentifications = plan.Summary.ExpectedCorrectIdentifications,
            churn = previous is null ? null : churn.Churn,
        });
    }

    /// <summary>Adds the broker and the broker's own id to every entry (operators and brokers think in those ids).</summary>
    private async Task<NightPlan> WithBrokerIdsAsync(NightPlan plan, CancellationToken ct)
    {
        var ids = plan.Spectrographs.SelectMany(q => q.Queue).Select(e => Guid.TryParse(e.CandidateId, out var g) ? g : Guid.Empty).Where(g => g != Guid.Empty).ToList();
        var known = await candidates.BrokerIdsAsync(ids, ct);
        QueueEntry With(QueueEntry e) => Guid.TryParse(e.CandidateId, out var g) && known.TryGetValue(g, out var b)
            ? e with { Broker = b.Broker, BrokerCandidateId = b.BrokerCandidateId }
            : e;
        return plan with { Spectrographs = plan.Spectrographs.Select(q => q with { Queue = q.Queue.Select(With).ToList() }).ToList() };
    }

    /// <summary>Candidates in state new or planned, with their photometry; the planner's id is the service's candidate id.</summary>
    private async Task<List<Candidate>> WaitingCandidatesAsync(IReadOnlySet<string> exclude, CancellationToken ct)
    {
        // One bulk read of the whole waiting set (rows and photometry), not one query per candidate.
        var waiting = await candidates.InStatesWithPhotometryAsync([CandidateState.New, CandidateState.Planned], ct);
        return waiting
            .Where(w => !exclude.Contains(w.Id.ToString()))
            .Select(w => w.Candidate with { Id = w.Id.ToString() })
            .ToList();
    }
}
