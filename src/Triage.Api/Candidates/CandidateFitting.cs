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

    /// <summary>Fits up to <paramref name="limit"/> candidates whose fit is out of date; returns how many were fitted.</summary>
    public async Task<int> FitPendingAsync(int limit, CancellationToken ct)
    {
        int done = 0;
        foreach (var id in await store.PendingFitsAsync(limit, ct))
        {
            var detail = await store.GetAsync(id, ct);
            if (detail is not null)
            {
                await AssessAsync(detail, ct);
                done++;
            }
        }
        return done;
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

/// <summary>Keeps stored fits current after intake, a few dozen candidates at a time.</summary>
public sealed class CandidateFitWorker(IServiceProvider services, ILogger<CandidateFitWorker> log) : BackgroundService
{
    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        var fitting = services.GetRequiredService<CandidateFitting>();
        while (!stoppingToken.IsCancellationRequested)
        {
            int fitted = 0;
            try
            {
                fitted = await fitting.FitPendingAsync(64, stoppingToken);
                if (fitted > 0)
                {
                    log.LogDebug("Fitted {Candidates} candidates", fitted);
                }
            }
            catch (Exception ex) when (ex is not OperationCanceledException)
            {
                log.LogWarning(ex, "Background fitting failed; retrying shortly");
            }
            if (fitted == 0)
            {
                try
                {
                    await Task.Delay(TimeSpan.FromSeconds(1), stoppingToken);
                }
                catch (OperationCanceledException)
                {
                    return;
                }
            }
        }
    }
}
