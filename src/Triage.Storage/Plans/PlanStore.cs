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
    Guid? CalibrationId);

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
    string BodyJson);

/// <summary>Night plans, versioned per night. The active plan of a night is its highest version.</summary>
public sealed partial class PlanStore(NpgsqlDataSource dataSource)
{
    private const string Columns = """
        id AS Id, night AS Night, version AS Version, created_at AS CreatedAt, planned_from AS PlannedFrom,
        objective AS Objective, solver_status AS SolverStatus, expected_identifications AS ExpectedIdentifications,
        assigned AS Assigned, job_id AS JobId, calibration_id AS CalibrationId
        """;

    private const string InsertSql = """
        INSERT INTO plans (id, night, version, created_at, planned_from, objective, solver_status,
            expected_identifications, assigned, job_id, calibration_id, body)
        SELECT @id, @night, COALESCE(max(version), 0) + 1, @now, @from, @objective, @status, @expected, @assigned, @job, @calibration, @body
        FROM plans WHERE night = @night
        RETURNING version
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
        var version = (int)(await cmd.ExecuteScalarAsync(ct))!;
        var row = new PlanVersionRow(id, plan.Night, version, now, plan.PlannedFrom, plan.Objective, plan.SolverStatus,
            plan.ExpectedIdentifications, plan.Assigned, plan.JobId, plan.CalibrationId);
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

        public PlanVersionRow ToRow() => new(Id, DateOnly.FromDateTime(Night), Version, Utc.From(CreatedAt), Utc.From(PlannedFrom),
            Objective, SolverStatus, ExpectedIdentifications, Assigned, JobId, CalibrationId);
    }
}
