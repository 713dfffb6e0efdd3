using Microsoft.Extensions.Options;
using Triage.Storage;
using Triage.Storage.Jobs;

namespace Triage.Api.Jobs;

/// <summary>
/// The in-process worker: recovers jobs interrupted by a restart, then claims queued jobs one
/// at a time and runs them with progress, heartbeat and an ETA written to PostgreSQL.
/// </summary>
public sealed class JobRunner(
    JobStore store,
    IEnumerable<IJobHandler> handlers,
    TimeProvider clock,
    IOptions<JobOptions> options,
    Triage.Api.Operations.JobWakeup wakeup,
    ILogger<JobRunner> log) : BackgroundService
{
    private readonly Dictionary<string, IJobHandler> _handlers = handlers.ToDictionary(h => h.Kind, StringComparer.Ordinal);

    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        var o = options.Value;
        if (_handlers.Count == 0)
        {
            return;
        }
        await Task.Yield();
        DateTimeOffset? unavailableSince = null;
        while (!stoppingToken.IsCancellationRequested)
        {
            try
            {
                var recovered = await store.RecoverInterruptedAsync(o.StaleAfter, clock.GetUtcNow(), stoppingToken);
                if (recovered > 0)
                {
                    log.LogWarning("Recovered {Count} jobs interrupted by a restart", recovered);
                }
                var job = await store.ClaimNextAsync(_handlers.Keys, clock.GetUtcNow(), stoppingToken);
                if (unavailableSince is { } since)
                {
                    log.LogInformation("Job worker reached the database again after {Seconds:0.0} s", (clock.GetUtcNow() - since).TotalSeconds);
                    unavailableSince = null;
                }
                if (job is null)
                {
                    // Polling stays the fallback; a job queued on any replica wakes the worker at once.
                    await wakeup.WaitAsync(o.PollInterval, stoppingToken);
                    continue;
                }
                await RunOneAsync(job, o, stoppingToken);
            }
            catch (OperationCanceledException) when (stoppingToken.IsCancellationRequested)
            {
                return;
            }
            catch (Exception e) when (DatabaseFaults.IsUnavailable(e))
            {
                // The database is away: one line when it goes, one when it is back, polls backing off to 5 s meanwhile.
                if (unavailableSince is null)
                {
                    unavailableSince = clock.GetUtcNow();
                    log.LogWarning("Job worker cannot reach the database ({Reason}); retrying", e.Message);
                }
                var waited = clock.GetUtcNow() - unavailableSince.Value;
                await Task.Delay(TimeSpan.FromTicks(Math.Clamp(waited.Ticks, o.PollInterval.Ticks, TimeSpan.FromSeconds(5).Ticks)), clock, stoppingToken);
                continue;
            }
            catch (Exception e)
            {
                log.LogError(e, "Job worker loop failed; retrying");
                await Task.Delay(o.PollInterval, clock, stoppingToken);
            }
        }
    }

    /// <summary>A job requeued this many times because the database failed under it is failed instead.</summary>
    public const int MaxUnavailableAttempts = 5;

    private async Task RunOneAsync(JobRow job, JobOptions o, CancellationToken stoppingToken)
    {
        var started = clock.GetUtcNow();
        log.LogInformation("Job {JobId} ({Kind}) started, attempt {Attempt}", job.Id, job.Kind, job.Attempts);
        using var beat = CancellationTokenSource.CreateLinkedTokenSource(stoppingToken);
        var gate = new object();
        var latest = new JobProgress(0, "started");
        // Progress<T> would post to the thread pool out of order; a plain reporter keeps the last value.
        var progress = new InlineProgress<JobProgress>(p => { lock (gate) { latest = p; } });
        var heartbeat = Task.Run(() => BeatAsync(job.Id, started, o, () => { lock (gate) { return latest; } }, beat.Token), CancellationToken.None);
        try
        {
            var result = await _handlers[job.Kind].RunAsync(new JobRun(job.Id, job.Kind, job.Input, job.Attempts) { Worker = o.WorkerName }, progress, stoppingToken);
            await StopAsync(beat, heartbeat);
            // Handlers that store a result completed the job in that transaction; this records the others (and is a no-op then).
            await PersistAsync(ct => store.CompleteAsync(job.Id, result, clock.GetUtcNow(), ct), o, stoppingToken);
            log.LogInformation("Job {JobId} ({Kind}) succeeded in {ElapsedMs} ms", job.Id, job.Kind, (clock.GetUtcNow() - started).TotalMilliseconds);
        }
        catch (JobSplitIntoParts split)
        {
            // Its parts carry the work now (on any replica); the last of them completes it.
            await StopAsync(beat, heartbeat);
            log.LogInformation("Job {JobId} ({Kind}) handed its work to {Parts} parts", job.Id, job.Kind, split.Parts);
        }
        catch (OperationCanceledException) when (stoppingToken.IsCancellationRequested)
        {
            // Shutting down: leave it running; the next start requeues it once its heartbeat is stale.
            await StopAsync(beat, heartbeat);
            throw;
        }
        catch (Exception e) when (DatabaseFaults.IsUnavailable(e) && job.Attempts < MaxUnavailableAttempts)
        {
            // The database went away under the job: nothing of its result was stored, so it runs again later.
            await StopAsync(beat, heartbeat);
            log.LogWarning("Job {JobId} ({Kind}) interrupted by the database ({Reason}); queued again", job.Id, job.Kind, e.Message);
            await PersistAsync(ct => store.RequeueAsync(job.Id, "the database was unavailable; queued again", ct), o, stoppingToken);
        }
        catch (Exception e)
        {
            await StopAsync(beat, heartbeat);
            var message = e switch
            {
                JobInputException => e.Message,
                _ when DatabaseFaults.IsUnavailable(e) => $"the database was unavailable on {job.Attempts} attempts; not retried again",
                _ => $"the job failed on an internal error; the service log holds the details under job id {job.Id}",
            };
            log.LogWarning(e, "Job {JobId} ({Kind}) failed", job.Id, job.Kind);
            await PersistAsync(ct => store.FailAsync(job.Id, message, clock.GetUtcNow(), ct), o, stoppingToken);
        }
    }

    /// <summary>
    /// Beats the heartbeat with the latest progress until stopped. A failed write (the database
    /// briefly away, the pool full) is logged once per streak and retried on the next beat: it
    /// never ends the heartbeat and never touches the job's outcome.
    /// </summary>
    private async Task BeatAsync(Guid jobId, DateTimeOffset started, JobOptions o, Func<JobProgress> latest, CancellationToken ct)
    {
        var failing = false;
        while (!ct.IsCancellationRequested)
        {
            try
            {
                await Task.Delay(TimeSpan.FromSeconds(Math.Min(1, o.HeartbeatInterval.TotalSeconds)), clock, ct);
                var p = latest();
                var elapsed = (clock.GetUtcNow() - started).TotalSeconds;
                double? eta = p.Fraction > 0.01 ? elapsed * (1 - p.Fraction) / p.Fraction : null;
                await store.ReportAsync(jobId, p.Fraction, p.Note, eta, clock.GetUtcNow(), ct);
                if (failing)
                {
                    log.LogInformation("Heartbeat of job {JobId} written again", jobId);
                    failing = false;
                }
            }
            catch (OperationCanceledException) when (ct.IsCancellationRequested)
            {
                return; // stopped with the job
            }
            catch (Exception e)
            {
                if (!failing)
                {
                    log.LogWarning("Heartbeat of job {JobId} could not be written ({Reason}); retrying", jobId, e.Message);
                    failing = true;
                }
            }
        }
    }

    private static async Task StopAsync(CancellationTokenSource beat, Task heartbeat)
    {
        await beat.CancelAsync();
        await heartbeat; // never throws: the heartbeat catches everything
    }

    /// <summary>Records a job's end, retrying while the database is unavailable (up to <see cref="JobOptions.FinishRetryFor"/>).</summary>
    private async Task PersistAsync(Func<CancellationToken, Task> write, JobOptions o, CancellationToken stoppingToken)
    {
        var deadline = clock.GetUtcNow() + o.FinishRetryFor;
        var wait = TimeSpan.FromMilliseconds(250);
        while (true)
        {
            try
            {
                await write(stoppingToken);
                return;
            }
            catch (Exception e) when (DatabaseFaults.IsUnavailable(e) && clock.GetUtcNow() < deadline && !stoppingToken.IsCancellationRequested)
            {
                log.LogWarning("Recording a job's end failed ({Reason}); retrying in {Wait} s", e.Message, wait.TotalSeconds);
                await Task.Delay(wait, clock, stoppingToken);
                wait = TimeSpan.FromTicks(Math.Min(wait.Ticks * 2, TimeSpan.FromSeconds(5).Ticks));
            }
        }
    }
}

/// <summary>Reports synchronously on the caller's thread (unlike <see cref="Progress{T}"/>, which posts out of order).</summary>
internal sealed class InlineProgress<T>(Action<T> report) : IProgress<T>
{
    public void Report(T value) => report(value);
}
