using Dapper;
using Npgsql;
using NpgsqlTypes;

namespace Triage.Storage.Plans;

/// <summary>A stored plan version without its body.</summary>
public sealed record PlanVersionRow(
    Guid Id,
    DateOnly Night,
    int Version,
    DateTimeOffset CreatedAt,
    DateTimeOffset PlannedFrom,
    string Objective,
    string SolverStatus,
    double ExpectedIdentifications,
    int Assigned,
    Guid? JobId,
    Guid? CalibrationId)
{
    /// <summary>What triggered the version: manual, closure, report, candidate, schedule.</summary>
    public string TriggerKind { get; init; } = "manual";

    /// <summary>One sentence on the trigger (null for a manual request).</summary>
    public string? TriggerDetail { get; init; }

    /// <summary>Churn against the previous version as JSON (null for a first version).</summary>
    public string? ChurnJson { get; init; }
}

/// <summary>What to store for a new version (the body is the plan JSON).</summary>
public sealed record NewPlanVersion(
    DateOnly Night,
    DateTimeOffset PlannedFrom,
    string Objective,
    string SolverStatus,
    double ExpectedIdentifications,
    int Assigned,
    Guid? JobId,
    Guid? CalibrationId,
    string BodyJson)
{
    /// <summary>What triggered the version (manual, closure, report, candidate, schedule).</summary>
    public string TriggerKind { get; init; } = "manual";

    /// <summary>One sentence on the trigger.</summary>
    public string? TriggerDetail { get; init; }

    /// <summary>Churn against the previous version as JSON.</summary>
    public string? ChurnJson { get; init; }

    /// <summary>Candidates in this version (service ids): they move to planned from a waiting state.</summary>
    public IReadOnlyList<Guid> CandidateIds { get; init; } = [];

    /// <summary>States a candidate waits for a plan in (wire names), moved to planned when in the version. Default new.</summary>
    public IReadOnlyList<string> WaitingStates { get; init; } = ["new", "unsettled"];

    /// <summary>Body of the plan-version event stored with the version in the outbox, given the version number; null: none.</summary>
    public Func<int, string>? EventBody { get; init; }
}

/// <summary>Night plans, versioned per night. The active plan of a night is its highest version.</summary>
public sealed partial class PlanStore(NpgsqlDataSource dataSource)
{
    private const string Columns = """
        id AS Id, night AS Night, version AS Version, created_at AS CreatedAt, planned_from AS PlannedFrom,
        objective AS Objective, solver_status AS SolverStatus, expected_identifications AS ExpectedIdentifications,
        assigned AS Assigned, job_id AS JobId, calibration_id AS CalibrationId,
        trigger_kind AS TriggerKind, trigger_detail AS TriggerDetail, churn::text AS Churn
        """;

    private const string InsertSql = """
        INSERT INTO plans (id, night, version, created_at, planned_from, objective, solver_status,
            expected_identifications, assigned, job_id, calibration_id, body, trigger_kind, trigger_detail, churn)
        SELECT @id, @night, COALESCE(max(version), 0) + 1, @now, @from, @objective, @status, @expected, @assigned, @job, @calibration, @body,
            @trigger, @triggerDetail, @churn
        FROM plans WHERE night = @night
        RETURNING version
        """;

    // Candidates of the night's latest version that the new version leaves out and that are still planned go back to
    // the state they had before they were planned (the from_state of their last transition to planned; default new).
    private const string ReturnDroppedSql = """
        WITH previous AS (
            SELECT DISTINCT (e->>'candidateId')::uuid AS id
            FROM plans p, jsonb_array_elements(p.body->'spectrographs') q, jsonb_array_elements(q->'queue') e
            WHERE p.night = @night AND p.version = (SELECT max(version) FROM plans WHERE night = @night)
              AND e->>'candidateId' ~* '^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$'),
        dropped AS (
            SELECT c.id FROM candidates c JOIN previous ON previous.id = c.id
            WHERE c.state = 'planned' AND NOT (c.id = ANY(@planned))
            FOR UPDATE OF c),
        before AS (
            SELECT DISTINCT ON (e.candidate_id) e.candidate_id, e.from_state
            FROM candidate_event_log e JOIN dropped d ON d.id = e.candidate_id
            WHERE e.to_state = 'planned' AND e.from_state IS NOT NULL AND e.from_state <> 'planned'
            ORDER BY e.candidate_id, e.id DESC),
        moved AS (
            UPDATE candidates c SET state = COALESCE(b.from_state, 'new'), version = c.version + 1, updated_at = @now
            FROM dropped d LEFT JOIN before b ON b.candidate_id = d.id
            WHERE c.id = d.id
            RETURNING c.id, c.state)
        INSERT INTO candidate_event_log (candidate_id, at, kind, from_state, to_state, actor, detail)
        SELECT id, @now, 'transition', 'planned', state, 'planner', 'left out of plan version ' || @version || ' of ' || @night::text FROM moved
        """;

    private const string MarkPlannedSql = """
        WITH waiting AS (
            SELECT id, state FROM candidates WHERE id = ANY(@planned) AND state = ANY(@waiting) FOR UPDATE),
        moved AS (
            UPDATE candidates c SET state = 'planned', version = c.version + 1, updated_at = @now
            FROM waiting w WHERE c.id = w.id
            RETURNING c.id, w.state AS from_state)
        INSERT INTO candidate_event_log (candidate_id, at, kind, from_state, to_state, actor, detail)
        SELECT id, @now, 'transition', from_state, 'planned', 'planner', 'in plan version ' || @version || ' of ' || @night::text FROM moved
        """;

    // The event, one pending delivery per active webhook subscription, and a notification to the other replicas
    // (delivered at commit).
    private const string EventSql = """
        WITH e AS (INSERT INTO plan_events (night, version, created_at, body) VALUES (@night, @version, @now, @body::jsonb) RETURNING id),
        d AS (INSERT INTO webhook_deliveries (subscription_id, event_id, next_attempt_at)
              SELECT s.id, e.id, @now FROM webhook_subscriptions s, e WHERE s.active)
        SELECT id, pg_notify('triage_plan_events', id::text) FROM e
        """;

    /// <summary>Stores a new version atomically; versions of one night are numbered 1, 2, 3… without gaps.</summary>
    public Task<PlanVersionRow> AddVersionAsync(NewPlanVersion plan, DateTimeOffset now, CancellationToken ct = default) =>
        AddVersionAsync(plan, now, null, ct);

    /// <summary>
    /// Stores a new version and runs <paramref name="within"/> in the same transaction. A version
    /// carrying a job id that already has one fails with a unique violation on
    /// <see cref="OnePerJobConstraint"/> (see <see cref="FindByJobAsync"/>).
    /// </summary>
    public async Task<PlanVersionRow> AddVersionAsync(NewPlanVersion plan, DateTimeOffset now, WithinTransaction<PlanVersionRow>? within, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        // One writer per night at a time: the version number is read and used in one step.
        await using (var lockCmd = new NpgsqlCommand("SELECT pg_advisory_xact_lock(hashtext('plan-night:' || @night::text))", conn, tx))
        {
            lockCmd.Parameters.AddWithValue("night", plan.Night);
            await lockCmd.ExecuteNonQueryAsync(ct);
        }
        var id = Guid.NewGuid();
        await using var cmd = new NpgsqlCommand(InsertSql, conn, tx);
        cmd.Parameters.AddWithValue("id", id);
        cmd.Parameters.AddWithValue("night", plan.Night);
        cmd.Parameters.AddWithValue("now", now);
        cmd.Parameters.AddWithValue("from", plan.PlannedFrom);
        cmd.Parameters.AddWithValue("objective", plan.Objective);
        cmd.Parameters.AddWithValue("status", plan.SolverStatus);
        cmd.Parameters.AddWithValue("expected", plan.ExpectedIdentifications);
        cmd.Parameters.AddWithValue("assigned", plan.Assigned);
        cmd.Parameters.AddWithValue("job", plan.JobId.HasValue ? plan.JobId.Value : DBNull.Value);
        cmd.Parameters.AddWithValue("calibration", plan.CalibrationId.HasValue ? plan.CalibrationId.Value : DBNull.Value);
        cmd.Parameters.Add(new NpgsqlParameter("body", NpgsqlDbType.Jsonb) { Value = plan.BodyJson });
        cmd.Parameters.AddWithValue("trigger", plan.TriggerKind);
        cmd.Parameters.AddWithValue("triggerDetail", (object?)plan.TriggerDetail ?? DBNull.Value);
        cmd.Parameters.Add(new NpgsqlParameter("churn", NpgsqlDbType.Jsonb) { Value = (object?)plan.ChurnJson ?? DBNull.Value });

        // Candidate states follow the version in the same transaction: dropped ones return to waiting (read against
        // the version that is still the latest), the version's own move to planned.
        var planned = plan.CandidateIds.ToArray();
        var states = new { night = plan.Night, planned, now = now.UtcDateTime, waiting = plan.WaitingStates.ToArray(), version = 0 };
        var nextVersion = await conn.ExecuteScalarAsync<int>(new CommandDefinition(
            "SELECT COALESCE(max(version), 0) + 1 FROM plans WHERE night = @night", new { night = plan.Night }, tx, cancellationToken: ct));
        await conn.ExecuteAsync(new CommandDefinition(ReturnDroppedSql, states with { version = nextVersion }, tx, cancellationToken: ct));
        var version = (int)(await cmd.ExecuteScalarAsync(ct))!;
        await conn.ExecuteAsync(new CommandDefinition(MarkPlannedSql, states with { version = version }, tx, cancellationToken: ct));
        if (plan.EventBody is { } body)
        {
            await conn.ExecuteAsync(new CommandDefinition(EventSql, new { night = plan.Night, version, now = now.UtcDateTime, body = body(version) }, tx, cancellationToken: ct));
        }

        var row = new PlanVersionRow(id, plan.Night, version, now, plan.PlannedFrom, plan.Objective, plan.SolverStatus,
            plan.ExpectedIdentifications, plan.Assigned, plan.JobId, plan.CalibrationId)
        {
            TriggerKind = plan.TriggerKind,
            TriggerDetail = plan.TriggerDetail,
            ChurnJson = plan.ChurnJson,
        };
        if (within is not null)
        {
            await within(conn, tx, row, ct);
        }
        await tx.CommitAsync(ct);
        return row;
    }

    /// <summary>The unique index that keeps one version per job.</summary>
    public const string OnePerJobConstraint = "plans_one_per_job";

    /// <summary>The version a job stored, if it stored one.</summary>
    public async Task<PlanVersionRow?> FindByJobAsync(Guid jobId, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var r = await conn.QuerySingleOrDefaultAsync<Record>(new CommandDefinition(
            $"SELECT {Columns} FROM plans WHERE job_id = @jobId", new { jobId }, cancellationToken: ct));
        return r?.ToRow();
    }

    public async Task<IReadOnlyList<PlanVersionRow>> ListVersionsAsync(DateOnly night, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<Record>(new CommandDefinition(
            $"SELECT {Columns} FROM plans WHERE night = @night ORDER BY version", new { night }, cancellationToken: ct));
        return rows.Select(r => r.ToRow()).ToList();
    }

    /// <summary>A version with its body; the latest when <paramref name="version"/> is null.</summary>
    public async Task<(PlanVersionRow Row, string BodyJson)?> GetAsync(DateOnly night, int? version, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var sql = $"""
            SELECT {Columns}, body::text AS Body FROM plans
            WHERE night = @night AND (@version::int IS NULL OR version = @version)
            ORDER BY version DESC LIMIT 1
            """;
        var r = await conn.QuerySingleOrDefaultAsync<Record>(new CommandDefinition(sql, new { night, version }, cancellationToken: ct));
        return r is null ? null : (r.ToRow(), r.Body!);
    }

    private class Record
    {
        public Guid Id { get; init; }
        public DateTime Night { get; init; }
        public int Version { get; init; }
        public DateTime CreatedAt { get; init; }
        public DateTime PlannedFrom { get; init; }
        public string Objective { get; init; } = "";
        public string SolverStatus { get; init; } = "";
        public double ExpectedIdentifications { get; init; }
        public int Assigned { get; init; }
        public Guid? JobId { get; init; }
        public Guid? CalibrationId { get; init; }
        public string? Body { get; init; }
        public string TriggerKind { get; init; } = "manual";
        public string? TriggerDetail { get; init; }
        public string? Churn { get; init; }

        public PlanVersionRow ToRow() => new(Id, DateOnly.FromDateTime(Night), Version, Utc.From(CreatedAt), Utc.From(PlannedFrom),
            Objective, SolverStatus, ExpectedIdentifications, Assigned, JobId, CalibrationId)
        {
            TriggerKind = TriggerKind,
            TriggerDetail = TriggerDetail,
            ChurnJson = Churn,
        };
    }
}
