using Dapper;
using Npgsql;
using Triage.Core.Candidates;

namespace Triage.Storage.Candidates;

/// <summary>Another post of the same transient as stored.</summary>
/// <param name="CreatedAt">When the service stored it.</param>
public sealed record SameTransientRow(Guid Id, string Broker, string BrokerCandidateId, string State, double RaDeg, double DecDeg, DateTimeOffset CreatedAt);

public sealed partial class CandidateStore
{
    // The cone lies in the declination band δ ± r: the look-up goes through candidates_dec (migration 0081), then the
    // exact test on the unit vectors and the discovery gap.
    private const string SameTransientFrom = """
        FROM candidates c, (SELECT dec_deg, ux, uy, uz, discovered_at FROM candidates WHERE id = @id) me
        WHERE c.dec_deg BETWEEN me.dec_deg - @radiusDeg AND me.dec_deg + @radiusDeg
          AND c.ux * me.ux + c.uy * me.uy + c.uz * me.uz >= @cosRadius
          AND c.discovered_at BETWEEN me.discovered_at - @gap AND me.discovered_at + @gap
          AND c.id <> @id
        """;

    private const string SameTransientSql = $"""
        SELECT c.id AS Id, c.broker AS Broker, c.broker_candidate_id AS BrokerCandidateId, c.state AS State, c.ra_deg AS RaDeg, c.dec_deg AS DecDeg,
            c.created_at AS CreatedAt
        {SameTransientFrom}
        ORDER BY c.id
        """;

    // Waiting posts of the transient follow a classification; rows another transaction holds are skipped (a report on
    // them is being stored, and two reports on two posts then never wait for each other).
    private const string FollowSql = $"""
        WITH followers AS (
            SELECT c.id, c.state {SameTransientFrom} AND c.state IN ('new', 'planned', 'unsettled')
            ORDER BY c.id FOR UPDATE OF c SKIP LOCKED
        ), moved AS (
            UPDATE candidates u SET state = 'classified', classified_label = @label, version = u.version + 1, updated_at = @now
            FROM followers f WHERE u.id = f.id
            RETURNING u.id, f.state AS from_state
        )
        INSERT INTO candidate_event_log (candidate_id, at, kind, from_state, to_state, actor, detail)
        SELECT id, @now, 'transition', from_state, 'classified', @actor, @detail FROM moved
        """;

    private static object Reach(Guid id, SameTransientSettings reach) => new
    {
        id,
        radiusDeg = reach.RadiusArcsec / 3600,
        cosRadius = Math.Cos(reach.RadiusArcsec / 3600 * Math.PI / 180),
        gap = TimeSpan.FromDays(reach.MaxDiscoveryGapDays),
    };

    /// <summary>The other posts of the same transient as candidate <paramref name="id"/> (any state), by id.</summary>
    public async Task<IReadOnlyList<SameTransientRow>> SameTransientAsync(Guid id, SameTransientSettings reach, CancellationToken ct = default)
    {
        ArgumentNullException.ThrowIfNull(reach);
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        return (await conn.QueryAsync<(Guid, string, string, string, double, double, DateTime)>(new CommandDefinition(SameTransientSql, Reach(id, reach), cancellationToken: ct)))
            .Select(r => new SameTransientRow(r.Item1, r.Item2, r.Item3, r.Item4, r.Item5, r.Item6, Utc.From(r.Item7)))
            .ToList();
    }

    /// <summary>
    /// Inside the caller's transaction, after candidate <paramref name="id"/> was classified as <paramref name="label"/>:
    /// the other posts of its transient still waiting (new, planned, unsettled) become classified with the same label,
    /// each with a history line naming the post whose spectrum settled it. Returns how many followed.
    /// </summary>
    private static async Task<int> FollowClassificationAsync(NpgsqlConnection conn, NpgsqlTransaction tx, Guid id, string label, string actor,
        DateTimeOffset now, SameTransientSettings reach, CancellationToken ct)
    {
        var (broker, brokerId) = await conn.QuerySingleAsync<(string, string)>(new CommandDefinition(
            "SELECT broker, broker_candidate_id FROM candidates WHERE id = @id", new { id }, tx, cancellationToken: ct));
        var parameters = new DynamicParameters(Reach(id, reach));
        parameters.Add("label", label);
        parameters.Add("actor", actor);
        parameters.Add("now", now.UtcDateTime);
        parameters.Add("detail", $"identified as {label} through {broker}/{brokerId} ({id}), another broker's post of the same transient");
        return await conn.ExecuteAsync(new CommandDefinition(FollowSql, parameters, tx, cancellationToken: ct));
    }
}
