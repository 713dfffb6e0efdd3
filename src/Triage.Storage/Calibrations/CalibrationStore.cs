using Dapper;
using Npgsql;
using NpgsqlTypes;

namespace Triage.Storage.Calibrations;

/// <summary>A stored calibration without its document.</summary>
public sealed record CalibrationRow(
    Guid Id,
    DateTimeOffset CreatedAt,
    string Source,
    bool Synthetic,
    string? LibraryFingerprint,
    string CodeVersion,
    Guid? JobId,
    bool Active);

/// <summary>A calibration to store; <see cref="DocumentJson"/> is the accuracy-model document.</summary>
public sealed record NewCalibration(string Source, bool Synthetic, string? LibraryFingerprint, string CodeVersion, string? SettingsJson, Guid? JobId, string DocumentJson);

/// <summary>Accuracy models in PostgreSQL; exactly one (or none yet) is active.</summary>
public sealed class CalibrationStore(NpgsqlDataSource dataSource)
{
    private const string Columns = """
        id AS Id, created_at AS CreatedAt, source AS Source, synthetic AS Synthetic,
        library_fingerprint AS LibraryFingerprint, code_version AS CodeVersion, job_id AS JobId, active AS Active
        """;

    /// <summary>Stores a calibration; it becomes active when <paramref name="activate"/> or when none is active yet.</summary>
    public Task<CalibrationRow> AddAsync(NewCalibration c, bool activate, DateTimeOffset now, CancellationToken ct = default) =>
        AddAsync(c, activate, now, null, ct);

    /// <summary>
    /// Stores a calibration and runs <paramref name="within"/> in the same transaction. One
    /// carrying a job id that already has one fails with a unique violation on
    /// <see cref="OnePerJobConstraint"/> (see <see cref="FindByJobAsync"/>).
    /// </summary>
    public async Task<CalibrationRow> AddAsync(NewCalibration c, bool activate, DateTimeOffset now, WithinTransaction<CalibrationRow>? within, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        var row = await AddWithinAsync(conn, tx, c, activate, now, ct);
        if (within is not null)
        {
            await within(conn, tx, row, ct);
        }
        await tx.CommitAsync(ct);
        return row;
    }

    /// <summary>Stores a calibration inside the caller's transaction (see <see cref="AddAsync(NewCalibration, bool, DateTimeOffset, CancellationToken)"/>).</summary>
    public static async Task<CalibrationRow> AddWithinAsync(NpgsqlConnection conn, NpgsqlTransaction tx, NewCalibration c, bool activate, DateTimeOffset now, CancellationToken ct = default)
    {
        var id = Guid.NewGuid();
        await conn.ExecuteAsync(new CommandDefinition("LOCK TABLE calibrations IN SHARE ROW EXCLUSIVE MODE", transaction: tx, cancellationToken: ct));
        var makeActive = activate || !await conn.ExecuteScalarAsync<bool>(new CommandDefinition(
            "SELECT EXISTS (SELECT 1 FROM calibrations WHERE active)", transaction: tx, cancellationToken: ct));
        if (makeActive)
        {
            await conn.ExecuteAsync(new CommandDefinition("UPDATE calibrations SET active = false WHERE active", transaction: tx, cancellationToken: ct));
        }
        await using (var cmd = new NpgsqlCommand("""
            INSERT INTO calibrations (id, created_at, source, synthetic, library_fingerprint, code_version, settings, job_id, document, active)
            VALUES (@id, @now, @source, @synthetic, @fingerprint, @code, @settings, @job, @document, @active)
            """, conn, tx))
        {
            cmd.Parameters.AddWithValue("id", id);
            cmd.Parameters.AddWithValue("now", now);
            cmd.Parameters.AddWithValue("source", c.Source);
            cmd.Parameters.AddWithValue("synthetic", c.Synthetic);
            cmd.Parameters.AddWithValue("fingerprint", (object?)c.LibraryFingerprint ?? DBNull.Value);
            cmd.Parameters.AddWithValue("code", c.CodeVersion);
            cmd.Parameters.Add(new NpgsqlParameter("settings", NpgsqlDbType.Jsonb) { Value = (object?)c.SettingsJson ?? DBNull.Value });
            cmd.Parameters.AddWithValue("job", c.JobId.HasValue ? c.JobId.Value : DBNull.Value);
            cmd.Parameters.Add(new NpgsqlParameter("document", NpgsqlDbType.Jsonb) { Value = c.DocumentJson });
            cmd.Parameters.AddWithValue("active", makeActive);
            await cmd.ExecuteNonQueryAsync(ct);
        }
        return new CalibrationRow(id, now, c.Source, c.Synthetic, c.LibraryFingerprint, c.CodeVersion, c.JobId, makeActive);
    }

    /// <summary>The unique index that keeps one calibration per job.</summary>
    public const string OnePerJobConstraint = "calibrations_one_per_job";

    /// <summary>The calibration a job stored, if it stored one.</summary>
    public async Task<CalibrationRow?> FindByJobAsync(Guid jobId, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var r = await conn.QuerySingleOrDefaultAsync<Record>(new CommandDefinition(
            $"SELECT {Columns} FROM calibrations WHERE job_id = @jobId", new { jobId }, cancellationToken: ct));
        return r?.ToRow();
    }

    /// <summary>Makes <paramref name="id"/> the active calibration; false when it does not exist.</summary>
    public async Task<bool> ActivateAsync(Guid id, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        await conn.ExecuteAsync(new CommandDefinition("LOCK TABLE calibrations IN SHARE ROW EXCLUSIVE MODE", transaction: tx, cancellationToken: ct));
        if (!await conn.ExecuteScalarAsync<bool>(new CommandDefinition("SELECT EXISTS (SELECT 1 FROM calibrations WHERE id = @id)", new { id }, tx, cancellationToken: ct)))
        {
            return false;
        }
        await conn.ExecuteAsync(new CommandDefinition("UPDATE calibrations SET active = false WHERE active AND id <> @id", new { id }, tx, cancellationToken: ct));
        await conn.ExecuteAsync(new CommandDefinition("UPDATE calibrations SET active = true WHERE id = @id", new { id }, tx, cancellationToken: ct));
        await tx.CommitAsync(ct);
        return true;
    }

    public async Task<IReadOnlyList<CalibrationRow>> ListAsync(CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<Record>(new CommandDefinition($"SELECT {Columns} FROM calibrations ORDER BY created_at DESC", cancellationToken: ct));
        return rows.Select(r => r.ToRow()).ToList();
    }

    /// <summary>Id of the active calibration, or null when none is active.</summary>
    public async Task<Guid?> ActiveIdAsync(CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        return await conn.QuerySingleOrDefaultAsync<Guid?>(new CommandDefinition("SELECT id FROM calibrations WHERE active", cancellationToken: ct));
    }

    /// <summary>One calibration with its document; the active one when <paramref name="id"/> is null.</summary>
    public async Task<(CalibrationRow Row, string DocumentJson)?> GetAsync(Guid? id, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var sql = $"SELECT {Columns}, document::text AS Document FROM calibrations WHERE " + (id is null ? "active" : "id = @id");
        var r = await conn.QuerySingleOrDefaultAsync<Record>(new CommandDefinition(sql, new { id }, cancellationToken: ct));
        return r is null ? null : (r.ToRow(), r.Document!);
    }

    private sealed class Record
    {
        public Guid Id { get; init; }
        public DateTime CreatedAt { get; init; }
        public string Source { get; init; } = "";
        public bool Synthetic { get; init; }
        public string? LibraryFingerprint { get; init; }
        public string CodeVersion { get; init; } = "";
        public Guid? JobId { get; init; }
        public bool Active { get; init; }
        public string? Document { get; init; }

        public CalibrationRow ToRow() => new(Id, Utc.From(CreatedAt), Source, Synthetic, LibraryFingerprint, CodeVersion, JobId, Active);
    }
}
