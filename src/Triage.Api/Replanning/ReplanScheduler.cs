using System.Collections.Concurrent;
using System.Text.Json;
using Microsoft.Extensions.Options;
using Triage.Api.Operations;
using Triage.Api.Plans;
using Triage.Core.Planning;
using Triage.Storage.Jobs;
using Triage.Storage.NightOperations;
using Triage.Storage.Plans;

namespace Triage.Api.Replanning;

/// <summary>Options of event-driven replanning (<c>Triage:Replanning</c>).</summary>
public sealed class ReplanOptions
{
    /// <summary>Replan on events at all. Default true.</summary>
    public bool Enabled { get; set; } = true;

    /// <summary>Quiet time after the last event before the replan is queued (events in a burst make one replan). Default 10 s.</summary>
    public TimeSpan Debounce { get; set; } = TimeSpan.FromSeconds(10);

    /// <summary>Least time between two versions of a night caused by events. Default 60 s.</summary>
    public TimeSpan MinimumInterval { get; set; } = TimeSpan.FromSeconds(60);

    /// <summary>How often pending requests are looked at. Default 500 ms.</summary>
    public TimeSpan Tick { get; set; } = TimeSpan.FromMilliseconds(500);

    /// <summary>Longest time between two looks for valuable arrivals even when this replica's intake was quiet (catches other replicas' intake). Default 60 s.</summary>
    public TimeSpan ArrivalPoll { get; set; } = TimeSpan.FromSeconds(60);

    /// <summary>Most changed candidates (the most recent) valued per look for a replan. Default 500.</summary>
    public int ArrivalLimit { get; set; } = 500;
}

/// <summary>
/// Turns events (a closure, a lost observation, a report that leaves a candidate unsettled, a valuable new candidate)
/// into replans of the affected night from now: debounced (a burst makes one replan, queued after
/// <see cref="ReplanOptions.Debounce"/> of quiet but at most 3 × that after the first event), at most one plan job per
/// night queued or running, and at least <see cref="ReplanOptions.MinimumInterval"/> after the night's latest version.
/// Only nights that already have a plan are replanned. The version records the trigger.
/// </summary>
public sealed class ReplanScheduler(
    JobStore jobs,
    PlanStore plans,
    NightOperationsStore operations,
    TimeProvider clock,
    IOptions<ReplanOptions> options,
    ILogger<ReplanScheduler> log) : BackgroundService
{
    private readonly ConcurrentDictionary<DateOnly, Pending> _pending = new();

    private sealed record Pending(string Kind, string Detail, DateTimeOffset FirstAt, DateTimeOffset LastAt, int Events);

    /// <summary>The local date of the evening of the night containing <paramref name="utc"/> at a site of longitude <paramref name="longitudeDeg"/> (east positive).</summary>
    public static DateOnly NightOf(DateTimeOffset utc, double longitudeDeg) => Triage.Core.Sky.DarkTime.NightOf(utc, longitudeDeg);

    /// <summary>Asks for a replan of <paramref name="night"/> because of <paramref name="kind"/> (closure, report, candidate).</summary>
    public void Request(DateOnly night, string kind, string detail)
    {
        if (!options.Value.Enabled)
        {
            return;
        }

        var now = clock.GetUtcNow();
        _pending.AddOrUpdate(night, _ => new Pending(kind, detail, now, now, 1),
            (_, p) => new Pending(p.Kind == kind ? kind : "events", p.Events >= 5 ? p.Detail : p.Detail + "; " + detail, p.FirstAt, now, p.Events + 1));
    }

    /// <summary>Requests not yet turned into a job (for tests and the status page).</summary>
    public int PendingCount => _pending.Count;

    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        await Task.Yield();
        while (!stoppingToken.IsCancellationRequested)
        {
            try
            {
                foreach (var (night, p) in _pending.ToArray())
                {
                    await ConsiderAsync(night, p, stoppingToken);
                }

                await Task.Delay(options.Value.Tick, stoppingToken);
            }
            catch (OperationCanceledException) when (stoppingToken.IsCancellationRequested)
            {
                return;
            }
            catch (Exception e)
            {
                log.LogError(e, "Replan scheduler failed; retrying");
                await Task.Delay(options.Value.Tick, stoppingToken);
            }
        }
    }

    private async Task ConsiderAsync(DateOnly night, Pending p, CancellationToken ct)
    {
        var o = options.Value;
        var now = clock.GetUtcNow();
        if (now - p.LastAt < o.Debounce && now - p.FirstAt < 3 * o.Debounce)
        {
            return;
        }

        var latest = (await plans.ListVersionsAsync(night, ct)).LastOrDefault();
        if (latest is null)
        {
            _pending.TryRemove(new KeyValuePair<DateOnly, Pending>(night, p));
            return;
        }

        if (now - latest.CreatedAt < o.MinimumInterval || await operations.PlanJobPendingAsync(night, ct))
        {
            return;
        }

        // Taken only if no newer event changed the entry meanwhile; a newer one is handled on the next tick.
        if (!_pending.TryRemove(new KeyValuePair<DateOnly, Pending>(night, p)))
        {
            return;
        }

        // A replan keeps the objective its night was planned with (a scheduler that asked for accuracy keeps it);
        // the default only stands in for a version whose objective this service does not know.
        var objective = PlanEndpoints.Objectives.TryGetValue(latest.Objective, out var ob) ? ob : PlanDefaults.Objective;
        var input = new PlanJobInput(night, objective, 5, null, true, p.Kind, p.Detail);
        var id = await jobs.EnqueueAsync(PlanEndpoints.PlanJobKind, JsonSerializer.Serialize(input, OperationsSetup.JobJson), null, now, ct);
        log.LogInformation("Replan of {Night} queued as job {JobId} after {Events} event(s): {Kind}: {Detail}", night, id, p.Events, p.Kind, p.Detail);
    }
}
