using Dapper;
using Npgsql;
using Triage.Core.Planning;

namespace Triage.Storage.NightOperations;

/// <summary>A stored closure of a site or of one of its spectrographs.</summary>
public sealed record ClosureRow(
    Guid Id, Guid SiteId, Guid? SpectrographId, DateTimeOffset FromUtc, DateTimeOffset ToUtc, string Reason, string? Note,
    DateTimeOffset CreatedAt, string CreatedBy);

/// <summary>Stored conditions reported by a site, valid from <paramref name="MeasuredAt"/> to <paramref name="ValidUntil"/>.</summary>
public sealed record ConditionsRow(
    Guid Id, Guid SiteId, DateTimeOffset MeasuredAt, DateTimeOffset ValidUntil, double? SeeingArcsec, double? ExtinctionOffsetMag,
    double? SkyBrightnessMagArcsec2, DateTimeOffset CreatedAt, string CreatedBy);

/// <summary>Closures and reported conditions: what the planner must avoid and what it should assume tonight.</summary>
public sealed class NightOperationsStore(NpgsqlDataSource dataSource)
{
    private const string ClosureColumns = """
        id AS Id, site_id AS SiteId, spectrograph_id AS SpectrographId, from_utc AS FromUtc, to_utc AS ToUtc, reason AS Reason,
        note AS Note, created_at AS CreatedAt, created_by AS CreatedBy
        """;

    private const string ConditionsColumns = """
        id AS Id, site_id AS SiteId, measured_at AS MeasuredAt, valid_until AS ValidUntil, seeing_arcsec AS SeeingArcsec,
        extinction_offset_mag AS ExtinctionOffsetMag, sky_brightness_mag_arcsec2 AS SkyBrightnessMagArcsec2,
        created_at AS CreatedAt, created_by AS CreatedBy
        """;

    /// <summary>Stores a closure (idempotent on its id).</summary>
    public async Task<ClosureRow> AddClosureAsync(ClosureRow closure, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await conn.ExecuteAsync(new CommandDefinition("""
            INSERT INTO closures (id, site_id, spectrograph_id, from_utc, to_utc, reason, note, created_at, created_by)
            VALUES (@Id, @SiteId, @SpectrographId, @From, @To, @Reason, @Note, @Created, @CreatedBy)
            ON CONFLICT (id) DO NOTHING
            """, new
        {
            closure.Id, closure.SiteId, closure.SpectrographId, From = closure.FromUtc.UtcDateTime, To = closure.ToUtc.UtcDateTime,
            closure.Reason, closure.Note, Created = closure.CreatedAt.UtcDateTime, closure.CreatedBy,
        }, cancellationToken: ct));
        return closure;
    }

    /// <summary>Closures overlapping [from, to), optionally of one site, ordered by start.</summary>
    public async Task<IReadOnlyList<ClosureRow>> ClosuresAsync(DateTimeOffset from, DateTimeOffset to, Guid? siteId = null, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<ClosureData>(new CommandDefinition($"""
            SELECT {ClosureColumns} FROM closures
            WHERE to_utc > @from AND from_utc < @to AND (@site::uuid IS NULL OR site_id = @site)
            ORDER BY from_utc, id
            """, new { from = from.UtcDateTime, to = to.UtcDateTime, site = siteId }, cancellationToken: ct));
        return rows.Select(r => r.ToRow()).ToList();
    }

    /// <summary>A closure by id.</summary>
    public async Task<ClosureRow?> GetClosureAsync(Guid id, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var row = await conn.QuerySingleOrDefaultAsync<ClosureData>(new CommandDefinition(
            $"SELECT {ClosureColumns} FROM closures WHERE id = @id", new { id }, cancellationToken: ct));
        return row?.ToRow();
    }

    /// <summary>Deletes a closure (reopening the span); false when there was none.</summary>
    public async Task<bool> DeleteClosureAsync(Guid id, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        return await conn.ExecuteAsync(new CommandDefinition("DELETE FROM closures WHERE id = @id", new { id }, cancellationToken: ct)) == 1;
    }

    /// <summary>Stores reported conditions.</summary>
    public async Task<ConditionsRow> AddConditionsAsync(ConditionsRow c, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await conn.ExecuteAsync(new CommandDefinition("""
            INSERT INTO site_conditions (id, site_id, measured_at, valid_until, seeing_arcsec, extinction_offset_mag,
                sky_brightness_mag_arcsec2, created_at, created_by)
            VALUES (@Id, @SiteId, @Measured, @Until, @SeeingArcsec, @ExtinctionOffsetMag, @SkyBrightnessMagArcsec2, @Created, @CreatedBy)
            ON CONFLICT (id) DO NOTHING
            """, new
        {
            c.Id, c.SiteId, Measured = c.MeasuredAt.UtcDateTime, Until = c.ValidUntil.UtcDateTime, c.SeeingArcsec, c.ExtinctionOffsetMag,
            c.SkyBrightnessMagArcsec2, Created = c.CreatedAt.UtcDateTime, c.CreatedBy,
        }, cancellationToken: ct));
        return c;
    }

    /// <summary>Per site, the latest conditions valid at <paramref name="at"/>.</summary>
    public async Task<IReadOnlyList<ConditionsRow>> ConditionsAtAsync(DateTimeOffset at, Guid? siteId = null, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<ConditionsData>(new CommandDefinition($"""
            SELECT DISTINCT ON (site_id) {ConditionsColumns} FROM site_conditions
            WHERE measured_at <= @at AND valid_until > @at AND (@site::uuid IS NULL OR site_id = @site)
            ORDER BY site_id, measured_at DESC, created_at DESC
            """, new { at = at.UtcDateTime, site = siteId }, cancellationToken: ct));
        return rows.Select(r => r.ToRow()).ToList();
    }

    /// <summary>Whether a plan job for <paramref name="night"/> is queued or running.</summary>
    public async Task<bool> PlanJobPendingAsync(DateOnly night, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        return await conn.ExecuteScalarAsync<bool>(new CommandDefinition("""
            SELECT EXISTS (SELECT 1 FROM jobs WHERE kind = 'plan' AND status IN ('queued', 'running') AND input->>'night' = @night)
            """, new { night = night.ToString("yyyy-MM-dd", System.Globalization.CultureInfo.InvariantCulture) }, cancellationToken: ct));
    }

    /// <summary>The closures as the planner takes them.</summary>
    public static IReadOnlyList<UnitClosure> ForPlanner(IEnumerable<ClosureRow> rows) =>
        rows.Select(r => new UnitClosure(r.SiteId, r.SpectrographId, r.FromUtc, r.ToUtc)).ToList();

    /// <summary>The conditions as the planner takes them, per site.</summary>
    public static IReadOnlyDictionary<Guid, SiteConditions> ForPlanner(IEnumerable<ConditionsRow> rows) =>
        rows.ToDictionary(r => r.SiteId, r => new SiteConditions(r.SeeingArcsec, r.ExtinctionOffsetMag, r.SkyBrightnessMagArcsec2));

    private sealed class ClosureData
    {
        public Guid Id { get; init; }
        public Guid SiteId { get; init; }
        public Guid? SpectrographId { get; init; }
        public DateTime FromUtc { get; init; }
        public DateTime ToUtc { get; init; }
        public string Reason { get; init; } = "";
        public string? Note { get; init; }
        public DateTime CreatedAt { get; init; }
        public string CreatedBy { get; init; } = "";

        public ClosureRow ToRow() => new(Id, SiteId, SpectrographId, Utc.From(FromUtc), Utc.From(ToUtc), Reason, Note, Utc.From(CreatedAt), CreatedBy);
    }

    private sealed class ConditionsData
    {
        public Guid Id { get; init; }
        public Guid SiteId { get; init; }
        public DateTime MeasuredAt { get; init; }
        public DateTime ValidUntil { get; init; }
        public double? SeeingArcsec { get; init; }
        public double? ExtinctionOffsetMag { get; init; }
        public double? SkyBrightnessMagArcsec2 { get; init; }
        public DateTime CreatedAt { get; init; }
        public string CreatedBy { get; init; } = "";

        public ConditionsRow ToRow() => new(Id, SiteId, Utc.From(MeasuredAt), Utc.From(ValidUntil), SeeingArcsec, ExtinctionOffsetMag,
            SkyBrightnessMagArcsec2, Utc.From(CreatedAt), CreatedBy);
    }
}
