using System.Text.Json;
using Dapper;
using Npgsql;
using NpgsqlTypes;
using Triage.Core.Candidates;

namespace Triage.Storage.Candidates;

/// <summary>A validated candidate with the hash of the submission it came from.</summary>
public sealed record CandidateIntake(Candidate Candidate, byte[] ContentHash)
{
    /// <summary>The intake of a validated candidate, hashed over the broker's own submission so a retry is recognised as unchanged.</summary>
    public static CandidateIntake From(Candidate candidate, CandidateSubmission submission) =>
        new(candidate, System.Security.Cryptography.SHA256.HashData(JsonSerializer.SerializeToUtf8Bytes(submission, BrokerBatchJson.Options)));
}

/// <summary>What a batch upsert did.</summary>
public sealed record IntakeSummary(int Received, int Created, int Updated, int Unchanged, int PhotometryWritten);

/// <summary>Filters for listing candidates; null means "any".</summary>
/// <param name="State">Lifecycle state.</param>
/// <param name="ConeRaDeg">Cone centre RA (with <paramref name="ConeDecDeg"/> and <paramref name="ConeRadiusDeg"/>).</param>
/// <param name="ConeDecDeg">Cone centre Dec.</param>
/// <param name="ConeRadiusDeg">Cone radius, degrees.</param>
/// <param name="BrighterThanMagAb">Only candidates predicted brighter (smaller magnitude) than this at <paramref name="At"/>.</param>
/// <param name="At">Instant of the brightness prediction.</param>
/// <param name="UpdatedSince">Only candidates changed at or after this instant.</param>
/// <param name="After">Cursor: only ids after this one.</param>
/// <param name="Limit">Page size.</param>
public sealed record CandidateQuery(
    CandidateState? State, double? ConeRaDeg, double? ConeDecDeg, double? ConeRadiusDeg,
    double? BrighterThanMagAb, DateTimeOffset At, DateTimeOffset? UpdatedSince, Guid? After, int Limit)
{
    /// <summary>Only the candidate(s) with this broker's own id.</summary>
    public string? BrokerCandidateId { get; init; }

    /// <summary>Only candidates of this broker (the posting key's public id).</summary>
    public string? Broker { get; init; }
}

/// <summary>A candidate as listed.</summary>
public sealed record CandidateListRow(
    Guid Id, string Broker, string BrokerCandidateId, double RaDeg, double DecDeg, DateTimeOffset DiscoveredAt,
    double? Redshift, string State, string? ClassifiedLabel, double ScienceWeight,
    double? PredictedMag, double? PredictedMagRate, DateTimeOffset? FittedAt, bool FitCurrent, DateTimeOffset UpdatedAt);

/// <summary>One lifecycle or intake event.</summary>
public sealed record CandidateEventRow(DateTimeOffset At, string Kind, string? FromState, string? ToState, string Actor, string? Detail);

/// <summary>One observation report.</summary>
public sealed record ObservationReportRow(
    Guid Id, Guid SpectrographId, string Outcome, double? AchievedSnr, string? ClassifiedLabel, DateTimeOffset ObservedAt, DateTimeOffset ReportedAt, string Reporter)
{
    /// <summary>Reported probabilities per label (null: only a label, or no label).</summary>
    public IReadOnlyDictionary<string, double>? ReportedProbabilities { get; init; }

    /// <summary>Reported phase, rest-frame days from peak (null when not given).</summary>
    public double? PhaseDays { get; init; }

    /// <summary>R of the unit when the report was weighed.</summary>
    public double? ResolvingPower { get; init; }

    /// <summary>Subtype probabilities before the report (null: the label was not weighed).</summary>
    public IReadOnlyDictionary<string, double>? Prior { get; init; }

    /// <summary>Subtype probabilities after the report.</summary>
    public IReadOnlyDictionary<string, double>? Posterior { get; init; }

    /// <summary>The calibration cells whose confusion channel weighed the label (JSON).</summary>
    public System.Text.Json.JsonElement? ConfusionCell { get; init; }

    /// <summary>Calibration used.</summary>
    public Guid? CalibrationId { get; init; }
}

/// <summary>What the store holds about a candidate's subtype belief when a report arrives (read under the row lock).</summary>
/// <param name="PosteriorJson">Label → probability after the last weighed report, or null.</param>
public sealed record StoredBelief(string? PosteriorJson);

/// <summary>How a labelled report was weighed (computed by the caller under the row lock).</summary>
/// <param name="Settled">The posterior reached the identification confidence: the candidate becomes classified.</param>
/// <param name="StoredLabel">Label kept on the candidate: the winning subtype when settled, else null.</param>
/// <param name="PriorJson">Label → probability before the report.</param>
/// <param name="PosteriorJson">Label → probability after it.</param>
/// <param name="CellJson">The calibration cells used, or null when the label was taken as reported.</param>
/// <param name="ResolvingPower">R of the unit.</param>
/// <param name="CalibrationId">Calibration whose channel was used, or null.</param>
/// <param name="Detail">History line.</param>
public sealed record WeighedLabel(bool Settled, string? StoredLabel, string? PriorJson, string? PosteriorJson, string? CellJson,
    double? ResolvingPower, Guid? CalibrationId, string Detail);

/// <summary>The extra content of a labelled report.</summary>
/// <param name="ProbabilitiesJson">Reported probabilities per label, or null.</param>
/// <param name="PhaseDays">Reported phase, or null.</param>
/// <param name="Weigh">Computes the update from the belief read under the lock; may throw <see cref="ArgumentException"/> to refuse (nothing is stored).</param>
public sealed record LabelEvidence(string? ProbabilitiesJson, double? PhaseDays, Func<StoredBelief, WeighedLabel> Weigh);

/// <summary>Everything stored about one candidate.</summary>
public sealed record CandidateDetail(
    CandidateListRow Summary, Candidate Candidate, int DataVersion, int FitVersion, string? FitJson, string? PriorJson,
    IReadOnlyList<CandidateEventRow> History, IReadOnlyList<ObservationReportRow> Observations)
{
    /// <summary>Subtype probabilities after the last weighed labelled report (null: none yet).</summary>
    public IReadOnlyDictionary<string, double>? Posterior { get; init; }
}

/// <summary>A fit computed for a stored candidate.</summary>
public sealed record StoredFit(Guid Id, int DataVersion, string FitJson, string PriorJson, double? PredictedMag, double? PredictedMagRate, DateTimeOffset FittedAt);

/// <summary>A candidate whose stored fit is older than its data.</summary>
public sealed record PendingFit(Guid Id, int DataVersion, Candidate Candidate);

/// <summary>How an observation report ended.</summary>
public enum ReportOutcome
{
    Recorded,
    UnknownCandidate,
    RefusedInState,
}

/// <summary>
/// Candidates in PostgreSQL. Batch intake copies the batch (candidates with their light curves)
/// into a temporary staging table with binary COPY and merges it with <c>INSERT … SELECT … ON
/// CONFLICT</c> in one transaction, so a batch is stored whole or not at all and concurrent
/// retries of the same batch never duplicate a candidate or a photometry point. Photometry is one
/// row of arrays per candidate (<c>candidate_light_curves</c>), read point by point through the
/// <c>candidate_photometry</c> view.
/// </summary>
public sealed partial class CandidateStore(NpgsqlDataSource dataSource)
{
    // ---- queries --------------------------------------------------------------------------

    private const string ListColumns = """
        id AS Id, broker AS Broker, broker_candidate_id AS BrokerCandidateId, ra_deg AS RaDeg, dec_deg AS DecDeg,
        discovered_at AS DiscoveredAt, redshift AS Redshift, state AS State, classified_label AS ClassifiedLabel,
        science_weight AS ScienceWeight, predicted_mag AS PredictedMag, predicted_mag_rate AS PredictedMagRate,
        fitted_at AS FittedAt, (fit_version = data_version) AS FitCurrent, updated_at AS UpdatedAt
        """;

    private const string ListSql = $"""
        SELECT {ListColumns} FROM candidates
        WHERE (@state::text IS NULL OR state = @state)
          AND (@updatedSince::timestamptz IS NULL OR updated_at >= @updatedSince)
          AND (@cosRadius::float8 IS NULL OR ux * @x0 + uy * @y0 + uz * @z0 >= @cosRadius)
          AND (@brighterThan::float8 IS NULL OR (predicted_mag IS NOT NULL
               AND predicted_mag + predicted_mag_rate * (extract(epoch FROM (@at::timestamptz - fitted_at)) / 86400.0) <= @brighterThan))
          AND (@after::uuid IS NULL OR id > @after)
          AND (@brokerId::text IS NULL OR broker_candidate_id = @brokerId)
          AND (@broker::text IS NULL OR broker = @broker)
        ORDER BY id
        LIMIT @limit
        """;

    /// <summary>One page of candidates ordered by id (ids grow with creation time).</summary>
    public async Task<IReadOnlyList<CandidateListRow>> ListAsync(CandidateQuery q, CancellationToken ct = default)
    {
        double? x0 = null, y0 = null, z0 = null, cosRadius = null;
        if (q.ConeRaDeg is { } ra && q.ConeDecDeg is { } dec && q.ConeRadiusDeg is { } radius)
        {
            (x0, y0, z0) = UnitVector(ra, dec);
            cosRadius = Math.Cos(radius * Math.PI / 180);
        }
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<ListRowData>(new CommandDefinition(ListSql, new
        {
            state = q.State is { } s ? CandidateLifecycle.Name(s) : null,
            updatedSince = q.UpdatedSince?.UtcDateTime,
            cosRadius,
            x0,
            y0,
            z0,
            brighterThan = q.BrighterThanMagAb,
            at = q.At.UtcDateTime,
            after = q.After,
            limit = q.Limit,
            brokerId = q.BrokerCandidateId,
            broker = q.Broker,
        }, cancellationToken: ct));
        return rows.Select(r => r.ToRow()).ToList();
    }

    private const string DetailColumns = $"""
        {ListColumns}, redshift_error AS RedshiftError, subtype_probabilities::text AS SubtypeProbabilities,
            notes AS Notes, broker_state::text AS BrokerState, data_version AS DataVersion, fit_version AS FitVersion,
            fit::text AS Fit, prior::text AS Prior, posterior::text AS Posterior
        """;

    private const string GetSql = $"""
        SELECT {DetailColumns}
        FROM candidates WHERE id = @id;
        SELECT band AS Band, observed_at AS ObservedAt, flux_microjy AS FluxMicroJy, flux_error_microjy AS FluxErrorMicroJy,
            upper_limit AS UpperLimit, mag_ab AS MagAb, mag_ab_error AS MagAbError
        FROM candidate_photometry WHERE candidate_id = @id ORDER BY observed_at, band;
        SELECT at AS At, kind AS Kind, from_state AS FromState, to_state AS ToState, actor AS Actor, detail AS Detail
        FROM candidate_events WHERE candidate_id = @id ORDER BY id;
        SELECT id AS Id, spectrograph_id AS SpectrographId, outcome AS Outcome, achieved_snr AS AchievedSnr,
            classified_label AS ClassifiedLabel, observed_at AS ObservedAt, reported_at AS ReportedAt, reporter AS Reporter,
            reported_probabilities::text AS ReportedProbabilities, phase_days AS PhaseDays, resolving_power AS ResolvingPower,
            prior::text AS Prior, posterior::text AS Posterior, confusion_cell::text AS ConfusionCell, calibration_id AS CalibrationId
        FROM observation_reports WHERE candidate_id = @id ORDER BY observed_at, reported_at;
        """;

    /// <summary>A candidate with its photometry, fit, prior, history and observations; null when unknown.</summary>
    public async Task<CandidateDetail?> GetAsync(Guid id, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await using var grid = await conn.QueryMultipleAsync(new CommandDefinition(GetSql, new { id }, cancellationToken: ct));
        var row = await grid.ReadSingleOrDefaultAsync<DetailRowData>();
        if (row is null)
        {
            return null;
        }
        var photometry = (await grid.ReadAsync<PhotometryRowData>()).Select(p => p.ToPoint()).ToList();
        var events = (await grid.ReadAsync<EventRowData>()).Select(e => new CandidateEventRow(Utc.From(e.At), e.Kind, e.FromState, e.ToState, e.Actor, e.Detail)).ToList();
        var reports = (await grid.ReadAsync<ReportRowData>()).Select(r => r.ToRow()).ToList();
        return new CandidateDetail(row.ToRow(), row.ToCandidate(photometry), row.DataVersion, row.FitVersion, row.Fit, row.Prior, events, reports)
        {
            Posterior = row.Posterior is null ? null : JsonSerializer.Deserialize<Dictionary<string, double>>(row.Posterior),
        };
    }

    private const string InStatesSql = $"""
        SELECT {DetailColumns}
        FROM candidates WHERE state = ANY(@states) ORDER BY id;
        SELECT p.candidate_id AS CandidateId, p.band AS Band, p.observed_at AS ObservedAt, p.flux_microjy AS FluxMicroJy,
            p.flux_error_microjy AS FluxErrorMicroJy, p.upper_limit AS UpperLimit, p.mag_ab AS MagAb, p.mag_ab_error AS MagAbError
        FROM candidate_photometry p JOIN candidates c ON c.id = p.candidate_id
        WHERE c.state = ANY(@states) ORDER BY p.candidate_id, p.observed_at, p.band;
        """;

    /// <summary>
    /// Every candidate in one of <paramref name="states"/> with its photometry, in one round trip
    /// (the planner reads the whole waiting set at once), ordered by id. With
    /// <paramref name="posteriorAsPrior"/> a candidate's stored posterior (after labelled reports)
    /// replaces its broker probabilities, so that the planner values what a next spectrum adds.
    /// </summary>
    public async Task<IReadOnlyList<(Guid Id, Candidate Candidate)>> InStatesWithPhotometryAsync(
        IReadOnlyCollection<CandidateState> states, CancellationToken ct = default, bool posteriorAsPrior = false)
    {
        ArgumentNullException.ThrowIfNull(states);
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await using var grid = await conn.QueryMultipleAsync(new CommandDefinition(InStatesSql,
            new { states = states.Select(CandidateLifecycle.Name).ToArray() }, cancellationToken: ct));
        var rows = (await grid.ReadAsync<DetailRowData>()).ToList();
        var photometry = (await grid.ReadAsync<OwnedPhotometryRowData>()).ToLookup(p => p.CandidateId, p => p.Point.ToPoint());
        return rows.Select(r => (r.Id, r.ToCandidate(photometry[r.Id].ToList(), posteriorAsPrior))).ToList();
    }

    /// <summary>Deletes every candidate of one broker with its photometry, events and reports (the demo loader's reset); returns how many.</summary>
    public async Task<int> DeleteBrokerCandidatesAsync(string broker, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        await conn.ExecuteAsync(new CommandDefinition("""
            DELETE FROM candidate_light_curves WHERE candidate_id IN (SELECT id FROM candidates WHERE broker = @broker);
            DELETE FROM candidate_event_log WHERE candidate_id IN (SELECT id FROM candidates WHERE broker = @broker);
            """, new { broker }, tx, cancellationToken: ct));
        var count = await conn.ExecuteAsync(new CommandDefinition("DELETE FROM candidates WHERE broker = @broker", new { broker }, tx, cancellationToken: ct));
        await tx.CommitAsync(ct);
        return count;
    }

    /// <summary>The broker and the broker's own id of each of <paramref name="ids"/> that exists.</summary>
    public async Task<IReadOnlyDictionary<Guid, (string Broker, string BrokerCandidateId)>> BrokerIdsAsync(IReadOnlyCollection<Guid> ids, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<(Guid Id, string Broker, string BrokerCandidateId)>(new CommandDefinition(
            "SELECT id, broker, broker_candidate_id FROM candidates WHERE id = ANY(@ids)", new { ids = ids.ToArray() }, cancellationToken: ct));
        return rows.ToDictionary(r => r.Id, r => (r.Broker, r.BrokerCandidateId));
    }

    private const string PendingSql = $"""
        SELECT {ListColumns}, redshift_error AS RedshiftError, subtype_probabilities::text AS SubtypeProbabilities,
            notes AS Notes, broker_state::text AS BrokerState, data_version AS DataVersion, fit_version AS FitVersion
        FROM candidates WHERE fit_version < data_version ORDER BY id LIMIT @limit
        """;

    private const string PendingPhotometrySql = """
        SELECT candidate_id AS CandidateId, band AS Band, observed_at AS ObservedAt, flux_microjy AS FluxMicroJy, flux_error_microjy AS FluxErrorMicroJy,
            upper_limit AS UpperLimit, mag_ab AS MagAb, mag_ab_error AS MagAbError
        FROM candidate_photometry WHERE candidate_id = ANY(@ids) ORDER BY candidate_id, observed_at, band
        """;

    /// <summary>
    /// Up to <paramref name="limit"/> candidates whose stored fit is older than their data, with
    /// their photometry, in two queries (the background fitter's read). The photometry is read
    /// after the rows, so it is at least as new as the data version it is paired with.
    /// </summary>
    public async Task<IReadOnlyList<PendingFit>> PendingFitsAsync(int limit, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = (await conn.QueryAsync<DetailRowData>(new CommandDefinition(PendingSql, new { limit }, cancellationToken: ct))).ToList();
        if (rows.Count == 0)
        {
            return [];
        }
        var points = (await conn.QueryAsync<OwnedPhotometryRowData>(new CommandDefinition(PendingPhotometrySql,
                new { ids = rows.Select(r => r.Id).ToArray() }, cancellationToken: ct)))
            .ToLookup(p => p.CandidateId, p => p.Point.ToPoint());
        return rows.Select(r => new PendingFit(r.Id, r.DataVersion, r.ToCandidate(points[r.Id].ToList()))).ToList();
    }

    private const string SaveFitSql = """
        UPDATE candidates SET fit = @FitJson::jsonb, prior = @PriorJson::jsonb, predicted_mag = @PredictedMag,
            predicted_mag_rate = @PredictedMagRate, fitted_at = @FittedAt, fit_version = @DataVersion
        WHERE id = @Id AND fit_version < @DataVersion AND data_version >= @DataVersion
        """;

    private const string SaveFitsSql = """
        UPDATE candidates c SET fit = f.fit::jsonb, prior = f.prior::jsonb, predicted_mag = f.mag, predicted_mag_rate = f.rate,
            fitted_at = f.fitted_at, fit_version = f.data_version
        FROM unnest(@ids::uuid[], @versions::int[], @fits::text[], @priors::text[], @mags::float8[], @rates::float8[], @fittedAt::timestamptz[])
            AS f(id, data_version, fit, prior, mag, rate, fitted_at)
        WHERE c.id = f.id AND c.fit_version < f.data_version AND c.data_version >= f.data_version
        """;

    /// <summary>Stores several fits in one statement, each unless a fit of the same or newer data is already there. Returns how many were stored.</summary>
    public async Task<int> SaveFitsAsync(IReadOnlyList<StoredFit> fits, CancellationToken ct = default)
    {
        if (fits.Count == 0)
        {
            return 0;
        }
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        return await conn.ExecuteAsync(new CommandDefinition(SaveFitsSql, new
        {
            ids = fits.Select(f => f.Id).ToArray(),
            versions = fits.Select(f => f.DataVersion).ToArray(),
            fits = fits.Select(f => f.FitJson).ToArray(),
            priors = fits.Select(f => f.PriorJson).ToArray(),
            mags = fits.Select(f => f.PredictedMag).ToArray(),
            rates = fits.Select(f => f.PredictedMagRate).ToArray(),
            fittedAt = fits.Select(f => f.FittedAt.UtcDateTime).ToArray(),
        }, cancellationToken: ct));
    }

    /// <summary>Stores a fit unless a fit of the same or newer data is already there.</summary>
    public async Task<bool> SaveFitAsync(StoredFit fit, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        return await conn.ExecuteAsync(new CommandDefinition(SaveFitSql, new
        {
            fit.Id,
            fit.DataVersion,
            fit.FitJson,
            fit.PriorJson,
            fit.PredictedMag,
            fit.PredictedMagRate,
            FittedAt = fit.FittedAt.UtcDateTime,
        }, cancellationToken: ct)) == 1;
    }

    // ---- lifecycle ------------------------------------------------------------------------

    private const string LockStateSql = "SELECT state FROM candidates WHERE id = @id FOR UPDATE";

    private const string SetStateSql = """
        UPDATE candidates SET state = @to, classified_label = COALESCE(@label, classified_label), version = version + 1, updated_at = @now
        WHERE id = @id
        """;

    private const string EventSql = """
        INSERT INTO candidate_event_log (candidate_id, at, kind, from_state, to_state, actor, detail)
        VALUES (@id, @now, @kind, @from, @to, @actor, @detail)
        """;

    /// <summary>Moves a candidate to another state if <paramref name="allowed"/> says so. Returns the previous state, or null when unknown.</summary>
    public async Task<(CandidateState? Previous, bool Moved)> TransitionAsync(
        Guid id, CandidateState to, Func<CandidateState, bool> allowed, string actor, string? reason, DateTimeOffset now, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        var current = await conn.QuerySingleOrDefaultAsync<string?>(new CommandDefinition(LockStateSql, new { id }, tx, cancellationToken: ct));
        if (current is null || !CandidateLifecycle.TryParse(current, out var from))
        {
            return (null, false);
        }
        if (!allowed(from))
        {
            return (from, false);
        }
        await conn.ExecuteAsync(new CommandDefinition(SetStateSql, new { id, to = CandidateLifecycle.Name(to), label = (string?)null, now = now.UtcDateTime }, tx, cancellationToken: ct));
        await InsertEventAsync(conn, tx, id, now, "transition", current, to, actor, reason, ct);
        await tx.CommitAsync(ct);
        return (from, true);
    }

    private const string MoveManySql = """
        WITH old AS (
            SELECT id FROM candidates WHERE id = ANY(@ids) AND state = @from ORDER BY id FOR UPDATE
        ), moved AS (
            UPDATE candidates c SET state = @to, version = c.version + 1, updated_at = @now
            FROM old WHERE c.id = old.id
            RETURNING c.id
        )
        INSERT INTO candidate_event_log (candidate_id, at, kind, from_state, to_state, actor, detail)
        SELECT id, @now, 'transition', @from, @to, @actor, @detail FROM moved
        """;

    /// <summary>
    /// Moves the candidates among <paramref name="ids"/> that are in state <paramref name="from"/> to
    /// <paramref name="to"/> inside the caller's transaction (e.g. the one storing the plan version that
    /// schedules them), recording one event each. Returns how many moved.
    /// </summary>
    public static Task<int> MoveWithinAsync(NpgsqlConnection conn, NpgsqlTransaction tx, IReadOnlyCollection<Guid> ids,
        CandidateState from, CandidateState to, string actor, string? reason, DateTimeOffset now, CancellationToken ct = default) =>
        conn.ExecuteAsync(new CommandDefinition(MoveManySql, new
        {
            ids = ids.ToArray(),
            from = CandidateLifecycle.Name(from),
            to = CandidateLifecycle.Name(to),
            now = now.UtcDateTime,
            actor,
            detail = reason,
        }, tx, cancellationToken: ct));

    private static Task InsertEventAsync(NpgsqlConnection conn, NpgsqlTransaction tx, Guid id, DateTimeOffset now, string kind,
        string from, CandidateState to, string actor, string? detail, CancellationToken ct) =>
        conn.ExecuteAsync(new CommandDefinition(EventSql, new
        {
            id,
            now = now.UtcDateTime,
            kind,
            from,
            to = CandidateLifecycle.Name(to),
            actor,
            detail,
        }, tx, cancellationToken: ct));

    /// <summary>
    /// A scheduler or admin confirms the subtype: the candidate becomes classified with
    /// <paramref name="label"/> whatever its posterior (refused when abandoned).
    /// </summary>
    /// <returns>The state before, and whether it was changed (false: unknown candidate or abandoned).</returns>
    /// <param name="follow">When given, the other waiting posts of the transient follow the classification.</param>
    public async Task<(CandidateState? Previous, bool Confirmed, int Followed)> ConfirmLabelAsync(
        Guid id, string label, string actor, string? reason, DateTimeOffset now, SameTransientSettings? follow = null, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        var current = await conn.QuerySingleOrDefaultAsync<string?>(new CommandDefinition(LockStateSql, new { id }, tx, cancellationToken: ct));
        if (current is null || !CandidateLifecycle.TryParse(current, out var from))
        {
            return (null, false, 0);
        }
        if (from == CandidateState.Abandoned)
        {
            return (from, false, 0);
        }
        await conn.ExecuteAsync(new CommandDefinition(SetStateSql, new { id, to = CandidateLifecycle.Name(CandidateState.Classified), label, now = now.UtcDateTime }, tx, cancellationToken: ct));
        await InsertEventAsync(conn, tx, id, now, "transition", current, CandidateState.Classified, actor,
            $"label {label} confirmed" + (string.IsNullOrWhiteSpace(reason) ? "" : $": {reason}"), ct);
        var followed = follow is null ? 0 : await FollowClassificationAsync(conn, tx, id, label, actor, now, follow, ct);
        await tx.CommitAsync(ct);
        return (from, true, followed);
    }

    private const string InsertReportSql = """
        INSERT INTO observation_reports (id, candidate_id, spectrograph_id, outcome, achieved_snr, classified_label, observed_at, reported_at, reporter,
            reported_probabilities, phase_days, resolving_power, confusion_cell, prior, posterior, calibration_id)
        VALUES (@reportId, @id, @spectrographId, @outcome, @snr, @label, @observedAt, @now, @actor,
            @probabilities::jsonb, @phaseDays, @resolvingPower, @cell::jsonb, @prior::jsonb, @posterior::jsonb, @calibrationId)
        """;

    private const string LockBeliefSql = "SELECT state AS State, posterior::text AS Posterior FROM candidates WHERE id = @id FOR UPDATE";

    private const string SetPosteriorSql = "UPDATE candidates SET posterior = @posterior::jsonb WHERE id = @id";

    private sealed record LockedBelief(string State, string? Posterior);

    /// <summary>Records an observation report and moves the state as <see cref="CandidateLifecycle.AfterReport"/> says.</summary>
    /// <remarks>
    /// A labelled report with <paramref name="evidence"/> is weighed under the row lock: the
    /// callback gets the stored posterior and decides classified or unsettled, the posterior is
    /// stored on the candidate and the report, and the history line names the calibration cells.
    /// When the callback throws, nothing is stored (the transaction is rolled back) and the
    /// exception propagates.
    /// </remarks>
    /// <param name="follow">When given and the report classifies the candidate, the other waiting posts of its transient follow.</param>
    public async Task<(ReportOutcome Outcome, CandidateState? State, Guid ReportId, WeighedLabel? Weighed, int Followed)> ReportObservationAsync(
        Guid id, Guid spectrographId, ObservationOutcome outcome, double? achievedSnr, string? label, DateTimeOffset observedAt,
        string actor, DateTimeOffset now, LabelEvidence? evidence = null, SameTransientSettings? follow = null, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        var locked = await conn.QuerySingleOrDefaultAsync<LockedBelief>(new CommandDefinition(LockBeliefSql, new { id }, tx, cancellationToken: ct));
        if (locked is null || !CandidateLifecycle.TryParse(locked.State, out var from))
        {
            return (ReportOutcome.UnknownCandidate, null, Guid.Empty, null, 0);
        }
        if (CandidateLifecycle.AfterReport(from, outcome, label is not null) is null)
        {
            return (ReportOutcome.RefusedInState, from, Guid.Empty, null, 0);
        }
        var weighed = label is not null && evidence is not null ? evidence.Weigh(new StoredBelief(locked.Posterior)) : null;
        var to = CandidateLifecycle.AfterReport(from, outcome, label is not null, weighed?.Settled ?? true)!.Value;
        var reportId = Guid.CreateVersion7(now);
        string outcomeName = outcome.ToString().ToLowerInvariant();
        await conn.ExecuteAsync(new CommandDefinition(InsertReportSql, new
        {
            reportId,
            id,
            spectrographId,
            outcome = outcomeName,
            snr = achievedSnr,
            label,
            observedAt = observedAt.UtcDateTime,
            now = now.UtcDateTime,
            actor,
            probabilities = evidence?.ProbabilitiesJson,
            phaseDays = evidence?.PhaseDays,
            resolvingPower = weighed?.ResolvingPower,
            cell = weighed?.CellJson,
            prior = weighed?.PriorJson,
            posterior = weighed?.PosteriorJson,
            calibrationId = weighed?.CalibrationId,
        }, tx, cancellationToken: ct));
        var storedLabel = weighed is null ? label : weighed.StoredLabel;
        await conn.ExecuteAsync(new CommandDefinition(SetStateSql, new { id, to = CandidateLifecycle.Name(to), label = storedLabel, now = now.UtcDateTime }, tx, cancellationToken: ct));
        if (weighed?.PosteriorJson is { } posterior)
        {
            await conn.ExecuteAsync(new CommandDefinition(SetPosteriorSql, new { id, posterior }, tx, cancellationToken: ct));
        }
        await InsertEventAsync(conn, tx, id, now, "observation", locked.State, to, actor,
            weighed?.Detail ?? (label is null ? $"{outcomeName} on {spectrographId}" : $"{outcomeName} on {spectrographId}: {label}"), ct);
        var followed = follow is not null && to == CandidateState.Classified && storedLabel is not null
            ? await FollowClassificationAsync(conn, tx, id, storedLabel, actor, now, follow, ct)
            : 0;
        await tx.CommitAsync(ct);
        return (ReportOutcome.Recorded, to, reportId, weighed, followed);
    }

    // ---- row shapes (Dapper) --------------------------------------------------------------

    private class ListRowData
    {
        public Guid Id { get; init; }
        public string Broker { get; init; } = "";
        public string BrokerCandidateId { get; init; } = "";
        public double RaDeg { get; init; }
        public double DecDeg { get; init; }
        public DateTime DiscoveredAt { get; init; }
        public double? Redshift { get; init; }
        public string State { get; init; } = "";
        public string? ClassifiedLabel { get; init; }
        public double ScienceWeight { get; init; }
        public double? PredictedMag { get; init; }
        public double? PredictedMagRate { get; init; }
        public DateTime? FittedAt { get; init; }
        public bool FitCurrent { get; init; }
        public DateTime UpdatedAt { get; init; }

        public CandidateListRow ToRow() => new(Id, Broker, BrokerCandidateId, RaDeg, DecDeg, Utc.From(DiscoveredAt), Redshift, State,
            ClassifiedLabel, ScienceWeight, PredictedMag, PredictedMagRate, Utc.From(FittedAt), FitCurrent, Utc.From(UpdatedAt));
    }

    private sealed class DetailRowData : ListRowData
    {
        public double? RedshiftError { get; init; }
        public string? SubtypeProbabilities { get; init; }
        public string? Notes { get; init; }
        public string? BrokerState { get; init; }
        public int DataVersion { get; init; }
        public int FitVersion { get; init; }
        public string? Fit { get; init; }
        public string? Prior { get; init; }
        public string? Posterior { get; init; }

        // With posteriorAsPrior, the posterior after labelled reports stands in for the broker's probabilities.
        public Candidate ToCandidate(IReadOnlyList<PhotometryPoint> photometry, bool posteriorAsPrior = false) =>
            new(BrokerCandidateId, RaDeg, DecDeg, Utc.From(DiscoveredAt), Redshift, RedshiftError, photometry,
                (posteriorAsPrior ? Posterior ?? SubtypeProbabilities : SubtypeProbabilities) is { } probabilities
                    ? JsonSerializer.Deserialize<Dictionary<string, double>>(probabilities)
                    : null,
                ScienceWeight, Notes,
                BrokerState is null ? null : JsonSerializer.Deserialize<BrokerState>(BrokerState, BrokerBatchJson.Options));
    }

    private sealed class OwnedPhotometryRowData
    {
        public Guid CandidateId { get; init; }
        public string Band { get; init; } = "";
        public DateTime ObservedAt { get; init; }
        public double FluxMicroJy { get; init; }
        public double FluxErrorMicroJy { get; init; }
        public bool UpperLimit { get; init; }
        public double? MagAb { get; init; }
        public double? MagAbError { get; init; }

        public PhotometryRowData Point => new(Band, ObservedAt, FluxMicroJy, FluxErrorMicroJy, UpperLimit, MagAb, MagAbError);
    }

    private sealed record PhotometryRowData(string Band, DateTime ObservedAt, double FluxMicroJy, double FluxErrorMicroJy, bool UpperLimit, double? MagAb, double? MagAbError)
    {
        public PhotometryPoint ToPoint()
        {
            var t = Utc.From(ObservedAt);
            return new PhotometryPoint(t, Core.LightCurves.ModifiedJulianDate.FromUtc(t), PhotometricBands.Get(Band), FluxMicroJy, FluxErrorMicroJy, UpperLimit, MagAb, MagAbError);
        }
    }

    private sealed record EventRowData(DateTime At, string Kind, string? FromState, string? ToState, string Actor, string? Detail);

    private sealed class ReportRowData
    {
        public Guid Id { get; init; }
        public Guid SpectrographId { get; init; }
        public string Outcome { get; init; } = "";
        public double? AchievedSnr { get; init; }
        public string? ClassifiedLabel { get; init; }
        public DateTime ObservedAt { get; init; }
        public DateTime ReportedAt { get; init; }
        public string Reporter { get; init; } = "";
        public string? ReportedProbabilities { get; init; }
        public double? PhaseDays { get; init; }
        public double? ResolvingPower { get; init; }
        public string? Prior { get; init; }
        public string? Posterior { get; init; }
        public string? ConfusionCell { get; init; }
        public Guid? CalibrationId { get; init; }

        private static Dictionary<string, double>? Table(string? json) => json is null ? null : JsonSerializer.Deserialize<Dictionary<string, double>>(json);

        public ObservationReportRow ToRow() => new(Id, SpectrographId, Outcome, AchievedSnr, ClassifiedLabel, Utc.From(ObservedAt), Utc.From(ReportedAt), Reporter)
        {
            ReportedProbabilities = Table(ReportedProbabilities),
            PhaseDays = PhaseDays,
            ResolvingPower = ResolvingPower,
            Prior = Table(Prior),
            Posterior = Table(Posterior),
            ConfusionCell = ConfusionCell is null ? null : JsonDocument.Parse(ConfusionCell).RootElement.Clone(),
            CalibrationId = CalibrationId,
        };
    }
}
