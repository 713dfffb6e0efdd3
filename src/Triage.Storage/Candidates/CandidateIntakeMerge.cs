using System.Text.Json;
using Dapper;
using Npgsql;
using Triage.Core.Candidates;

namespace Triage.Storage.Candidates;

// Batch intake. A candidate's photometry is one row of parallel arrays in candidate_light_curves
// (migration 0075), so a batch of 5,000 candidates × 10 points writes 5,000 light-curve rows
// instead of 50,000 point rows.
//
// Large batches: one probe reads which of the batch's broker ids are stored and the hash of
// their last submission. Candidates never sent before go straight into candidates and
// candidate_light_curves with two binary COPYs (PostgreSQL writes COPY rows in buffered groups;
// the rows are encoded in memory by PgCopyRows). Their 'created' history event is read from the
// candidate row itself (migration 0080), so nothing else is written for them. Candidates sent with the same content are left alone (unchanged).
// Only those sent before with other content are merged: one COPY into a transaction-scoped
// staging table, then one round trip of two statements:
//   A. the candidate merge (INSERT … ON CONFLICT on the broker's id, which also re-checks the
//      hash and the older-snapshot rule under the row lock), the updated ones' events, and the light curves
//      of any candidates it created; the candidates it updated are noted in a second staging table;
//   C. the stored light curves of those updated candidates.
// The client merges those curves with the incoming points (StoredLightCurve.Merge) and writes them
// back with a second COPY and one upsert (D).
// Small batches skip the staging tables: A reads array parameters, C reads the updated
// candidates' curves by id, and the new and merged curves go back as one batch of upserts.
//
// Exactly-once: a fresh candidate's COPY is refused by the unique broker-id key when a
// concurrent batch created it first (after waiting for that commit); the transaction rolls back
// and the batch is retried, now finding it stored. A takes the lock of every candidate row it inserts or updates (and waits for a
// concurrent batch holding one), and only the holder of that lock writes the candidate's light
// curve. C runs as its own statement after A, so its snapshot already holds whatever a
// concurrent batch committed for those candidates before A got their locks: no point is lost
// or duplicated, and an identical concurrent batch finds the content hash equal and writes nothing.
public sealed partial class CandidateStore
{
    private const string LightCurveColumns = "band, observed_at, flux_microjy, flux_error_microjy, upper_limit, mag_ab, mag_ab_error";

    // The staging table lives for one transaction. JIT is off for the merge: the planner cannot
    // know the staging table's size, and compiling cost more than it saved.
    private const string CreateStagingSql = """
        SET LOCAL jit = off;
        SET LOCAL work_mem = '64MB';
        CREATE TEMP TABLE stage_candidates (
            n int, id uuid, broker_candidate_id text, ra_deg float8, dec_deg float8, ux float8, uy float8, uz float8,
            discovered_at timestamptz, redshift float8, redshift_error float8, subtype_probabilities jsonb,
            science_weight float8, notes text, broker_state jsonb, content_hash bytea, peak_flux_microjy float8, newest_observed_at timestamptz,
            band text[], observed_at timestamptz[], flux_microjy float8[], flux_error_microjy float8[], upper_limit boolean[],
            mag_ab float8[], mag_ab_error float8[]) ON COMMIT DROP;
        CREATE TEMP TABLE stage_updated (n int, id uuid) ON COMMIT DROP;
        CREATE TEMP TABLE stage_merged (candidate_id uuid, band text[], observed_at timestamptz[], flux_microjy float8[],
            flux_error_microjy float8[], upper_limit boolean[], mag_ab float8[], mag_ab_error float8[]) ON COMMIT DROP;
        """;

    // Inserts new candidates and updates changed ones (content hash differs and the submission is
    // not an older snapshot: its newest point is not earlier than the stored newest), writes the updated ones' events,
    // and yields the candidates it touched: their ordinal n in the batch (via the staging rows),
    // stored id, and whether this statement created them. Rows are taken in broker-id order so
    // concurrent batches lock candidates in the same order.
    private const string CandidateMergeSql = """
        up AS (
            INSERT INTO candidates (id, broker, broker_candidate_id, ra_deg, dec_deg, ux, uy, uz, discovered_at, redshift,
                redshift_error, subtype_probabilities, science_weight, notes, broker_state, content_hash, peak_flux_microjy, newest_observed_at, created_at, updated_at)
            SELECT id, @broker, broker_candidate_id, ra_deg, dec_deg, ux, uy, uz, discovered_at, redshift, redshift_error,
                subtype_probabilities, science_weight, notes, broker_state, content_hash, peak_flux_microjy, newest_observed_at, @now, @now
            FROM {0} ORDER BY broker_candidate_id
            ON CONFLICT (broker, broker_candidate_id) DO UPDATE SET
                ra_deg = EXCLUDED.ra_deg, dec_deg = EXCLUDED.dec_deg, ux = EXCLUDED.ux, uy = EXCLUDED.uy, uz = EXCLUDED.uz,
                discovered_at = EXCLUDED.discovered_at, redshift = EXCLUDED.redshift, redshift_error = EXCLUDED.redshift_error,
                subtype_probabilities = EXCLUDED.subtype_probabilities, science_weight = EXCLUDED.science_weight,
                notes = EXCLUDED.notes, broker_state = EXCLUDED.broker_state, content_hash = EXCLUDED.content_hash,
                peak_flux_microjy = GREATEST(candidates.peak_flux_microjy, EXCLUDED.peak_flux_microjy),
                newest_observed_at = GREATEST(candidates.newest_observed_at, EXCLUDED.newest_observed_at),
                data_version = candidates.data_version + 1, version = candidates.version + 1, updated_at = EXCLUDED.updated_at,
                state = CASE WHEN candidates.state = 'stale' THEN 'new' ELSE candidates.state END
            WHERE candidates.content_hash <> EXCLUDED.content_hash
              AND (candidates.newest_observed_at IS NULL OR EXCLUDED.newest_observed_at >= candidates.newest_observed_at)
            RETURNING id, broker_candidate_id, (xmax = 0) AS inserted
        ), events AS (
            INSERT INTO candidate_event_log (candidate_id, at, kind, actor)
            SELECT id, @now, 'updated', @broker FROM up WHERE NOT inserted
        ), changed AS (
            SELECT up.id, up.inserted, s.n FROM up JOIN stage_candidates s ON s.broker_candidate_id = up.broker_candidate_id
        )
        """;

    // A: the merge over the staging table. The light curves of the candidates it creates go in
    // with it: a created row carries the id staged for it, new and unknown to anyone else until
    // the commit, so no other writer can hold one of these keys. The candidates it updates are
    // noted (narrow rows) for C.
    private static readonly string MergeCandidatesFromTableSql = "WITH " + Fill(CandidateMergeSql, "stage_candidates") + $"""
        , new_curves AS (
            INSERT INTO candidate_light_curves (candidate_id, {LightCurveColumns})
            SELECT s.id, {LightCurveColumnsOf("s")}
            FROM stage_candidates s
            WHERE s.id IN (SELECT id FROM up WHERE inserted)
            ORDER BY s.id
            RETURNING cardinality(band) AS points
        ), noted AS (
            INSERT INTO stage_updated (n, id)
            SELECT s.n, up.id FROM up JOIN stage_candidates s ON s.broker_candidate_id = up.broker_candidate_id
            WHERE NOT up.inserted
        )
        SELECT (SELECT count(*) FROM up WHERE inserted)::int, (SELECT count(*) FROM up WHERE NOT inserted)::int,
               (SELECT COALESCE(sum(points), 0) FROM new_curves)::int
        """;

    private static string LightCurveColumnsOf(string alias) => string.Join(", ", LightCurveColumns.Split(", ").Select(c => $"{alias}.{c}"));

    // C: the stored light curves of the candidates A updated (none: no row), read as a statement
    // of its own after A, so its snapshot holds whatever a concurrent batch committed for those
    // candidates before A got their locks. The client merges them with the incoming points.
    private static readonly string ReadUpdatedCurvesSql = $"""
        SELECT u.n, u.id, {LightCurveColumnsOf("l")}
        FROM stage_updated u LEFT JOIN candidate_light_curves l ON l.candidate_id = u.id
        """;

    // A merged curve replaces the stored one.
    private const string ReplaceCurve = """
        ON CONFLICT (candidate_id) DO UPDATE SET
            band = EXCLUDED.band, observed_at = EXCLUDED.observed_at, flux_microjy = EXCLUDED.flux_microjy,
            flux_error_microjy = EXCLUDED.flux_error_microjy, upper_limit = EXCLUDED.upper_limit,
            mag_ab = EXCLUDED.mag_ab, mag_ab_error = EXCLUDED.mag_ab_error
        """;

    // D: the merged light curves of the updated candidates, from the second COPY.
    private const string StoreMergedCurvesSql = $"""
        INSERT INTO candidate_light_curves (candidate_id, {LightCurveColumns})
        SELECT candidate_id, {LightCurveColumns} FROM stage_merged ORDER BY candidate_id
        {ReplaceCurve}
        """;

    private const string ReadCurvesByIdSql = $"""
        SELECT candidate_id, {LightCurveColumns} FROM candidate_light_curves WHERE candidate_id = ANY(@ids)
        """;

    // The small path's write of one light curve (new or merged).
    private const string UpsertCurveSql = $"""
        INSERT INTO candidate_light_curves (candidate_id, {LightCurveColumns})
        VALUES (@id, @band, @observed_at, @flux_microjy, @flux_error_microjy, @upper_limit, @mag_ab, @mag_ab_error)
        {ReplaceCurve}
        """;

    private static string Fill(string template, string what) => string.Format(System.Globalization.CultureInfo.InvariantCulture, template, what);

    // Small batches (a broker posting one candidate at a time) skip the temporary table: the
    // same merge reads the rows from array parameters, which saves the catalog work per request.
    private const string StageFromArrays = """
        stage_candidates AS (
            SELECT * FROM unnest(@ids::uuid[], @cids::text[], @ras::float8[], @decs::float8[], @uxs::float8[], @uys::float8[], @uzs::float8[],
                @discovered::timestamptz[], @redshifts::float8[], @redshiftErrors::float8[], @probabilities::text[], @weights::float8[],
                @notes::text[], @states::text[], @hashes::bytea[], @peaks::float8[], @newest::timestamptz[]) WITH ORDINALITY
                AS t(id, broker_candidate_id, ra_deg, dec_deg, ux, uy, uz, discovered_at, redshift, redshift_error, probabilities_text,
                     science_weight, notes, broker_state_text, content_hash, peak_flux_microjy, newest_observed_at, n)
        ), stage_candidates_typed AS (
            SELECT id, broker_candidate_id, ra_deg, dec_deg, ux, uy, uz, discovered_at, redshift, redshift_error,
                probabilities_text::jsonb AS subtype_probabilities, science_weight, notes, broker_state_text::jsonb AS broker_state, content_hash,
                peak_flux_microjy, newest_observed_at
            FROM stage_candidates
        ),
        """;

    /// <summary>Largest batch merged from array parameters instead of COPY and a staging table.</summary>
    public const int ArrayPathMaxCandidates = 32;

    private static readonly string MergeCandidatesFromArraysSql = "WITH " + StageFromArrays + Fill(CandidateMergeSql, "stage_candidates_typed") +
        "SELECT n::int AS N, id AS Id, inserted AS Inserted FROM changed";

    /// <summary>
    /// Stores a validated batch for one broker, all or nothing. Retries twice after a deadlock, a
    /// serialization failure, or a concurrent batch creating one of its new candidates first.
    /// </summary>
    public async Task<IntakeSummary> UpsertBatchAsync(string broker, IReadOnlyList<CandidateIntake> batch, DateTimeOffset now, CancellationToken ct = default)
    {
        for (int attempt = 0; ; attempt++)
        {
            try
            {
                return batch.Count <= ArrayPathMaxCandidates
                    ? await UpsertFromArraysAsync(broker, batch, now, ct)
                    : await UpsertLargeAsync(broker, batch, now, ct);
            }
            catch (PostgresException ex) when (attempt < 2 && (ex.SqlState is PostgresErrorCodes.DeadlockDetected or PostgresErrorCodes.SerializationFailure
                || ex is { SqlState: PostgresErrorCodes.UniqueViolation, ConstraintName: "candidates_broker_id" }))
            {
                await Task.Delay(20 * (attempt + 1), ct);
            }
        }
    }

    // Which of the batch's candidates the broker has sent before, and the hash of what it sent last:
    // one look-up in the broker-id key per candidate. Written as a loop over the ids (the OFFSET 0
    // keeps the subquery from being flattened into a join) because the equivalent
    // "broker_candidate_id = ANY(@cids)" was planned as a parallel sequential scan of the whole
    // table once it held ~100,000 candidates: 30–50 ms at 170,000 and growing with the table,
    // against 5–13 ms for 5,000 index look-ups at any size (docs/operations.md, "Batch intake at scale").
    private const string ProbeSql = """
        SELECT k.cid, c.content_hash
        FROM unnest(@cids::text[]) AS k(cid)
        CROSS JOIN LATERAL (
            SELECT content_hash FROM candidates WHERE broker = @broker AND broker_candidate_id = k.cid OFFSET 0) c
        """;

    // The number of columns in CandidateCopyColumns.
    private const short CandidateCopyFields = 17;

    private const string CandidateCopyColumns =
        "id, broker_candidate_id, ra_deg, dec_deg, ux, uy, uz, discovered_at, redshift, redshift_error, " +
        "subtype_probabilities, science_weight, notes, broker_state, content_hash, peak_flux_microjy, newest_observed_at";

    private async Task<IntakeSummary> UpsertLargeAsync(string broker, IReadOnlyList<CandidateIntake> batch, DateTimeOffset now, CancellationToken ct)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        var known = (await conn.QueryAsync<(string Id, byte[] Hash)>(new CommandDefinition(ProbeSql,
                new { broker, cids = batch.Select(b => b.Candidate.Id).ToArray() }, tx, cancellationToken: ct)))
            .ToDictionary(k => k.Id, k => k.Hash, StringComparer.Ordinal);
        // Candidates never sent before are copied straight into the tables; those sent with other
        // content go through the merge; those sent with the same content are left alone.
        var fresh = batch.Where(b => !known.ContainsKey(b.Candidate.Id)).OrderBy(b => b.Candidate.Id, StringComparer.Ordinal).ToList();
        var differing = batch.Where(b => known.TryGetValue(b.Candidate.Id, out var hash) && !hash.AsSpan().SequenceEqual(b.ContentHash)).ToList();
        int written = fresh.Count == 0 ? 0 : await CopyFreshAsync(conn, broker, fresh, now, ct);
        var (created, updated, merged) = differing.Count == 0 ? (0, 0, 0) : await MergeThroughStagingAsync(conn, tx, broker, differing, now, ct);
        await tx.CommitAsync(ct);
        return new IntakeSummary(batch.Count, fresh.Count + created, updated, batch.Count - fresh.Count - created - updated, written + merged);
    }

    /// <summary>
    /// Candidates the probe found absent: binary COPY straight into candidates and
    /// candidate_light_curves (PostgreSQL inserts COPY rows in buffered groups, much cheaper
    /// than row-by-row INSERT … ON CONFLICT). A concurrent batch that creates one of them first
    /// makes the unique broker-id key refuse this COPY (after waiting for its commit): the whole
    /// transaction rolls back and the batch is retried, now finding them present. Rows go in
    /// broker-id order, so two such batches meet their common ids in the same order.
    /// </summary>
    private static async Task<int> CopyFreshAsync(NpgsqlConnection conn, string broker, IReadOnlyList<CandidateIntake> fresh, DateTimeOffset now, CancellationToken ct)
    {
        var ids = NewIds(fresh.Count, now);
        var at = now.UtcDateTime;
        var candidates = new PgCopyRows(fresh.Count * 256);
        for (int n = 0; n < fresh.Count; n++)
        {
            candidates.StartRow(CandidateCopyFields + 3);
            WriteCandidate(candidates, ids[n], fresh[n]);
            candidates.Text(broker);
            candidates.TimestampTz(at);
            candidates.TimestampTz(at);
        }
        await candidates.SendAsync(conn, $"COPY candidates ({CandidateCopyColumns}, broker, created_at, updated_at) FROM STDIN (FORMAT BINARY)", ct);
        int points = 0;
        var curves = new PgCopyRows(fresh.Count * 1024);
        for (int n = 0; n < fresh.Count; n++)
        {
            curves.StartRow(8);
            curves.Uuid(ids[n]);
            StoredLightCurve.Of(fresh[n].Candidate.Photometry).WriteTo(curves);
            points += fresh[n].Candidate.Photometry.Count;
        }
        await curves.SendAsync(conn, $"COPY candidate_light_curves (candidate_id, {LightCurveColumns}) FROM STDIN (FORMAT BINARY)", ct);
        return points;
    }

    /// <summary>The candidate columns of <see cref="CandidateCopyColumns"/>, in that order.</summary>
    private static void WriteCandidate(PgCopyRows copy, Guid id, CandidateIntake intake)
    {
        var (c, hash) = intake;
        var (x, y, z) = UnitVector(c.RaDeg, c.DecDeg);
        copy.Uuid(id);
        copy.Text(c.Id);
        copy.Float8(c.RaDeg);
        copy.Float8(c.DecDeg);
        copy.Float8(x);
        copy.Float8(y);
        copy.Float8(z);
        copy.TimestampTz(c.DiscoveredUtc.UtcDateTime);
        copy.Float8(c.Redshift);
        copy.Float8(c.RedshiftError);
        copy.Jsonb(c.SubtypeProbabilities is null ? null : JsonSerializer.Serialize(c.SubtypeProbabilities));
        copy.Float8(c.ScienceWeight);
        copy.TextOrNull(c.Notes);
        copy.Jsonb(c.BrokerState is null ? null : JsonSerializer.Serialize(c.BrokerState, BrokerBatchJson.Options));
        copy.Bytea(hash);
        copy.Float8(PeakFlux(c));
        copy.TimestampTz(NewestObservation(c));
    }

    /// <summary>
    /// Candidates sent before with other content: staged and merged under their row locks (A),
    /// their stored curves read (C) and merged with the incoming points (D). Answers created
    /// (a candidate deleted since the probe), updated, and points written.
    /// </summary>
    private static async Task<(int Created, int Updated, int Written)> MergeThroughStagingAsync(
        NpgsqlConnection conn, NpgsqlTransaction tx, string broker, IReadOnlyList<CandidateIntake> batch, DateTimeOffset now, CancellationToken ct)
    {
        await conn.ExecuteAsync(new CommandDefinition(CreateStagingSql, transaction: tx, cancellationToken: ct));
        var staged = new PgCopyRows(batch.Count * 1280);
        var ids = NewIds(batch.Count, now);
        for (int n = 0; n < batch.Count; n++)
        {
            staged.StartRow(1 + CandidateCopyFields + 7);
            staged.Int4(n);
            WriteCandidate(staged, ids[n], batch[n]);
            StoredLightCurve.Of(batch[n].Candidate.Photometry).WriteTo(staged);
        }
        await staged.SendAsync(conn, $"COPY stage_candidates (n, {CandidateCopyColumns}, {LightCurveColumns}) FROM STDIN (FORMAT BINARY)", ct);

        // A and C in one round trip, as two statements: C's snapshot is taken after A holds its locks.
        await using var merge = new NpgsqlBatch(conn, tx)
        {
            BatchCommands =
            {
                new NpgsqlBatchCommand(MergeCandidatesFromTableSql) { Parameters = { new("broker", broker), new("now", now.UtcDateTime) } },
                new NpgsqlBatchCommand(ReadUpdatedCurvesSql),
            },
        };
        int created, updated, written;
        var merged = new List<(Guid Id, StoredLightCurve Curve)>();
        await using (var reader = await merge.ExecuteReaderAsync(ct))
        {
            await reader.ReadAsync(ct);
            (created, updated, written) = (reader.GetInt32(0), reader.GetInt32(1), reader.GetInt32(2));
            await reader.NextResultAsync(ct);
            while (await reader.ReadAsync(ct))
            {
                var incoming = batch[reader.GetInt32(0)].Candidate.Photometry;
                var stored = StoredLightCurve.Read(reader, 2);
                var (curve, count) = stored is null ? (StoredLightCurve.Of(incoming), incoming.Count) : stored.Merge(incoming);
                written += count;
                if (count > 0)
                {
                    merged.Add((reader.GetGuid(1), curve));
                }
            }
        }
        if (merged.Count > 0)
        {
            // D: the merged curves of the updated candidates, in id order.
            var rows = new PgCopyRows(merged.Count * 1024);
            foreach (var (id, curve) in merged)
            {
                rows.StartRow(8);
                rows.Uuid(id);
                curve.WriteTo(rows);
            }
            await rows.SendAsync(conn, $"COPY stage_merged (candidate_id, {LightCurveColumns}) FROM STDIN (FORMAT BINARY)", ct);
            await conn.ExecuteAsync(new CommandDefinition(StoreMergedCurvesSql, transaction: tx, cancellationToken: ct));
        }
        return (created, updated, written);
    }

    private sealed record ChangedCandidate(int N, Guid Id, bool Inserted);

    /// <summary>The time of a candidate's newest photometry point (detection or limit).</summary>
    private static DateTime NewestObservation(Candidate c) => c.Photometry.Max(p => p.TimeUtc).UtcDateTime;

    private async Task<IntakeSummary> UpsertFromArraysAsync(string broker, IReadOnlyList<CandidateIntake> batch, DateTimeOffset now, CancellationToken ct)
    {
        var candidates = batch.Select(b => b.Candidate).ToArray();
        var vectors = candidates.Select(c => UnitVector(c.RaDeg, c.DecDeg)).ToArray();
        var parameters = new
        {
            broker,
            now,
            ids = NewIds(candidates.Length, now),
            cids = candidates.Select(c => c.Id).ToArray(),
            ras = candidates.Select(c => c.RaDeg).ToArray(),
            decs = candidates.Select(c => c.DecDeg).ToArray(),
            uxs = vectors.Select(v => v.X).ToArray(),
            uys = vectors.Select(v => v.Y).ToArray(),
            uzs = vectors.Select(v => v.Z).ToArray(),
            discovered = candidates.Select(c => c.DiscoveredUtc.UtcDateTime).ToArray(),
            redshifts = candidates.Select(c => c.Redshift).ToArray(),
            redshiftErrors = candidates.Select(c => c.RedshiftError).ToArray(),
            probabilities = candidates.Select(c => c.SubtypeProbabilities is null ? null : JsonSerializer.Serialize(c.SubtypeProbabilities)).ToArray(),
            weights = candidates.Select(c => c.ScienceWeight).ToArray(),
            notes = candidates.Select(c => c.Notes).ToArray(),
            states = candidates.Select(c => c.BrokerState is null ? null : JsonSerializer.Serialize(c.BrokerState, BrokerBatchJson.Options)).ToArray(),
            newest = candidates.Select(NewestObservation).ToArray(),
            hashes = batch.Select(b => b.ContentHash).ToArray(),
            peaks = candidates.Select(PeakFlux).ToArray(),
        };
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        var changed = (await conn.QueryAsync<ChangedCandidate>(
            new CommandDefinition(MergeCandidatesFromArraysSql, parameters, tx, cancellationToken: ct))).ToList();
        int created = changed.Count(c => c.Inserted);
        int written = 0;
        if (changed.Count > 0)
        {
            // The stored curves of the updated candidates, read after A holds their locks (a statement of its own).
            var updatedIds = changed.Where(c => !c.Inserted).Select(c => c.Id).ToArray();
            var stored = new Dictionary<Guid, StoredLightCurve>();
            if (updatedIds.Length > 0)
            {
                await using var read = new NpgsqlCommand(ReadCurvesByIdSql, conn, tx) { Parameters = { new("ids", updatedIds) } };
                await using var reader = await read.ExecuteReaderAsync(ct);
                while (await reader.ReadAsync(ct))
                {
                    stored[reader.GetGuid(0)] = StoredLightCurve.Read(reader, 1)!;
                }
            }
            await using var write = new NpgsqlBatch(conn, tx);
            foreach (var c in changed.OrderBy(c => c.Id))
            {
                var incoming = candidates[c.N - 1].Photometry; // n is 1-based
                var (curve, count) = stored.TryGetValue(c.Id, out var old) ? old.Merge(incoming) : (StoredLightCurve.Of(incoming), incoming.Count);
                written += count;
                if (count > 0)
                {
                    var command = new NpgsqlBatchCommand(UpsertCurveSql) { Parameters = { new("id", c.Id) } };
                    command.Parameters.AddRange(curve.Parameters().ToArray());
                    write.BatchCommands.Add(command);
                }
            }
            if (write.BatchCommands.Count > 0)
            {
                await write.ExecuteNonQueryAsync(ct);
            }
        }
        await tx.CommitAsync(ct);
        return new IntakeSummary(batch.Count, created, changed.Count - created, batch.Count - changed.Count, written);
    }

    /// <summary>The largest flux of the candidate's detections (upper limits and non-positive fluxes skipped), µJy; null without one.</summary>
    internal static double? PeakFlux(Candidate c)
    {
        double? peak = null;
        foreach (var p in c.Photometry)
        {
            if (!p.IsUpperLimit && p.FluxMicroJy > 0 && (peak is null || p.FluxMicroJy > peak))
            {
                peak = p.FluxMicroJy;
            }
        }
        return peak;
    }

    /// <summary>Fresh time-ordered ids, ascending, so new rows are appended at the end of the id indexes.</summary>
    private static Guid[] NewIds(int count, DateTimeOffset now)
    {
        var ids = new Guid[count];
        for (int i = 0; i < count; i++)
        {
            ids[i] = Guid.CreateVersion7(now);
        }
        Array.Sort(ids, static (a, b) => a.CompareTo(b));
        return ids;
    }

    /// <summary>
    /// Unit vector of an ICRS direction (for cone searches). Components smaller than 1e-100 are
    /// stored as 0: PostgreSQL raises an error when a product in the cone test underflows (a
    /// declination of 1e-320° once made every cone search over that row fail), and no position
    /// differs measurably at that scale.
    /// </summary>
    public static (double X, double Y, double Z) UnitVector(double raDeg, double decDeg)
    {
        double ra = raDeg * Math.PI / 180, dec = decDeg * Math.PI / 180;
        return (Flush(Math.Cos(dec) * Math.Cos(ra)), Flush(Math.Cos(dec) * Math.Sin(ra)), Flush(Math.Sin(dec)));
    }

    private static double Flush(double component) => Math.Abs(component) < 1e-100 ? 0 : component;
}
