using Microsoft.Extensions.Options;
using Triage.Core.Candidates;
using Triage.Core.Planning;
using Triage.Core.Sky;
using Triage.Learning;
using Triage.Api.Candidates;
using Triage.Api.Plans;
using Triage.Storage.Candidates;
using Triage.Storage.NightOperations;
using Triage.Storage.Plans;
using Triage.Storage.Roster;

namespace Triage.Api.Replanning;

/// <summary>
/// Asks for a replan when a candidate that arrived after tonight's plan is worth more per hour of some
/// unit's time than that time is worth in the active version (<see cref="ArrivalValue"/>). Intake calls
/// <see cref="Notice"/>; after <see cref="ReplanOptions.Debounce"/> of quiet (and at least every
/// <see cref="ReplanOptions.ArrivalPoll"/>, which also catches intake on other replicas) the candidates created since
/// the last look, after the night's active version was computed, and still new are fitted and valued from now against
/// every night that has a plan and contains now at some site. Candidates the active version weighed (also those it
/// dropped back to new) are not arrivals.
/// </summary>
public sealed class ArrivalWatch(
    CandidateStore candidates,
    IdentificationModel calibration,
    RosterStore roster,
    PlanStore plans,
    NightOperationsStore operations,
    ReplanScheduler replans,
    TimeProvider clock,
    IOptions<ReplanOptions> options,
    IOptions<Triage.Api.Plans.PlannerOptions> planner,
    ILogger<ArrivalWatch> log) : BackgroundService
{
    private long _notices;
    private long _lastNoticeTimestamp;
    private long _noticesSeen;
    private long _lastLookTimestamp = clock.GetTimestamp();
    private DateTimeOffset _watermark = clock.GetUtcNow();

    /// <summary>Candidates were created or updated just now (called by intake after its commit).</summary>
    public void Notice()
    {
        Interlocked.Exchange(ref _lastNoticeTimestamp, clock.GetTimestamp());
        Interlocked.Increment(ref _notices);
    }

    /// <summary>How many looks found an arrival worth a replan (for the status page and tests).</summary>
    public int Triggered { get; private set; }

    /// <summary>How many looks at new candidates were completed (for the status page and tests).</summary>
    public int Looks { get; private set; }

    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        await Task.Yield();
        while (!stoppingToken.IsCancellationRequested)
        {
            try
            {
                // Quiet spells and the poll are measured on the monotonic clock; instants on the wall clock.
                var o = options.Value;
                var notices = Interlocked.Read(ref _notices);
                var quietAfterNotice = notices != _noticesSeen && clock.GetElapsedTime(Interlocked.Read(ref _lastNoticeTimestamp)) >= o.Debounce;
                if (o.Enabled && (quietAfterNotice || clock.GetElapsedTime(_lastLookTimestamp) >= o.ArrivalPoll))
                {
                    _noticesSeen = notices;
                    _lastLookTimestamp = clock.GetTimestamp();
                    await LookAsync(clock.GetUtcNow(), stoppingToken);
                }

                await Task.Delay(o.Tick, stoppingToken);
            }
            catch (OperationCanceledException) when (stoppingToken.IsCancellationRequested)
            {
                return;
            }
            catch (Exception e) when (e is Npgsql.NpgsqlException or TimeoutException)
            {
                log.LogWarning("Arrival watch could not read the database ({Message}); retrying", e.Message);
                await Task.Delay(options.Value.Tick, stoppingToken);
            }
        }
    }

    private async Task LookAsync(DateTimeOffset now, CancellationToken ct)
    {
        // Rows created shortly before the last look are read again (a commit may land after its look started, and a
        // set clock may step back): harmless, a candidate planned meanwhile is no longer new.
        var margin = 2 * options.Value.Debounce + TimeSpan.FromSeconds(2);
        var since = (now - margin < _watermark ? now - margin : _watermark).AddSeconds(-1);
        var ids = await candidates.CreatedSinceAsync([CandidateState.New], since, options.Value.ArrivalLimit, ct);
        _watermark = now;
        try
        {
            if (ids.Count > 0)
            {
                await ValueAsync(ids, now, ct);
            }
        }
        finally
        {
            Looks++;
        }
    }

    private async Task ValueAsync(IReadOnlyList<(Guid Id, DateTimeOffset CreatedAt)> created, DateTimeOffset now, CancellationToken ct)
    {
        var sites = (await roster.ListSitesAsync(new SiteFilter(), ct)).Select(v => v.Value).ToList();
        var spectrographs = (await roster.ListSpectrographsAsync(new SpectrographFilter(), ct)).Select(v => v.Value).ToList();
        List<ITargetForecast>? targets = null;
        SequentialPlanSettings? sequential = null;
        foreach (var night in sites.Select(s => DarkTime.NightOf(now, s.LongitudeDeg)).Distinct().Order())
        {
            if (await plans.GetAsync(night, null, ct) is not { } latest)
            {
                continue;
            }

            if (await calibration.GetAsync(ct) is not { } active)
            {
                return;
            }

            // Only candidates created after the active version read its pool are arrivals: it weighed the others.
            var plan = PlanJson.Deserialize(latest.BodyJson);
            var computed = plan.GeneratedUtc ?? latest.Row.CreatedAt;
            var arrivals = created.Where(c => c.CreatedAt > computed).Select(c => c.Id).ToHashSet();
            arrivals = await NewTransientsAsync(arrivals, computed, ct);
            if (arrivals.Count == 0)
            {
                continue;
            }

            targets ??= await ForecastsAsync(created.Select(c => c.Id).ToList(), active.Surface, active.SnrReferenceWavelengthAngstrom, ct);
            var nightStart = new DateTimeOffset(night.ToDateTime(TimeOnly.MinValue), TimeSpan.Zero);
            var closures = await operations.ClosuresAsync(nightStart.AddHours(-12), nightStart.AddDays(2), null, ct);
            var conditions = await operations.ConditionsAtAsync(now, null, ct);
            // Valued as the plan job values them: under identification with each unit's channel learned from its outcomes.
            if (plan.Objective == PlanObjective.Identification)
            {
                sequential ??= new SequentialPlanSettings { Channels = PlanJobHandler.LearnedChannels(active.Surface, await candidates.LabelledTrialsAsync(ct), planner.Value.UnitReliability) };
            }

            var built = NightProblemBuilder.Build(sites, spectrographs, targets.Where(t => arrivals.Contains(Guid.Parse(t.Id))).ToList(), active.Surface, night, now, new NightBuildSettings
            {
                Objective = plan.Objective,
                Sequential = sequential ?? new SequentialPlanSettings(),
                Closures = NightOperationsStore.ForPlanner(closures),
                Conditions = NightOperationsStore.ForPlanner(conditions),
            });
            var valuable = ArrivalValue.ExceedingMargin(built, plan);
            if (valuable.Count == 0)
            {
                continue;
            }

            var top = valuable[0];
            var names = await candidates.BrokerIdsAsync([Guid.Parse(top.CandidateId)], ct);
            var name = names.TryGetValue(Guid.Parse(top.CandidateId), out var b) ? b.BrokerCandidateId : top.CandidateId;
            var detail = string.Create(System.Globalization.CultureInfo.InvariantCulture,
                $"new candidate {name} would earn {top.ValuePerHour:F2}/h on {top.UnitName}, above the {top.MarginalValuePerHour:F2}/h its time earns at the margin")
                + (valuable.Count > 1 ? $" (and {valuable.Count - 1} more)" : "");
            Triggered++;
            replans.Request(night, "candidate", detail);
            log.LogInformation("Arrivals worth a replan of {Night}: {Detail}", night, detail);
        }
    }

    /// <summary>
    /// The arrivals that are new transients: not another broker's post of one the version already weighed (a linked post
    /// stored before the version was computed, in any state but abandoned or stale) or one whose spectrum is taken. The
    /// replan would take such a post out of its pool again (docs/planner.md §10a), so it is no reason to replan.
    /// </summary>
    private async Task<HashSet<Guid>> NewTransientsAsync(HashSet<Guid> arrivals, DateTimeOffset versionComputed, CancellationToken ct)
    {
        var fresh = new HashSet<Guid>();
        foreach (var id in arrivals)
        {
            var linked = await candidates.SameTransientAsync(id, planner.Value.SameTransient, ct);
            if (!linked.Any(r => r.State is "observed" or "classified"
                || (r.State is not ("abandoned" or "stale") && r.CreatedAt <= versionComputed)))
            {
                fresh.Add(id);
            }
        }
        return fresh;
    }

    private async Task<List<ITargetForecast>> ForecastsAsync(IReadOnlyList<Guid> ids, AccuracySurface surface, double referenceWavelength, CancellationToken ct)
    {
        var labels = surface.Subtypes.Concat(DefaultSubtypeLabels.All).Distinct(StringComparer.Ordinal).ToArray();
        return (await candidates.WithPhotometryAsync(ids, ct, posteriorAsPrior: true))
            .Select(w => (ITargetForecast)new AssessedTargetForecast(CandidateAssessment.Assess(w.Candidate with { Id = w.Id.ToString() }, labels), referenceWavelength))
            .ToList();
    }
}
