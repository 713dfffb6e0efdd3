using System.Collections.Concurrent;
using System.Threading.Channels;
using Triage.Storage.Events;

namespace Triage.Api.Events;

/// <summary>Wakes the relay early (e.g. on a PostgreSQL notification from another replica).</summary>
public interface IPlanEventSignal
{
    /// <summary>Asks the relay to read the outbox now instead of at its next poll.</summary>
    void Wake();
}

/// <summary>
/// A plan event added on any replica (channel <c>triage_plan_events</c>, sent by the outbox's insert trigger) wakes
/// this replica's relay, so its stream clients get the version at once; a reconnect of the listener also wakes it,
/// since notifications sent meanwhile were lost (the relay then reads whatever the outbox gained).
/// </summary>
public sealed class PlanEventWakeup(IPlanEventSignal signal) : Triage.Api.Operations.IDatabaseNotificationHandler
{
    /// <summary>The channel the outbox trigger (migration 0070) notifies.</summary>
    public const string ChannelName = "triage_plan_events";

    /// <inheritdoc />
    public string Channel => ChannelName;

    /// <inheritdoc />
    public void Handle(string payload) => signal.Wake();

    /// <inheritdoc />
    public void Reset() => signal.Wake();
}

/// <summary>
/// In-process fan-out of plan-version events to the server-sent-event clients of this process. Each subscriber gets
/// a bounded channel; a subscriber too slow to keep up loses its oldest events (and can resume from the outbox with
/// Last-Event-ID).
/// </summary>
public sealed class PlanEventHub : IPlanEventSignal
{
    private readonly ConcurrentDictionary<Guid, Channel<PlanEventMessage>> _subscribers = new();
    private readonly SemaphoreSlim _wake = new(0, 1);

    /// <summary>Publishes to every subscriber of this process.</summary>
    public void Publish(PlanEventMessage message)
    {
        foreach (var channel in _subscribers.Values)
        {
            channel.Writer.TryWrite(message);
        }
    }

    /// <summary>A new subscription; dispose it to unsubscribe.</summary>
    public Subscription Subscribe()
    {
        var channel = Channel.CreateBounded<PlanEventMessage>(new BoundedChannelOptions(256) { FullMode = BoundedChannelFullMode.DropOldest });
        var id = Guid.NewGuid();
        _subscribers[id] = channel;
        return new Subscription(channel.Reader, () => _subscribers.TryRemove(id, out _));
    }

    /// <summary>Number of live subscribers (for the night view's indicator and tests).</summary>
    public int SubscriberCount => _subscribers.Count;

    /// <inheritdoc />
    public void Wake()
    {
        if (_wake.CurrentCount == 0)
        {
            try
            {
                _wake.Release();
            }
            catch (SemaphoreFullException)
            {
                // already signalled
            }
        }
    }

    internal Task<bool> WaitForWakeAsync(TimeSpan timeout, CancellationToken ct) => _wake.WaitAsync(timeout, ct);

    /// <summary>A live subscription to the hub.</summary>
    public sealed class Subscription(ChannelReader<PlanEventMessage> reader, Action dispose) : IDisposable
    {
        /// <summary>The events as they arrive.</summary>
        public ChannelReader<PlanEventMessage> Reader { get; } = reader;

        /// <inheritdoc />
        public void Dispose() => dispose();
    }
}

/// <summary>Options of the event relay and the webhook deliverer (<c>Triage:Events</c>).</summary>
public sealed class PlanEventOptions
{
    /// <summary>How often the outbox is read when nobody wakes the relay. Default 2 s.</summary>
    public TimeSpan PollInterval { get; set; } = TimeSpan.FromSeconds(2);

    /// <summary>First retry delay of a failed webhook delivery; doubles per attempt. Default 5 s.</summary>
    public TimeSpan RetryBase { get; set; } = TimeSpan.FromSeconds(5);

    /// <summary>Longest delay between two attempts. Default 1 h.</summary>
    public TimeSpan RetryCap { get; set; } = TimeSpan.FromHours(1);

    /// <summary>Attempts before a delivery is marked failed. Default 10.</summary>
    public int MaxAttempts { get; set; } = 10;

    /// <summary>Timeout of one webhook request. Default 10 s.</summary>
    public TimeSpan DeliveryTimeout { get; set; } = TimeSpan.FromSeconds(10);

    /// <summary>Interval of the keep-alive comment on a server-sent-event stream. Default 15 s.</summary>
    public TimeSpan KeepAlive { get; set; } = TimeSpan.FromSeconds(15);
}

/// <summary>
/// Reads new rows of the outbox (<c>plan_events</c>) every <see cref="PlanEventOptions.PollInterval"/> or when woken,
/// publishes them to this process's hub, and delivers due webhooks. Every replica runs one; the outbox makes the
/// stream and the deliveries survive restarts.
/// </summary>
public sealed class PlanEventRelay(
    PlanEventStore store,
    PlanEventHub hub,
    WebhookSender sender,
    TimeProvider clock,
    Microsoft.Extensions.Options.IOptions<PlanEventOptions> options,
    ILogger<PlanEventRelay> log) : BackgroundService
{
    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        await Task.Yield();
        long last = -1;
        DateTimeOffset? unavailableSince = null;
        while (!stoppingToken.IsCancellationRequested)
        {
            try
            {
                if (last < 0)
                {
                    last = await store.LatestIdAsync(stoppingToken);
                }

                foreach (var row in await store.AfterAsync(last, null, 500, stoppingToken))
                {
                    hub.Publish(PlanEventBody.Deserialize(row.Id, row.BodyJson));
                    last = row.Id;
                }

                while (await store.DeliverDueAsync(clock.GetUtcNow(), 20, sender.SendAsync, stoppingToken) > 0)
                {
                }
                if (unavailableSince is { } since)
                {
                    log.LogInformation("Plan event relay reached the database again after {Seconds:0.0} s", (clock.GetUtcNow() - since).TotalSeconds);
                    unavailableSince = null;
                }

                await hub.WaitForWakeAsync(options.Value.PollInterval, stoppingToken);
            }
            catch (OperationCanceledException) when (stoppingToken.IsCancellationRequested)
            {
                return;
            }
            catch (Exception e) when (Triage.Storage.DatabaseFaults.IsUnavailable(e))
            {
                // The database is away: one line when it goes, one when it is back (not a stack trace per poll).
                if (unavailableSince is null)
                {
                    unavailableSince = clock.GetUtcNow();
                    log.LogWarning("Plan event relay cannot reach the database ({Reason}); retrying", e.Message);
                }
                await Task.Delay(TimeSpan.FromTicks(Math.Min(options.Value.PollInterval.Ticks, TimeSpan.FromSeconds(2).Ticks)), stoppingToken);
            }
            catch (Exception e)
            {
                log.LogError(e, "Plan event relay failed; retrying");
                await Task.Delay(options.Value.PollInterval, stoppingToken);
            }
        }
    }
}
