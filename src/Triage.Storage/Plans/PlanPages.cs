using Dapper;

namespace Triage.Storage.Plans;

/// <summary>A version's summary parts, cut out of the stored document by PostgreSQL (JSON texts).</summary>
public sealed record PlanSummaryRow(PlanVersionRow Row, string SummaryJson, string? PoolJson, string NotesJson, string QueuesJson, int UnassignedCount);

/// <summary>One page of a version's unassigned candidates (JSON array text), after the 1-based position <see cref="After"/>.</summary>
public sealed record UnassignedPageRow(PlanVersionRow Row, int Total, int After, string ItemsJson, int Count);

public sealed partial class PlanStore
{
    private const string SummarySql = $"""
        SELECT {Columns}, (body->'summary')::text AS Summary, (body->'pool')::text AS Pool,
            COALESCE(body->'notes', '[]'::jsonb)::text AS Notes,
            COALESCE(jsonb_array_length(body->'unassigned'), 0) AS UnassignedCount,
            COALESCE((SELECT jsonb_agg(jsonb_build_object(
                    'spectrographId', q->'spectrographId', 'name', q->'name', 'siteName', q->'siteName',
                    'resolvingPower', q->'resolvingPower', 'budgetSeconds', q->'budgetSeconds', 'usedSeconds', q->'usedSeconds',
                    'cost', q->'cost', 'observations', jsonb_array_length(q->'queue')) ORDER BY n)
                FROM jsonb_array_elements(body->'spectrographs') WITH ORDINALITY AS s(q, n)), '[]'::jsonb)::text AS Queues
        FROM plans WHERE night = @night AND (@version::int IS NULL OR version = @version)
        ORDER BY version DESC LIMIT 1
        """;

    /// <summary>The summary, pool record, notes and per-queue counts of a version (the latest when <paramref name="version"/> is null), without the queues and unassigned lists.</summary>
    public async Task<PlanSummaryRow?> GetSummaryAsync(DateOnly night, int? version, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var r = await conn.QuerySingleOrDefaultAsync<SummaryRecord>(new CommandDefinition(SummarySql, new { night, version }, cancellationToken: ct));
        return r is null ? null : new PlanSummaryRow(r.ToRow(), r.Summary ?? "null", r.Pool, r.Notes ?? "[]", r.Queues ?? "[]", r.UnassignedCount);
    }

    private const string QueueSql = $"""
        SELECT {Columns}, (SELECT q::text FROM jsonb_array_elements(body->'spectrographs') AS s(q)
                           WHERE lower(q->>'spectrographId') = lower(@spectrographId) LIMIT 1) AS Body
        FROM plans WHERE night = @night AND (@version::int IS NULL OR version = @version)
        ORDER BY version DESC LIMIT 1
        """;

    /// <summary>One spectrograph's queue of a version (JSON text; null when the version has no such queue), or null when there is no such version.</summary>
    public async Task<(PlanVersionRow Row, string? QueueJson)?> GetQueueAsync(DateOnly night, int? version, string spectrographId, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var r = await conn.QuerySingleOrDefaultAsync<Record>(new CommandDefinition(QueueSql, new { night, version, spectrographId }, cancellationToken: ct));
        return r is null ? null : (r.ToRow(), r.Body);
    }

    private const string UnassignedSql = $"""
        SELECT {Columns}, COALESCE(jsonb_array_length(body->'unassigned'), 0) AS Total,
            COALESCE((SELECT jsonb_agg(u ORDER BY n) FROM (
                SELECT u, n FROM jsonb_array_elements(body->'unassigned') WITH ORDINALITY AS x(u, n)
                WHERE n > @after ORDER BY n LIMIT @limit) page), '[]'::jsonb)::text AS Items
        FROM plans WHERE night = @night AND (@version::int IS NULL OR version = @version)
        ORDER BY version DESC LIMIT 1
        """;

    /// <summary>
    /// Up to <paramref name="limit"/> unassigned candidates of a version (the latest when
    /// <paramref name="version"/> is null) after the 1-based position <paramref name="after"/>, in the plan's order.
    /// </summary>
    public async Task<UnassignedPageRow?> GetUnassignedPageAsync(DateOnly night, int? version, int after, int limit, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var r = await conn.QuerySingleOrDefaultAsync<PageRecord>(new CommandDefinition(UnassignedSql, new { night, version, after, limit }, cancellationToken: ct));
        if (r is null)
        {
            return null;
        }
        var count = Math.Max(0, Math.Min(limit, r.Total - after));
        return new UnassignedPageRow(r.ToRow(), r.Total, after, r.Items ?? "[]", count);
    }

    private class SummaryRecord : Record
    {
        public string? Summary { get; init; }
        public string? Pool { get; init; }
        public string? Notes { get; init; }
        public string? Queues { get; init; }
        public int UnassignedCount { get; init; }
    }

    private sealed class PageRecord : Record
    {
        public int Total { get; init; }
        public string? Items { get; init; }
    }
}
