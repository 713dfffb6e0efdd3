using Dapper;
using Npgsql;
using NpgsqlTypes;
using Triage.Storage.Jobs;

namespace Triage.Storage.Calibrations;

/// <summary>One part's finished work: the outcome of R index <see cref="Part"/> of the calibration job <see cref="ParentJobId"/>.</summary>
/// <param name="PartCount">How many parts the calibration has (its grid's size).</param>
/// <param name="Worker">The worker (replica) that ran it.</param>
/// <param name="Seconds">Wall time of the part's computation.</param>
/// <param name="OutcomeJson">The R's outcome (cells, confusions, summaries, per-spectrum correctness).</param>
public sealed record CalibrationPartOutcome(Guid ParentJobId, int Part, int PartCount, double Resolution, Guid JobId, string Worker,
    double Seconds, string OutcomeJson);

/// <summary>A part as stored: which worker ran it, how long it took.</summary>
public sealed record CalibrationPartRow(int Part, double Resolution, Guid JobId, string Worker, double Seconds, DateTimeOffset FinishedAt);

/// <summary>What storing a part's outcome led to.</summary>
public enum PartFinish
{
    /// <summary>Stored; other parts are still open.</summary>
    Stored,

    /// <summary>Stored, and it was the last: the calibration was assembled and stored and the parent job completed.</summary>
    Assembled,

    /// <summary>This part's outcome was already stored by an earlier run of it: nothing was written.</summary>
    AlreadyStored,

    /// <summary>The parent job is no longer running (it failed): nothing was written.</summary>
    ParentEnded,
}

/// <summary>The effect of <see cref="CalibrationPartStore.FinishAsync"/>, with the parts done out of the parts there are.</summary>
public sealed record PartFinishResult(PartFinish Outcome, int Done, int Count, CalibrationRow? Calibration);

/// <summary>
/// The outcomes of a calibration's parts (table <c>calibration_parts</c>) and the one transaction that stores a part:
/// the parent job's row is locked first, so parts finishing at the same time on different replicas take turns and
/// exactly one of them sees every outcome stored; that one assembles the calibration, stores it under the parent's
/// job id and completes the parent, in the transaction that stores its own outcome and completes its own job.
/// </summary>
public sealed class CalibrationPartStore(NpgsqlDataSource dataSource)
{
    /// <summary>
    /// Stores <paramref name="part"/>'s outcome and completes its job with <paramref name="partResultJson"/>; when it is
    /// the last, also stores the calibration <paramref name="assemble"/> builds from every outcome (in part order) and
    /// completes the parent with <paramref name="parentResultJson"/>. All or nothing.
    /// </summary>
    public async Task<PartFinishResult> FinishAsync(CalibrationPartOutcome part, string partResultJson,
        Func<IReadOnlyList<string>, NewCalibration> assemble, bool activate, Func<CalibrationRow, string> parentResultJson,
        DateTimeOffset now, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        // Parts finishing together queue on the parent's row, and the last one assembles while holding it:
        // longer waits than the API's few-second lock timeout are expected here.
        await conn.ExecuteAsync(new CommandDefinition("SET LOCAL lock_timeout = '5min'; SET LOCAL statement_timeout = '10min'", transaction: tx, cancellationToken: ct));
        var parent = await conn.QuerySingleOrDefaultAsync<(string Status, DateTime? StartedAt)>(new CommandDefinition(
            "SELECT status, started_at FROM jobs WHERE id = @id FOR UPDATE", new { id = part.ParentJobId }, tx, cancellationToken: ct));
        var done = await DoneAsync(conn, tx, part.ParentJobId, ct);
        if (await conn.ExecuteScalarAsync<bool>(new CommandDefinition(
                "SELECT EXISTS (SELECT 1 FROM calibration_parts WHERE parent_job_id = @p AND part = @i)",
                new { p = part.ParentJobId, i = part.Part }, tx, cancellationToken: ct)))
        {
            return new PartFinishResult(PartFinish.AlreadyStored, done, part.PartCount, null);
        }
        if (parent.Status != "running")
        {
            return new PartFinishResult(PartFinish.ParentEnded, done, part.PartCount, null);
        }
        await using (var insert = new NpgsqlCommand("""
            INSERT INTO calibration_parts (parent_job_id, part, resolution, job_id, worker, seconds, finished_at, outcome)
            VALUES (@parent, @part, @resolution, @job, @worker, @seconds, @now, @outcome)
            """, conn, tx))
        {
            insert.Parameters.AddWithValue("parent", part.ParentJobId);
            insert.Parameters.AddWithValue("part", part.Part);
            insert.Parameters.AddWithValue("resolution", part.Resolution);
            insert.Parameters.AddWithValue("job", part.JobId);
            insert.Parameters.AddWithValue("worker", part.Worker);
            insert.Parameters.AddWithValue("seconds", part.Seconds);
            insert.Parameters.AddWithValue("now", now);
            insert.Parameters.Add(new NpgsqlParameter("outcome", NpgsqlDbType.Jsonb) { Value = part.OutcomeJson });
            await insert.ExecuteNonQueryAsync(ct);
        }
        await JobStore.CompleteWithinAsync(conn, tx, part.JobId, partResultJson, now, ct);
        done++;
        if (done < part.PartCount)
        {
            var fraction = done / (double)part.PartCount;
            var elapsed = parent.StartedAt is { } started ? (now - Utc.From(started)).TotalSeconds : (double?)null;
            await conn.ExecuteAsync(new CommandDefinition("""
                UPDATE jobs SET progress = @fraction, eta_seconds = @eta, heartbeat_at = @now, progress_note = @note WHERE id = @id
                """, new
            {
                id = part.ParentJobId, fraction, now,
                eta = elapsed is { } e ? e * (1 - fraction) / fraction : (double?)null,
                note = $"{done} of {part.PartCount} parts done (one per R); the last stored: R {part.Resolution.ToString(System.Globalization.CultureInfo.InvariantCulture)} by {part.Worker}",
            }, tx, cancellationToken: ct));
            await tx.CommitAsync(ct);
            return new PartFinishResult(PartFinish.Stored, done, part.PartCount, null);
        }
        var outcomes = (await conn.QueryAsync<string>(new CommandDefinition(
            "SELECT outcome::text FROM calibration_parts WHERE parent_job_id = @p ORDER BY part", new { p = part.ParentJobId }, tx, cancellationToken: ct))).ToList();
        var calibration = await CalibrationStore.AddWithinAsync(conn, tx, assemble(outcomes) with { JobId = part.ParentJobId }, activate, now, ct);
        await JobStore.CompleteWithinAsync(conn, tx, part.ParentJobId, parentResultJson(calibration), now, ct);
        await tx.CommitAsync(ct);
        return new PartFinishResult(PartFinish.Assembled, done, part.PartCount, calibration);
    }

    /// <summary>The stored parts of a calibration job, in part order.</summary>
    public async Task<IReadOnlyList<CalibrationPartRow>> ListAsync(Guid parentJobId, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<(int Part, double Resolution, Guid JobId, string Worker, double Seconds, DateTime FinishedAt)>(new CommandDefinition(
            "SELECT part, resolution, job_id, worker, seconds, finished_at FROM calibration_parts WHERE parent_job_id = @parentJobId ORDER BY part",
            new { parentJobId }, cancellationToken: ct));
        return rows.Select(r => new CalibrationPartRow(r.Part, r.Resolution, r.JobId, r.Worker, r.Seconds, Utc.From(r.FinishedAt))).ToList();
    }

    private static Task<int> DoneAsync(NpgsqlConnection conn, NpgsqlTransaction tx, Guid parent, CancellationToken ct) =>
        conn.ExecuteScalarAsync<int>(new CommandDefinition("SELECT count(*)::int FROM calibration_parts WHERE parent_job_id = @parent", new { parent }, tx, cancellationToken: ct));
}
