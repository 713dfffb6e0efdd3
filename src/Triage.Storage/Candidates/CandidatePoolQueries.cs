using Dapper;
using Triage.Core.Candidates;

namespace Triage.Storage.Candidates;

/// <summary>
/// What the planner's candidate pool needs of one waiting candidate: position, weight and the
/// brightest flux seen (detections only) with the stored fit's linear magnitude model, no photometry rows.
/// </summary>
public sealed record PoolRow(
    Guid Id,
    double RaDeg,
    double DecDeg,
    double ScienceWeight,
    double? PeakFluxMicroJy,
    double? PredictedMag,
    double? PredictedMagRate,
    DateTimeOffset? FittedAt)
{
    /// <summary>When the broker first detected it.</summary>
    public DateTimeOffset DiscoveredAt { get; init; }

    /// <summary>Its lifecycle state.</summary>
    public CandidateState State { get; init; }

    /// <summary>
    /// The brightest AB magnitude known at <paramref name="atUtc"/>: the brightest detection, or the
    /// stored fit's prediction there when brighter; null without a detection or a fit.
    /// </summary>
    public double? BrightestMagnitudeAB(DateTimeOffset atUtc)
    {
        double? best = PeakFluxMicroJy is > 0 and var f ? AbMagnitude.FromMicroJansky(f) : null;
        if (PredictedMag is { } m && FittedAt is { } at)
        {
            var predicted = m + (PredictedMagRate ?? 0) * (atUtc - at).TotalDays;
            if (double.IsFinite(predicted) && (best is null || predicted < best))
            {
                best = predicted;
            }
        }
        return best;
    }
}

public sealed partial class CandidateStore
{
    // One row per waiting candidate from the candidate rows alone (the peak is kept by the intake
    // merge). JIT is off: compiling the scan took longer than running it.
    private const string PoolSql = """
        SELECT id AS Id, ra_deg AS RaDeg, dec_deg AS DecDeg, science_weight AS ScienceWeight, peak_flux_microjy AS PeakFluxMicroJy,
            predicted_mag AS PredictedMag, predicted_mag_rate AS PredictedMagRate, fitted_at AS FittedAt,
            discovered_at AS DiscoveredAt, state AS State
        FROM candidates WHERE state = ANY(@states)
        """;

    /// <summary>A light row (no photometry) for every candidate in one of <paramref name="states"/>.</summary>
    public async Task<IReadOnlyList<PoolRow>> PoolRowsAsync(IReadOnlyCollection<CandidateState> states, CancellationToken ct = default)
    {
        ArgumentNullException.ThrowIfNull(states);
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        await conn.ExecuteAsync(new CommandDefinition("SET LOCAL jit = off", transaction: tx, cancellationToken: ct));
        var rows = await conn.QueryAsync<PoolRowData>(new CommandDefinition(PoolSql,
            new { states = states.Select(CandidateLifecycle.Name).ToArray() }, tx, cancellationToken: ct));
        await tx.CommitAsync(ct);
        return rows.Select(r => new PoolRow(r.Id, r.RaDeg, r.DecDeg, r.ScienceWeight, r.PeakFluxMicroJy, r.PredictedMag, r.PredictedMagRate,
            r.FittedAt is { } f ? Utc.From(f) : null)
        {
            DiscoveredAt = Utc.From(r.DiscoveredAt),
            State = CandidateLifecycle.TryParse(r.State, out var state) ? state : throw new InvalidOperationException($"Unknown candidate state '{r.State}'."),
        }).ToList();
    }

    /// <summary>
    /// Id, position and discovery instant of every candidate with a spectrum taken (observed or classified) that was
    /// discovered at or after <paramref name="discoveredSince"/>: the posts a waiting candidate may duplicate.
    /// </summary>
    public async Task<IReadOnlyList<(Guid Id, double RaDeg, double DecDeg, DateTimeOffset DiscoveredAt)>> ObservedPostsAsync(
        DateTimeOffset discoveredSince, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<(Guid, double, double, DateTime)>(new CommandDefinition(
            "SELECT id, ra_deg, dec_deg, discovered_at FROM candidates WHERE state IN ('observed', 'classified') AND discovered_at >= @discoveredSince",
            new { discoveredSince }, cancellationToken: ct));
        return rows.Select(r => (r.Item1, r.Item2, r.Item3, Utc.From(r.Item4))).ToList();
    }

    /// <summary>
    /// The candidates in one of <paramref name="states"/> created at or after <paramref name="since"/> (id and creation
    /// instant), most recent first, at most <paramref name="limit"/> (through the <c>candidates_created</c> index).
    /// </summary>
    public async Task<IReadOnlyList<(Guid Id, DateTimeOffset CreatedAt)>> CreatedSinceAsync(IReadOnlyCollection<CandidateState> states, DateTimeOffset since, int limit, CancellationToken ct = default)
    {
        ArgumentNullException.ThrowIfNull(states);
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<(Guid, DateTime)>(new CommandDefinition(
            "SELECT id, created_at FROM candidates WHERE created_at >= @since AND state = ANY(@states) ORDER BY created_at DESC, id LIMIT @limit",
            new { since, states = states.Select(CandidateLifecycle.Name).ToArray(), limit }, cancellationToken: ct));
        return rows.Select(r => (r.Item1, Utc.From(r.Item2))).ToList();
    }

    private const string ByIdsSql = $"""
        SELECT {DetailColumns}
        FROM candidates WHERE id = ANY(@ids) ORDER BY id;
        SELECT candidate_id AS CandidateId, band AS Band, observed_at AS ObservedAt, flux_microjy AS FluxMicroJy,
            flux_error_microjy AS FluxErrorMicroJy, upper_limit AS UpperLimit, mag_ab AS MagAb, mag_ab_error AS MagAbError
        FROM candidate_photometry WHERE candidate_id = ANY(@ids) ORDER BY candidate_id, observed_at, band;
        """;

    /// <summary>
    /// The candidates with the given ids (those that exist) with their photometry, in one round trip, ordered by id.
    /// With <paramref name="posteriorAsPrior"/> a stored posterior (after labelled reports) replaces the broker's probabilities.
    /// </summary>
    public async Task<IReadOnlyList<(Guid Id, Candidate Candidate)>> WithPhotometryAsync(IReadOnlyCollection<Guid> ids, CancellationToken ct = default, bool posteriorAsPrior = false)
    {
        ArgumentNullException.ThrowIfNull(ids);
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await using var grid = await conn.QueryMultipleAsync(new CommandDefinition(ByIdsSql, new { ids = ids.ToArray() }, cancellationToken: ct));
        var rows = (await grid.ReadAsync<DetailRowData>()).ToList();
        var photometry = (await grid.ReadAsync<OwnedPhotometryRowData>()).ToLookup(p => p.CandidateId, p => p.Point.ToPoint());
        return rows.Select(r => (r.Id, r.ToCandidate(photometry[r.Id].ToList(), posteriorAsPrior))).ToList();
    }

    private sealed class PoolRowData
    {
        public Guid Id { get; init; }
        public double RaDeg { get; init; }
        public double DecDeg { get; init; }
        public double ScienceWeight { get; init; }
        public double? PeakFluxMicroJy { get; init; }
        public double? PredictedMag { get; init; }
        public double? PredictedMagRate { get; init; }
        public DateTime? FittedAt { get; init; }
        public DateTime DiscoveredAt { get; init; }
        public string State { get; init; } = "";
    }
}
