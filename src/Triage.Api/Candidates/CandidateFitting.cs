using System.Text.Json;
using Microsoft.Extensions.Options;
using Triage.Core.Candidates;
using Triage.Storage.Candidates;

namespace Triage.Api.Candidates;

/// <summary>Fits a stored candidate and keeps the stored fit current.</summary>
public sealed class CandidateFitting(CandidateStore store, IOptions<CandidateOptions> options, TimeProvider clock)
{
    private readonly string[] _labels = options.Value.SubtypeLabels;

    /// <summary>Fits a candidate; stores the result when the stored fit was out of date.</summary>
    public async Task<CandidateAssessment> AssessAsync(CandidateDetail detail, CancellationToken ct)
    {
        var assessment = CandidateAssessment.Assess(detail.Candidate, _labels);
        if (detail.FitVersion < detail.DataVersion)
        {
            await store.SaveFitAsync(ToStored(detail.Summary.Id, detail.DataVersion, assessment, clock.GetUtcNow()), ct);
        }
        return assessment;
    }

    /// <summary>
    /// Fits up to <paramref name="limit"/> candidates whose fit is out of date: one read for all
    /// of them, the fits on a thread of their own (so the light-curve arithmetic never holds a
    /// request thread), one write. Returns how many were fitted.
    /// </summary>
    public async Task<int> FitPendingAsync(int limit, CancellationToken ct)
    {
        var pending = await store.PendingFitsAsync(limit, ct);
        if (pending.Count == 0)
        {
            return 0;
        }
        var now = clock.GetUtcNow();
        var fits = await Task.Factory.StartNew(
            () => pending.Select(p => ToStored(p.Id, p.DataVersion, CandidateAssessment.Assess(p.Candidate, _labels), now)).ToList(),
            ct, TaskCreationOptions.LongRunning, TaskScheduler.Default);
        await store.SaveFitsAsync(fits, ct);
        return pending.Count;
    }

    private static StoredFit ToStored(Guid id, int dataVersion, CandidateAssessment a, DateTimeOffset now)
    {
        var m0 = a.LightCurve.PredictMagnitudeAtWavelength(now, CandidateSummaryResponse.PredictionWavelengthAngstrom);
        var m1 = a.LightCurve.PredictMagnitudeAtWavelength(now.AddDays(1), CandidateSummaryResponse.PredictionWavelengthAngstrom);
        bool ok = double.IsFinite(m0.Value) && double.IsFinite(m1.Value);
        return new StoredFit(id, dataVersion,
            JsonSerializer.Serialize(a.LightCurve.Snapshot(now), BrokerBatchJson.Options),
            JsonSerializer.Serialize(SubtypePriorResponse.From(a.Prior), BrokerBatchJson.Options),
            ok ? m0.Value : null, ok ? m1.Value - m0.Value : null, now);
    }
}

/// <summary>
/// Keeps stored fits current after intake, a batch at a time. It computes at most
/// <see cref="CandidateOptions.FitWorkerShare"/> of the time: after a batch it rests in
/// proportion, so a burst of intake is answered first and the fits catch up afterwards.
/// </summary>
public sealed class CandidateFitWorker(IServiceProvider services, IOptions<CandidateOptions> options, ILogger<CandidateFitWorker> log)
    : BackgroundService
{
    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        var fitting = services.GetRequiredService<CandidateFitting>();
        var o = options.Value;
        double share = Math.Clamp(o.FitWorkerShare, 0.05, 1);
        while (!stoppingToken.IsCancellationRequested)
        {
            int fitted = 0;
            long started = System.Diagnostics.Stopwatch.GetTimestamp(); // real time: the share is of the machine, not of the domain clock
            try
            {
                fitted = await fitting.FitPendingAsync(o.FitBatchSize, stoppingToken);
                if (fitted > 0)
                {
                    log.LogDebug("Fitted {Candidates} candidates", fitted);
                }
            }
            catch (Exception ex) when (ex is not OperationCanceledException)
            {
                log.LogWarning(ex, "Background fitting failed; retrying shortly");
            }
            var worked = System.Diagnostics.Stopwatch.GetElapsedTime(started);
            var rest = fitted == 0 ? TimeSpan.FromSeconds(1) : worked * ((1 - share) / share);
            try
            {
                if (rest > TimeSpan.Zero)
                {
                    await Task.Delay(rest, stoppingToken);
                }
            }
            catch (OperationCanceledException)
            {
                return;
            }
        }
    }
}
