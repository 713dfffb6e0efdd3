using System.Text.Json;
using Triage.Api.Events;
using Triage.Api.Jobs;
using Triage.Core.Candidates;
using Triage.Core.Identification;
using Triage.Core.Planning;
using Triage.Core.Roster;
using Triage.Learning;
using Triage.Scheduling;
using Triage.Storage.Calibrations;
using Triage.Storage.Candidates;
using Triage.Storage.Jobs;
using Triage.Storage.NightOperations;
using Triage.Storage.Plans;
using Triage.Storage.Roster;

namespace Triage.Api.Plans;

/// <summary>
/// Computes a new plan version for a night from what the database holds now: the open roster,
/// the candidates still waiting for a spectrum (new or planned), the active calibration, closures and
/// reported conditions. A plan starts at the later of now (or <c>fromUtc</c>) and the night's start;
/// observations of the previous version executing then (or about to start) are kept, later ones are
/// anchored (kept unless a change gains more than the stability share). The version, the candidates'
/// state moves, its event and the job's completion are stored whole or not at all.
/// </summary>
public sealed class PlanJobHandler(
    RosterStore roster,
    CandidateStore candidates,
    CalibrationStore calibrations,
    PlanStore plans,
    NightOperationsStore operations,
    TimeProvider clock,
    Microsoft.Extensions.Options.IOptions<PlannerOptions> options,
    ILogger<PlanJobHandler> log) : IJobHandler
{
    public string Kind => PlanEndpoints.PlanJobKind;

    public async Task<string> RunAsync(JobRun run, IProgress<JobProgress> progress, CancellationToken ct)
    {
        var input = JsonSerializer.Deserialize<PlanJobInput>(run.InputJson, Triage.Api.Operations.OperationsSetup.JobJson)
            ?? throw new JobInputException("The job input is empty.");
        if (await plans.FindByJobAsync(run.JobId, ct) is { } stored)
        {
            // An earlier run of this job stored its version (and completed the job in that transaction, unless it ran before that rule).
            log.LogInformation("Job {JobId} already stored version {Version} of {Night}; not planned again", run.JobId, stored.Version, stored.Night);
            return ResultJson(stored);
        }
        var phases = new PhaseTimer(progress, clock);
        progress = phases;
        progress.Report(new JobProgress(0.02, "reading the active calibration"));
        var active = await calibrations.GetAsync(null, ct)
            ?? throw new JobInputException("No calibration is active: request one (POST /api/calibrations) or import a table first.");
        var document = CalibrationJson.Deserialize(active.DocumentJson);
        var surface = AccuracySurface.FromDocument(document);

        progress.Report(new JobProgress(0.05, "reading the roster"));
        var sites = (await roster.ListSitesAsync(new SiteFilter(), ct)).Select(v => v.Value).ToList();
        var spectrographs = (await roster.ListSpectrographsAsync(new SpectrographFilter(), ct)).Select(v => v.Value).ToList();

        // A replan starts at the later of now and the night's start (the builder clamps to the first dark start).
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

        progress.Report(new JobProgress(0.08, "choosing the candidate pool"));
        var mustKeep = PreviouslyAssigned(previousVersion?.BodyJson, start.KeptIds);
        var (pool, alsoPostedAs) = await PoolAsync(sites, spectrographs, surface, input, from, mustKeep, start.KeptIds, ct);
        progress.Report(new JobProgress(0.15, "reading the pool's photometry"));
        // A candidate with labelled reports is valued from its posterior (what a sharper spectrum would add).
        var waiting = (await candidates.WithPhotometryAsync(pool.Kept.Select(Guid.Parse).ToList(), ct, posteriorAsPrior: true))
            .Select(w => w.Candidate with { Id = w.Id.ToString() })
            .ToList();
        progress.Report(new JobProgress(0.25, $"fitting {waiting.Count} light curves"));
        var labels = document.Subtypes.Concat(DefaultSubtypeLabels.All).Distinct(StringComparer.Ordinal).ToArray();
        var targets = waiting.AsParallel().AsOrdered().WithCancellation(ct)
            .Select(c => (ITargetForecast)new AssessedTargetForecast(CandidateAssessment.Assess(c, labels), document.SnrReferenceWavelengthAngstrom))
            .ToList();

        progress.Report(new JobProgress(0.4, "building the night"));
        // The identification objective plans with each unit's calibration combined with its own outcomes.
        var sequential = input.Objective == PlanObjective.Identification
            ? new SequentialPlanSettings { Channels = LearnedChannels(surface, await candidates.LabelledTrialsAsync(ct), options.Value.UnitReliability) }
            : new SequentialPlanSettings();
        var night = NightProblemBuilder.Build(sites, spectrographs, targets, surface, input.Night, from, new NightBuildSettings
        {
            Objective = input.Objective,
            BusyUntilUtc = start.BusyUntilUtc,
            RemainingBudgetSeconds = NightReplan.RemainingBudget(previous, from, NightReplan.DefaultFreeze),
            Previous = start.Anchors,
            ChurnBudget = input.MaxChurnShare < 1 ? NightReplan.ChurnBudget(start, input.MaxChurnShare) : null,
            Closures = NightOperationsStore.ForPlanner(closures),
            Conditions = NightOperationsStore.ForPlanner(conditions),
            Sequential = sequential,
        });
        var plannedFrom = from > night.Problem.EpochUtc ? from : night.Problem.EpochUtc;
        progress.Report(new JobProgress(0.5, "solving"));
        var solver = new SolverSettings { TimeLimitSeconds = input.TimeLimitSeconds, Deterministic = input.Deterministic };
        var plan = NightPlanning.Plan(night, solver, ct) with { Night = input.Night, GeneratedUtc = now, Pool = pool.Report };
        plan = NightReplan.WithKept(plan, start.Kept);
        plan = await WithBrokerIdsAsync(plan, alsoPostedAs, ct);
        var churn = previous is null ? default : PlanChurn.Between(previous, plan, plannedFrom);
        var churnJson = previous is null ? null : JsonSerializer.Serialize(churn.Churn, PlanJson.Options);

        progress.Report(new JobProgress(0.95, "storing the version"));
        var scheduled = plan.Spectrographs.SelectMany(q => q.Queue)
            .Select(e => Guid.TryParse(e.CandidateId, out var g) ? g : Guid.Empty).Where(g => g != Guid.Empty).Distinct().ToList();
        PlanVersionRow row;
        try
        {
            // The version, the candidates it schedules moving to planned, and the job's completion commit together.
            row = await plans.AddVersionAsync(new NewPlanVersion(
                input.Night, plannedFrom, input.Objective.ToString().ToLowerInvariant(), plan.Summary.Status.ToString().ToLowerInvariant(),
                plan.Summary.ExpectedCorrectIdentifications, plan.Summary.Assigned, run.JobId, active.Row.Id, PlanJson.Serialize(plan))
            {
                TriggerKind = input.TriggerKind,
                TriggerDetail = input.TriggerDetail,
                ChurnJson = churnJson,
                CandidateIds = scheduled,
                EventBody = version => PlanEventBody.Serialize(input.Night, version, previousVersion?.Row.Version, now, plannedFrom,
                    input.TriggerKind, input.TriggerDetail, previous is null ? null : churn.Churn, churn.Changes ?? [], plan),
            }, now,
                async (conn, tx, version, token) => await JobStore.CompleteWithinAsync(conn, tx, run.JobId, ResultJson(version), clock.GetUtcNow(), token),
                ct);
        }
        catch (Npgsql.PostgresException e) when (e.ConstraintName == PlanStore.OnePerJobConstraint)
        {
            // Another run of the same job (its heartbeat went stale) stored first: that version is the result.
            if (await plans.FindByJobAsync(run.JobId, CancellationToken.None) is not { } raced)
            {
                throw;
            }
            return ResultJson(raced);
        }
        log.LogInformation("Planned {Assigned} of {Candidates} candidates for {Night} as version {Version} from {From} (trigger {Trigger}, churn {Churn}); seconds per step: {Steps}",
            plan.Summary.Assigned, plan.Summary.Candidates, input.Night, row.Version, plannedFrom, input.TriggerKind, churnJson, phases.Summary());
        return ResultJson(row);
    }

    /// <summary>The labelled reports of identified candidates as trials of their units (labels the calibration knows only).</summary>
    internal static UnitOutcomes LearnedChannels(AccuracySurface surface, IReadOnlyList<LabelledTrialRow> trials, bool unitReliability = true)
    {
        var outcomes = new UnitOutcomes(surface, new UnitOutcomeSettings { UnitReliability = unitReliability });
        var index = surface.Subtypes.Select((s, i) => (s, i)).ToDictionary(t => t.s, t => t.i, StringComparer.Ordinal);
        foreach (var t in trials)
        {
            if (index.TryGetValue(t.Truth, out var truth) && index.TryGetValue(t.Answer, out var answer))
            {
                var phase = t.PhaseDays is { } p ? new PhaseBelief(p, 0) : new PhaseBelief(0, AssessedTargetForecast.UnknownPhaseSigmaDays);
                outcomes.Add(new UnitTrial(t.SpectrographId.ToString(), t.ResolvingPower, t.Snr, phase, truth, answer));
            }
        }

        return outcomes;
    }

    private static string ResultJson(PlanVersionRow row) => JsonSerializer.Serialize(new
    {
        night = row.Night.ToString("yyyy-MM-dd", System.Globalization.CultureInfo.InvariantCulture),
        version = row.Version,
        url = $"/api/plans/{row.Night:yyyy-MM-dd}?version={row.Version}",
        plannedFrom = row.PlannedFrom,
        assigned = row.Assigned,
        expectedCorrectIdentifications = row.ExpectedIdentifications,
    });

    /// <summary>
    /// The bounded pool: a light row per waiting candidate (new, unsettled or planned; those executing at the
    /// replanning instant are kept apart), one post per transient when several brokers posted it (the others, and
    /// the waiting posts of a transient being observed or observed, are left out), ranked by an upper bound of value
    /// per hour; the latest version's assignments always stay, so a replan can keep what it planned.
    /// </summary>
    private async Task<(CandidatePoolSelection Selection, IReadOnlyDictionary<string, IReadOnlyList<string>> AlsoPostedAs)> PoolAsync(
        IReadOnlyList<Site> sites, IReadOnlyList<Spectrograph> spectrographs, AccuracySurface surface, PlanJobInput input, DateTimeOffset from,
        IReadOnlySet<string> mustKeep, IReadOnlySet<string> exclude, CancellationToken ct)
    {
        var rows = await candidates.PoolRowsAsync([CandidateState.New, CandidateState.Unsettled, CandidateState.Planned], ct);
        var night = NightStartUtc(input.Night);
        var sameTransient = options.Value.SameTransient;
        // Post i is rows[i] (the observed posts are appended after them).
        var posts = rows.Select(r => (Row: r, Id: r.Id.ToString())).Select(r => new TransientPost(r.Id, r.Row.RaDeg, r.Row.DecDeg, r.Row.DiscoveredAt,
                exclude.Contains(r.Id) ? PostStanding.Executing : r.Row.State == CandidateState.Unsettled ? PostStanding.Unsettled : PostStanding.Waiting,
                r.Row.ScienceWeight, r.Row.BrightestMagnitudeAB(night)))
            .ToList();
        if (rows.Count > 0)
        {
            var since = rows.Min(r => r.DiscoveredAt) - TimeSpan.FromDays(sameTransient.MaxDiscoveryGapDays);
            posts.AddRange((await candidates.ObservedPostsAsync(since, ct))
                .Select(o => new TransientPost(o.Id.ToString(), o.RaDeg, o.DecDeg, o.DiscoveredAt, PostStanding.Observed, 1, null)));
        }
        var grouped = SameTransient.Select(posts, mustKeep, sameTransient);
        var kept = grouped.Kept.ToHashSet(StringComparer.Ordinal);
        var pool = posts.Take(rows.Count)
            .Where(p => kept.Contains(p.Id))
            .Select(p => new PoolCandidate(p.Id, p.RaDeg, p.DecDeg, p.ScienceWeight, p.BrightestMagnitudeAB))
            .ToList();
        var waitingIds = pool.Select(p => p.Id).ToHashSet(StringComparer.Ordinal);
        var selection = CandidatePool.Select(sites, spectrographs, surface, input.Night, from, pool,
            mustKeep.Where(waitingIds.Contains).ToHashSet(StringComparer.Ordinal), input.Objective,
            new NightBuildSettings { Objective = input.Objective },
            new CandidatePoolSettings { MaxCandidates = options.Value.MaxPoolCandidates });
        selection = selection with { Report = selection.Report.WithSameTransient(grouped.StandsFor.Count, sameTransient) };
        log.LogInformation("Candidate pool for {Night}: {Kept} of {Waiting} waiting candidates ({SameTransient} other brokers' posts of a transient left out)",
            input.Night, selection.Report.Kept, selection.Report.Waiting, grouped.StandsFor.Count);
        return (selection, grouped.AlsoPostedAs);
    }

    /// <summary>Midnight UTC after the evening of the night: where the brightest magnitude is predicted.</summary>
    private static DateTimeOffset NightStartUtc(DateOnly night) => new(night.AddDays(1).ToDateTime(TimeOnly.MinValue), TimeSpan.Zero);

    /// <summary>Candidates in the queues of a plan body (except those kept as executing).</summary>
    private static HashSet<string> PreviouslyAssigned(string? bodyJson, IReadOnlySet<string> exclude)
    {
        if (bodyJson is null)
        {
            return new HashSet<string>(StringComparer.Ordinal);
        }
        return PlanJson.Deserialize(bodyJson).Spectrographs.SelectMany(q => q.Queue).Select(e => e.CandidateId)
            .Where(id => !exclude.Contains(id)).ToHashSet(StringComparer.Ordinal);
    }

    /// <summary>
    /// Adds the broker and the broker's own id to every entry (operators and brokers think in those ids), and the
    /// other brokers' posts of the same transient.
    /// </summary>
    private async Task<NightPlan> WithBrokerIdsAsync(NightPlan plan, IReadOnlyDictionary<string, IReadOnlyList<string>> alsoPostedAs, CancellationToken ct)
    {
        static Guid Parse(string id) => Guid.TryParse(id, out var g) ? g : Guid.Empty;
        var entries = plan.Spectrographs.SelectMany(q => q.Queue).Select(e => e.CandidateId).ToList();
        var others = entries.SelectMany(id => alsoPostedAs.TryGetValue(id, out var o) ? o : []).ToList();
        var ids = entries.Concat(others).Select(Parse).Where(g => g != Guid.Empty).Distinct().ToList();
        var known = await candidates.BrokerIdsAsync(ids, ct);
        OtherPost Other(string id) => known.TryGetValue(Parse(id), out var b) ? new OtherPost(id, b.Broker, b.BrokerCandidateId) : new OtherPost(id, null, null);
        QueueEntry With(QueueEntry e)
        {
            var entry = known.TryGetValue(Parse(e.CandidateId), out var b) ? e with { Broker = b.Broker, BrokerCandidateId = b.BrokerCandidateId } : e;
            return alsoPostedAs.TryGetValue(e.CandidateId, out var o) && o.Count > 0 ? entry with { AlsoPostedAs = o.Select(Other).ToList() } : entry;
        }
        return plan with { Spectrographs = plan.Spectrographs.Select(q => q with { Queue = q.Queue.Select(With).ToList() }).ToList() };
    }
}

/// <summary>Settings of the plan job (<c>Triage:Planner</c>).</summary>
public sealed class PlannerOptions
{
    /// <summary>Most candidates fitted and handed to the solver per plan (see <see cref="CandidatePool"/>). Default 2,000.</summary>
    public int MaxPoolCandidates { get; set; } = 2000;

    /// <summary>Two brokers' posts within this many arcseconds (and <see cref="SameTransientDays"/>) are one transient, planned once. Default 1.5″.</summary>
    public double SameTransientRadiusArcsec { get; set; } = 1.5;

    /// <summary>… and discovered within this many days of each other. Default 100.</summary>
    public double SameTransientDays { get; set; } = 100;

    /// <summary>
    /// Mix each unit's channel with its estimated share of uniform guesses (docs/sequential-triage.md §4). Default on;
    /// off for a network whose units err in structured ways (one subtype confused with another) rather than at random.
    /// </summary>
    public bool UnitReliability { get; set; } = true;

    /// <summary>The radius and the discovery gap as the grouping and the store take them.</summary>
    public SameTransientSettings SameTransient => new() { RadiusArcsec = SameTransientRadiusArcsec, MaxDiscoveryGapDays = SameTransientDays };
}

/// <summary>Passes progress on and remembers how long each step (the time between two reports) took, for the log.</summary>
internal sealed class PhaseTimer(IProgress<JobProgress> inner, TimeProvider clock) : IProgress<JobProgress>
{
    private readonly long _started = clock.GetTimestamp();
    private readonly List<(string Note, long At)> _marks = [];

    public void Report(JobProgress value)
    {
        lock (_marks)
        {
            _marks.Add((value.Note ?? "", clock.GetTimestamp()));
        }
        inner.Report(value);
    }

    /// <summary>"step: seconds; …" up to now.</summary>
    public string Summary()
    {
        lock (_marks)
        {
            var now = clock.GetTimestamp();
            return string.Join("; ", _marks.Select((m, i) => string.Create(System.Globalization.CultureInfo.InvariantCulture,
                $"{m.Note}: {clock.GetElapsedTime(m.At, i + 1 < _marks.Count ? _marks[i + 1].At : now).TotalSeconds:F2}")))
                + string.Create(System.Globalization.CultureInfo.InvariantCulture, $" (total {clock.GetElapsedTime(_started, now).TotalSeconds:F2})");
        }
    }
}
