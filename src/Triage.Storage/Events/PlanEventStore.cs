using Dapper;
using Npgsql;

namespace Triage.Storage.Events;

/// <summary>A stored plan-version event (outbox row).</summary>
public sealed record StoredPlanEvent(long Id, DateOnly Night, int Version, DateTimeOffset CreatedAt, string BodyJson);

/// <summary>A webhook subscription.</summary>
public sealed record WebhookSubscription(Guid Id, string? Observatory, string Url, string Secret, bool Active, DateTimeOffset CreatedAt, string CreatedBy);

/// <summary>One delivery of one event to one subscription, with its attempts so far.</summary>
public sealed record WebhookDelivery(
    long Id, Guid SubscriptionId, long EventId, string Status, int Attempts, DateTimeOffset NextAttemptAt,
    DateTimeOffset? LastAttemptAt, int? LastStatusCode, string? LastError, DateTimeOffset? DeliveredAt);

/// <summary>A delivery that is due, with what is needed to send it.</summary>
public sealed record DueDelivery(long Id, int Attempts, string Url, string Secret, long EventId, string BodyJson);

/// <summary>The outcome of one delivery attempt.</summary>
public sealed record DeliveryAttempt(bool Delivered, int? StatusCode, string? Error, DateTimeOffset? RetryAt);

/// <summary>The outbox of plan-version events and the webhook subscriptions and deliveries fed from it.</summary>
public sealed class PlanEventStore(NpgsqlDataSource dataSource)
{
    private const string EventColumns = "id AS Id, night AS Night, version AS Version, created_at AS CreatedAt, body::text AS Body";

    private const string DeliveryColumns = """
        id AS Id, subscription_id AS SubscriptionId, event_id AS EventId, status AS Status, attempts AS Attempts,
        next_attempt_at AS NextAttemptAt, last_attempt_at AS LastAttemptAt, last_status_code AS LastStatusCode,
        last_error AS LastError, delivered_at AS DeliveredAt
        """;

    /// <summary>Events after <paramref name="afterId"/> (of one night when given), oldest first.</summary>
    public async Task<IReadOnlyList<StoredPlanEvent>> AfterAsync(long afterId, DateOnly? night, int limit, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<EventData>(new CommandDefinition($"""
            SELECT {EventColumns} FROM plan_events
            WHERE id > @afterId AND (@night::date IS NULL OR night = @night)
            ORDER BY id LIMIT @limit
            """, new { afterId, night, limit }, cancellationToken: ct));
        return rows.Select(r => r.ToRow()).ToList();
    }

    /// <summary>The newest event id (0 when none).</summary>
    public async Task<long> LatestIdAsync(CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        return await conn.ExecuteScalarAsync<long?>(new CommandDefinition("SELECT max(id) FROM plan_events", cancellationToken: ct)) ?? 0;
    }

    /// <summary>Adds a subscription.</summary>
    public async Task AddSubscriptionAsync(WebhookSubscription s, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await conn.ExecuteAsync(new CommandDefinition("""
            INSERT INTO webhook_subscriptions (id, observatory, url, secret, active, created_at, created_by)
            VALUES (@Id, @Observatory, @Url, @Secret, @Active, @Created, @CreatedBy)
            """, new { s.Id, s.Observatory, s.Url, s.Secret, s.Active, Created = s.CreatedAt.UtcDateTime, s.CreatedBy }, cancellationToken: ct));
    }

    /// <summary>Subscriptions, of one observatory when given.</summary>
    public async Task<IReadOnlyList<WebhookSubscription>> SubscriptionsAsync(string? observatory, bool all, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<SubscriptionData>(new CommandDefinition("""
            SELECT id AS Id, observatory AS Observatory, url AS Url, secret AS Secret, active AS Active, created_at AS CreatedAt, created_by AS CreatedBy
            FROM webhook_subscriptions WHERE @all OR observatory = @observatory ORDER BY created_at, id
            """, new { observatory, all }, cancellationToken: ct));
        return rows.Select(r => r.ToRow()).ToList();
    }

    /// <summary>A subscription by id.</summary>
    public async Task<WebhookSubscription?> SubscriptionAsync(Guid id, CancellationToken ct = default) =>
        (await SubscriptionsAsync(null, true, ct)).FirstOrDefault(s => s.Id == id);

    /// <summary>Removes a subscription and its delivery log.</summary>
    public async Task<bool> DeleteSubscriptionAsync(Guid id, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        return await conn.ExecuteAsync(new CommandDefinition("DELETE FROM webhook_subscriptions WHERE id = @id", new { id }, cancellationToken: ct)) == 1;
    }

    /// <summary>The delivery log of a subscription, newest first.</summary>
    public async Task<IReadOnlyList<WebhookDelivery>> DeliveriesAsync(Guid subscriptionId, int limit, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<DeliveryData>(new CommandDefinition(
            $"SELECT {DeliveryColumns} FROM webhook_deliveries WHERE subscription_id = @subscriptionId ORDER BY id DESC LIMIT @limit",
            new { subscriptionId, limit }, cancellationToken: ct));
        return rows.Select(r => r.ToRow()).ToList();
    }

    /// <summary>
    /// Claims due deliveries and runs <paramref name="send"/> on each while holding its row lock, so that one replica
    /// delivers a row at a time; the attempt is recorded in the same transaction.
    /// </summary>
    public async Task<int> DeliverDueAsync(DateTimeOffset now, int limit, Func<DueDelivery, Task<DeliveryAttempt>> send, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        var due = (await conn.QueryAsync<DueData>(new CommandDefinition("""
            SELECT d.id AS Id, d.attempts AS Attempts, s.url AS Url, s.secret AS Secret, e.id AS EventId, e.body::text AS Body
            FROM webhook_deliveries d JOIN webhook_subscriptions s ON s.id = d.subscription_id JOIN plan_events e ON e.id = d.event_id
            WHERE d.status = 'pending' AND d.next_attempt_at <= @now AND s.active
            ORDER BY d.next_attempt_at, d.id LIMIT @limit
            FOR UPDATE OF d SKIP LOCKED
            """, new { now = now.UtcDateTime, limit }, tx, cancellationToken: ct))).ToList();
        foreach (var d in due)
        {
            var attempt = await send(new DueDelivery(d.Id, d.Attempts, d.Url, d.Secret, d.EventId, d.Body));
            await conn.ExecuteAsync(new CommandDefinition("""
                UPDATE webhook_deliveries SET attempts = attempts + 1, last_attempt_at = @now, last_status_code = @code, last_error = @error,
                    status = CASE WHEN @delivered THEN 'delivered' WHEN @retry::timestamptz IS NULL THEN 'failed' ELSE 'pending' END,
                    delivered_at = CASE WHEN @delivered THEN @now ELSE NULL END,
                    next_attempt_at = COALESCE(@retry, next_attempt_at)
                WHERE id = @id
                """, new
            {
                id = d.Id,
                now = now.UtcDateTime,
                code = attempt.StatusCode,
                error = attempt.Error,
                delivered = attempt.Delivered,
                retry = attempt.RetryAt?.UtcDateTime,
            }, tx, cancellationToken: ct));
        }

        await tx.CommitAsync(ct);
        return due.Count;
    }

    private sealed class EventData
    {
        public long Id { get; init; }
        public DateTime Night { get; init; }
        public int Version { get; init; }
        public DateTime CreatedAt { get; init; }
        public string Body { get; init; } = "";

        public StoredPlanEvent ToRow() => new(Id, DateOnly.FromDateTime(Night), Version, Utc.From(CreatedAt), Body);
    }

    private sealed class SubscriptionData
    {
        public Guid Id { get; init; }
        public string? Observatory { get; init; }
        public string Url { get; init; } = "";
        public string Secret { get; init; } = "";
        public bool Active { get; init; }
        public DateTime CreatedAt { get; init; }
        public string CreatedBy { get; init; } = "";

        public WebhookSubscription ToRow() => new(Id, Observatory, Url, Secret, Active, Utc.From(CreatedAt), CreatedBy);
    }

    private sealed class DeliveryData
    {
        public long Id { get; init; }
        public Guid SubscriptionId { get; init; }
        public long EventId { get; init; }
        public string Status { get; init; } = "";
        public int Attempts { get; init; }
        public DateTime NextAttemptAt { get; init; }
        public DateTime? LastAttemptAt { get; init; }
        public int? LastStatusCode { get; init; }
        public string? LastError { get; init; }
        public DateTime? DeliveredAt { get; init; }

        public WebhookDelivery ToRow() => new(Id, SubscriptionId, EventId, Status, Attempts, Utc.From(NextAttemptAt), Utc.From(LastAttemptAt),
            LastStatusCode, LastError, Utc.From(DeliveredAt));
    }

    private sealed class DueData
    {
        public long Id { get; init; }
        public int Attempts { get; init; }
        public string Url { get; init; } = "";
        public string Secret { get; init; } = "";
        public long EventId { get; init; }
        public string Body { get; init; } = "";
    }
}
