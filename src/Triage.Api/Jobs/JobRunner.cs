using Microsoft.Extensions.Options;
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
            catch (Exception e)
            {
                // The database may be briefly unreachable; try again shortly.
                log.LogError(e, "Job worker loop failed; retrying");
                await Task.Delay(o.PollInterval, clock, stoppingToken);
            }
        }
    }

    private async Task RunOneAsync(JobRow job, JobOptions o, CancellationToken stoppingToken)
    {
        var started = clock.GetUtcNow();
        log.LogInformation("Job {JobId} ({Kind}) started, attempt {Attempt}", job.Id, job.Kind, job.Attempts);
        using var beat = CancellationTokenSource.CreateLinkedTokenSource(stoppingToken);
        var gate = new object();
        var latest = new JobProgress(0, "started");
        // Progress<T> would post to the thread pool out of order; a plain reporter keeps the last value.
        var progress = new InlineProgress<JobProgress>(p => { lock (gate) { latest = p; } });
        var heartbeat = Task.Run(async () =>
        {
            try
            {
                while (!beat.IsCancellationRequested)
                {
                    await Task.Delay(TimeSpan.FromSeconds(Math.Min(1, o.HeartbeatInterval.TotalSeconds)), clock, beat.Token);
                    JobProgress p;
                    lock (gate)
                    {
                        p = latest;
                    }
                    var elapsed = (clock.GetUtcNow() - started).TotalSeconds;
                    double? eta = p.Fraction > 0.01 ? elapsed * (1 - p.Fraction) / p.Fraction : null;
                    await store.ReportAsync(job.Id, p.Fraction, p.Note, eta, clock.GetUtcNow(), beat.Token);
                }
            }
            catch (OperationCanceledException)
            {
                // stopped with the job
            }
        }, CancellationToken.None);
        try
        {
            var result = await _handlers[job.Kind].RunAsync(job.Input, progress, stoppingToken);
            await beat.CancelAsync();
            await heartbeat;
            await store.CompleteAsync(job.Id, result, clock.GetUtcNow(), CancellationToken.None);
            log.LogInformation("Job {JobId} ({Kind}) succeeded in {ElapsedMs} ms", job.Id, job.Kind, (clock.GetUtcNow() - started).TotalMilliseconds);
        }
        catch (OperationCanceledException) when (stoppingToken.IsCancellationRequested)
        {
            // Shutting down: leave it running; the next start requeues it once its heartbeat is stale.
            await beat.CancelAsync();
            throw;
        }
        catch (Exception e)
        {
            await beat.CancelAsync();
            await heartbeat;
            var message = e is JobInputException ? e.Message : $"{e.GetType().Name}: {e.Message}";
            await store.FailAsync(job.Id, message, clock.GetUtcNow(), CancellationToken.None);
            log.LogWarning(e, "Job {JobId} ({Kind}) failed", job.Id, job.Kind);
        }
    }
}

/// <summary>Reports synchronously on the caller's thread (unlike <see cref="Progress{T}"/>, which posts out of order).</summary>
internal sealed class InlineProgress<T>(Action<T> report) : IProgress<T>
{
    public void Report(T value) => report(value);
}
