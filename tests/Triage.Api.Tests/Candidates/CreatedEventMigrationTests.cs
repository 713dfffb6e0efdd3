using Dapper;
using Npgsql;
using Triage.Api.Tests.Infrastructure;

namespace Triage.Api.Tests.Candidates;

/// <summary>
/// Migration 0080: a candidate's 'created' event is read from the candidate row instead of a
/// stored event row. Every history reads as before, and the event log refuses a stored 'created' row.
/// </summary>
[Collection(ApiCollection.Name)]
public sealed class CreatedEventMigrationTests(TriageApiFactory api)
{
    [Fact]
    public async Task Migration0080_StoredCreatedRows_ReadFromCandidates_HistoryUnchanged()
    {
        await using var conn = await api.DataSource.OpenConnectionAsync();
        await using var tx = await conn.BeginTransactionAsync();
        // The 0003 shapes in a scratch schema: two candidates, each created by its broker at its
        // created_at, one later planned and observed.
        await conn.ExecuteAsync("""
            CREATE SCHEMA created_event_check;
            SET LOCAL search_path = created_event_check;
            CREATE TABLE candidates (id uuid PRIMARY KEY, broker text NOT NULL, created_at timestamptz NOT NULL);
            CREATE TABLE candidate_events (
                id bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY, candidate_id uuid NOT NULL, at timestamptz NOT NULL,
                kind text NOT NULL CHECK (kind IN ('created','updated','transition','observation')),
                from_state text NULL, to_state text NULL, actor text NOT NULL, detail text NULL);
            CREATE INDEX candidate_events_candidate ON candidate_events (candidate_id, id);
            INSERT INTO candidates VALUES
                ('00000000-0000-7000-8000-000000000001', 'broker-a', '2026-11-02T12:00:00.000001Z'),
                ('00000000-0000-7000-8000-000000000002', 'broker-b', '2026-11-03T00:00:00Z');
            INSERT INTO candidate_events (candidate_id, at, kind, from_state, to_state, actor, detail) VALUES
                ('00000000-0000-7000-8000-000000000001', '2026-11-02T12:00:00.000001Z', 'created', NULL, NULL, 'broker-a', NULL),
                ('00000000-0000-7000-8000-000000000002', '2026-11-03T00:00:00Z', 'created', NULL, NULL, 'broker-b', NULL),
                ('00000000-0000-7000-8000-000000000001', '2026-11-04T00:00:00Z', 'updated', NULL, NULL, 'broker-a', NULL),
                ('00000000-0000-7000-8000-000000000001', '2026-11-04T01:00:00Z', 'transition', 'new', 'planned', 'planner', 'in plan version 1 of 2026-11-04'),
                ('00000000-0000-7000-8000-000000000001', '2026-11-05T02:00:00Z', 'observation', NULL, NULL, 'observer', 'classified');
            """, transaction: tx);
        // What GET /api/candidates/{id} reads as history (CandidateStore's query), for each candidate.
        const string history = """
            SELECT candidate_id::text || '|' || to_char(at AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US') || '|' || kind || '|'
                || coalesce(from_state, '-') || '|' || coalesce(to_state, '-') || '|' || actor || '|' || coalesce(detail, '-')
            FROM candidate_events WHERE candidate_id = @id ORDER BY id
            """;
        Guid[] ids = [new("00000000-0000-7000-8000-000000000001"), new("00000000-0000-7000-8000-000000000002")];
        var before = new List<List<string>>();
        foreach (var id in ids)
        {
            before.Add((await conn.QueryAsync<string>(history, new { id }, tx)).ToList());
        }

        await conn.ExecuteAsync(Triage.Storage.Migrations.MigrationRunner.Embedded.Single(m => m.Version == 80).Sql, transaction: tx);

        for (int k = 0; k < ids.Length; k++)
        {
            Assert.Equal(before[k], await conn.QueryAsync<string>(history, new { id = ids[k] }, tx));
        }
        Assert.Equal(5, before.Sum(h => h.Count));
        Assert.Equal(0, await conn.ExecuteScalarAsync<int>("SELECT count(*) FROM candidate_event_log WHERE kind = 'created'", transaction: tx));
        Assert.Equal(3, await conn.ExecuteScalarAsync<int>("SELECT count(*) FROM candidate_event_log", transaction: tx));
        await conn.ExecuteAsync("SAVEPOINT refused", transaction: tx);
        var refused = await Assert.ThrowsAsync<PostgresException>(() => conn.ExecuteAsync(
            "INSERT INTO candidate_event_log (candidate_id, at, kind, actor) VALUES ('00000000-0000-7000-8000-000000000002', now(), 'created', 'broker-b')",
            transaction: tx));
        Assert.Equal("candidate_event_log_not_created", refused.ConstraintName);
        await tx.RollbackAsync();
    }
}
