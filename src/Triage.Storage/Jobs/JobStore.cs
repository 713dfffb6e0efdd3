using Dapper;
using Npgsql;
using NpgsqlTypes;

namespace Triage.Storage.Jobs;

/// <summary>Where a job is in its life.</summary>
public enum JobStatus
{
    Queued,
    Running,
    Succeeded,
    Failed,
}

/// <summary>A stored job. <see cref="Progress"/> is 0…1; <see cref="EtaSeconds"/> estimates the time left.</summary>
public sealed record JobRow(
    Guid Id,
    string Kind,
    JobStatus Status,
    string Input,
    string? Result,
    string? Error,
    double Progress,
    string? ProgressNote,
    double? EtaSeconds,
    Guid? RequestedBy,
    int Attempts,
    DateTimeOffset CreatedAt,
    DateTimeOffset? StartedAt,
    DateTimeOffset? FinishedAt,
    DateTimeOffset? HeartbeatAt);

/// <summary>
/// Durable jobs in PostgreSQL. Workers claim queued jobs with <c>FOR UPDATE SKIP LOCKED</c>, so
/// several workers never run the same job; running jobs beat a heartbeat, and jobs whose worker
/// died (a restart) are requeued once and then marked failed: never left "running".
/// </summary>
public sealed class JobStore(NpgsqlDataSource dataSource)
{
    private const string Columns = """
        id AS Id, kind AS Kind, status AS Status, input::text AS Input, result::text AS Result, error AS Error,
        progress AS Progress, progress_note AS ProgressNote, eta_seconds AS EtaSeconds, requested_by AS RequestedBy,
        attempts AS Attempts, created_at AS CreatedAt, started_at AS StartedAt, finished_at AS FinishedAt,
        heartbeat_at AS HeartbeatAt
        """;

    /// <summary>How many times a job interrupted by a restart is started again before it is failed.</summary>
    public const int MaxAttempts = 2;

    private const string EnqueueSql = """
        INSERT INTO jobs (id, kind, status, input, requested_by, created_at)
        VALUES (@id, @kind, 'queued', @input, @requestedBy, @now)
        """;

    public async Task<Guid> EnqueueAsync(string kind, string inputJson, Guid? requestedBy, DateTimeOffset now, CancellationToken ct = default)
    {
        var id = Guid.NewGuid();
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await using var cmd = new NpgsqlCommand(EnqueueSql, conn);
        cmd.Parameters.AddWithValue("id", id);
        cmd.Parameters.AddWithValue("kind", kind);
        cmd.Parameters.Add(new NpgsqlParameter("input", NpgsqlDbType.Jsonb) { Value = inputJson });
        cmd.Parameters.AddWithValue("requestedBy", requestedBy.HasValue ? requestedBy.Value : DBNull.Value);
        cmd.Parameters.AddWithValue("now", now);
        await cmd.ExecuteNonQueryAsync(ct);
        return id;
    }

    public async Task<JobRow?> GetAsync(Guid id, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var row = await conn.QuerySingleOrDefaultAsync<Record>(new CommandDefinition($"SELECT {Columns} FROM jobs WHERE id = @id", new { id }, cancellationToken: ct));
        return row?.ToRow();
    }

    public async Task<IReadOnlyList<JobRow>> ListAsync(string? kind, int limit, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<Record>(new CommandDefinition(
            $"SELECT {Columns} FROM jobs WHERE (@kind::text IS NULL OR kind = @kind) ORDER BY created_at DESC LIMIT @limit",
            new { kind, limit }, cancellationToken: ct));
        return rows.Select(r => r.ToRow()).ToList();
    }

    private const string ClaimSql = $"""
        UPDATE jobs SET status = 'running', started_at = @now, heartbeat_at = @now, attempts = attempts + 1,
            progress = 0, progress_note = NULL, eta_seconds = NULL
        WHERE id = (SELECT id FROM jobs WHERE status = 'queued' AND kind = ANY(@kinds)
                    ORDER BY created_at, part FOR UPDATE SKIP LOCKED LIMIT 1)
        RETURNING {Columns}
        """;

    /// <summary>Takes the oldest queued job of the given kinds (parts queued together in part order), or null when there is none.</summary>
    public async Task<JobRow?> ClaimNextAsync(IReadOnlyCollection<string> kinds, DateTimeOffset now, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var row = await conn.QuerySingleOrDefaultAsync<Record>(new CommandDefinition(ClaimSql, new { kinds = kinds.ToArray(), now }, cancellationToken: ct));
        return row?.ToRow();
    }

    /// <summary>Records progress (and beats the heartbeat) of a running job.</summary>
    public async Task ReportAsync(Guid id, double fraction, string? note, double? etaSeconds, DateTimeOffset now, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await conn.ExecuteAsync(new CommandDefinition("""
            UPDATE jobs SET progress = @fraction, progress_note = @note, eta_seconds = @etaSeconds, heartbeat_at = @now
            WHERE id = @id AND status = 'running'
            """, new { id, fraction = Math.Clamp(fraction, 0, 1), note, etaSeconds, now }, cancellationToken: ct));
    }

    public async Task CompleteAsync(Guid id, string resultJson, DateTimeOffset now, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await using var cmd = new NpgsqlCommand("""
            UPDATE jobs SET status = 'succeeded', result = @result, progress = 1, eta_seconds = 0, finished_at = @now, heartbeat_at = @now
            WHERE id = @id AND status = 'running'
            """, conn);
        cmd.Parameters.AddWithValue("id", id);
        cmd.Parameters.Add(new NpgsqlParameter("result", NpgsqlDbType.Jsonb) { Value = resultJson });
        cmd.Parameters.AddWithValue("now", now);
        await cmd.ExecuteNonQueryAsync(ct);
    }

    /// <summary>
    /// Completes a job inside the transaction that stores its result, so the result and the
    /// completion commit together or not at all. Also completes a job that was requeued meanwhile
    /// (its heartbeat went stale while it still ran), so it is not run again. False when the job
    /// had already ended.
    /// </summary>
    public static async Task<bool> CompleteWithinAsync(NpgsqlConnection conn, NpgsqlTransaction tx, Guid id, string resultJson, DateTimeOffset now, CancellationToken ct = default)
    {
        await using var cmd = new NpgsqlCommand("""
            UPDATE jobs SET status = 'succeeded', result = @result, progress = 1, eta_seconds = 0, finished_at = @now, heartbeat_at = @now,
                progress_note = NULL
            WHERE id = @id AND status IN ('queued', 'running')
            """, conn, tx);
        cmd.Parameters.AddWithValue("id", id);
        cmd.Parameters.Add(new NpgsqlParameter("result", NpgsqlDbType.Jsonb) { Value = resultJson });
        cmd.Parameters.AddWithValue("now", now);
        return await cmd.ExecuteNonQueryAsync(ct) == 1;
    }

    /// <summary>Puts a running job back in the queue (the database failed under it); false when it was no longer running.</summary>
    public async Task<bool> RequeueAsync(Guid id, string note, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        return await conn.ExecuteAsync(new CommandDefinition("""
            UPDATE jobs SET status = 'queued', progress_note = @note, eta_seconds = NULL
            WHERE id = @id AND status = 'running'
            """, new { id, note }, cancellationToken: ct)) == 1;
    }

    public async Task FailAsync(Guid id, string error, DateTimeOffset now, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await conn.ExecuteAsync(new CommandDefinition("""
            UPDATE jobs SET status = 'failed', error = @error, finished_at = @now, eta_seconds = NULL
            WHERE id = @id AND status IN ('queued', 'running')
            """, new { id, error, now }, cancellationToken: ct));
    }

    /// <summary>
    /// Running jobs whose heartbeat is older than <paramref name="staleAfter"/> lost their worker:
    /// requeued while they have attempts left, failed otherwise. Returns how many were touched.
    /// </summary>
    public async Task<int> RecoverInterruptedAsync(TimeSpan staleAfter, DateTimeOffset now, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var limit = now - staleAfter;
        // A job waiting for its parts beats no heartbeat: it is stale only once none of its parts is open.
        var requeued = await conn.ExecuteAsync(new CommandDefinition($"""
            UPDATE jobs SET status = 'queued', progress_note = 'interrupted by a restart; queued again'
            WHERE status = 'running' AND heartbeat_at < @limit AND attempts < @max AND {NoOpenParts}
            """, new { limit, max = MaxAttempts }, cancellationToken: ct));
        var failed = await conn.ExecuteAsync(new CommandDefinition($"""
            UPDATE jobs SET status = 'failed', finished_at = @now,
                error = 'interrupted by a restart ' || attempts || ' times; not retried again'
            WHERE status = 'running' AND heartbeat_at < @limit AND attempts >= @max AND {NoOpenParts}
            """, new { limit, now, max = MaxAttempts }, cancellationToken: ct));
        return requeued + failed;
    }

    private const string NoOpenParts = "NOT EXISTS (SELECT 1 FROM jobs p WHERE p.parent_id = jobs.id AND p.status IN ('queued', 'running'))";

    /// <summary>
    /// Splits a running job into parts: one queued child job of <paramref name="kind"/> per input (part i gets
    /// <paramref name="inputs"/>[i]), in one transaction with the parent's note. Parts that exist already (the
    /// parent ran again) are kept as they are. The parent stays running without a heartbeat while any part is
    /// open (recovery skips it); the handler of its last part completes it. Returns the number of parts.
    /// </summary>
    public async Task<int> SplitIntoPartsAsync(Guid parentId, string kind, IReadOnlyList<string> inputs, string note, DateTimeOffset now, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        for (var i = 0; i < inputs.Count; i++)
        {
            await using var cmd = new NpgsqlCommand("""
                INSERT INTO jobs (id, kind, status, input, requested_by, created_at, parent_id, part)
                SELECT @id, @kind, 'queued', @input, requested_by, @now, id, @part FROM jobs WHERE id = @parent
                ON CONFLICT (parent_id, part) WHERE parent_id IS NOT NULL DO NOTHING
                """, conn, tx);
            cmd.Parameters.AddWithValue("id", Guid.NewGuid());
            cmd.Parameters.AddWithValue("kind", kind);
            cmd.Parameters.Add(new NpgsqlParameter("input", NpgsqlDbType.Jsonb) { Value = inputs[i] });
            cmd.Parameters.AddWithValue("now", now);
            cmd.Parameters.AddWithValue("parent", parentId);
            cmd.Parameters.AddWithValue("part", i);
            await cmd.ExecuteNonQueryAsync(ct);
        }
        await conn.ExecuteAsync(new CommandDefinition("""
            UPDATE jobs SET progress_note = @note, eta_seconds = NULL, heartbeat_at = @now WHERE id = @parentId AND status = 'running'
            """, new { parentId, note, now }, tx, cancellationToken: ct));
        var count = await conn.ExecuteScalarAsync<int>(new CommandDefinition(
            "SELECT count(*) FROM jobs WHERE parent_id = @parentId", new { parentId }, tx, cancellationToken: ct));
        await tx.CommitAsync(ct);
        return count;
    }

    internal static string StatusText(JobStatus s) => s.ToString().ToLowerInvariant();

    private sealed class Record
    {
        public Guid Id { get; init; }
        public string Kind { get; init; } = "";
        public string Status { get; init; } = "";
        public string Input { get; init; } = "";
        public string? Result { get; init; }
        public string? Error { get; init; }
        public double Progress { get; init; }
        public string? ProgressNote { get; init; }
        public double? EtaSeconds { get; init; }
        public Guid? RequestedBy { get; init; }
        public int Attempts { get; init; }
        public DateTime CreatedAt { get; init; }
        public DateTime? StartedAt { get; init; }
        public DateTime? FinishedAt { get; init; }
        public DateTime? HeartbeatAt { get; init; }

        public JobRow ToRow() => new(Id, Kind, Enum.Parse<JobStatus>(Status, ignoreCase: true), Input, Result, Error, Progress,
            ProgressNote, EtaSeconds, RequestedBy, Attempts, Utc.From(CreatedAt), Utc.From(StartedAt), Utc.From(FinishedAt), Utc.From(HeartbeatAt));
    }
}
