using Npgsql;

namespace Triage.Api.Operations;

/// <summary>
/// Something in this process that a PostgreSQL notification on <see cref="Channel"/> must reach
/// (every replica runs one listener, so a notification reaches every replica).
/// </summary>
public interface IDatabaseNotificationHandler
{
    /// <summary>The channel (a plain lower-case identifier).</summary>
    string Channel { get; }

    /// <summary>One notification's payload. Called on the listener's thread: return quickly.</summary>
    void Handle(string payload);

    /// <summary>
    /// The listener (re)connected: notifications sent while it was away are lost, so whatever
    /// they would have invalidated must be invalidated now.
    /// </summary>
    void Reset();
}

/// <summary>Settings of the listener (section <c>Triage:Notifications</c>).</summary>
public sealed class NotificationOptions
{
    /// <summary>Wait before reconnecting after the listening connection failed. Default 1 s.</summary>
    public TimeSpan ReconnectDelay { get; set; } = TimeSpan.FromSeconds(1);
}

/// <summary>
/// One dedicated connection per process that LISTENs on every registered channel and hands each
/// notification to its handlers: key revocations, queued jobs and plan events reach every replica
/// as soon as the writing transaction commits. Outside the pool (a pooled connection would go on
/// listening for whoever takes it next); TCP keepalive notices a server that went away; after a
/// reconnect every handler is reset.
/// </summary>
public sealed class DatabaseNotifications(
    DatabaseNotificationSource source,
    IEnumerable<IDatabaseNotificationHandler> handlers,
    Microsoft.Extensions.Options.IOptions<NotificationOptions> options,
    TimeProvider clock,
    ILogger<DatabaseNotifications> log) : BackgroundService
{
    private readonly ILookup<string, IDatabaseNotificationHandler> _handlers = handlers.ToLookup(h => h.Channel, StringComparer.Ordinal);

    /// <summary>True while the listening connection is open and listening.</summary>
    public bool Listening { get; private set; }

    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        if (_handlers.Count == 0)
        {
            return;
        }
        await Task.Yield();
        var failures = 0;
        while (!stoppingToken.IsCancellationRequested)
        {
            try
            {
                await using var conn = await source.DataSource.OpenConnectionAsync(stoppingToken);
                conn.Notification += (_, e) => Dispatch(e.Channel, e.Payload);
                foreach (var channel in _handlers.Select(g => g.Key))
                {
                    await using var listen = new NpgsqlCommand($"LISTEN \"{channel}\"", conn);
                    await listen.ExecuteNonQueryAsync(stoppingToken);
                }
                Listening = true;
                foreach (var h in _handlers.SelectMany(g => g))
                {
                    h.Reset();
                }
                if (failures > 0)
                {
                    log.LogInformation("Listening again on {Channels} after {Failures} failures", _handlers.Select(g => g.Key), failures);
                }
                failures = 0;
                while (!stoppingToken.IsCancellationRequested)
                {
                    await conn.WaitAsync(stoppingToken);
                }
            }
            catch (OperationCanceledException) when (stoppingToken.IsCancellationRequested)
            {
                return;
            }
            catch (Exception e) when (e is NpgsqlException or System.Net.Sockets.SocketException or IOException or TimeoutException)
            {
                Listening = false;
                if (failures++ == 0)
                {
                    log.LogWarning(e, "The notification listener lost its connection; reconnecting");
                }
                await Task.Delay(options.Value.ReconnectDelay, clock, stoppingToken);
            }
        }
    }

    private void Dispatch(string channel, string payload)
    {
        foreach (var h in _handlers[channel])
        {
            try
            {
                h.Handle(payload);
            }
            catch (Exception e)
            {
                log.LogError(e, "Handler {Handler} failed on a notification on {Channel}", h.GetType().Name, channel);
            }
        }
    }
}

/// <summary>The listener's own data source: unpooled, with TCP keepalive.</summary>
public sealed class DatabaseNotificationSource(string connectionString) : IDisposable
{
    public NpgsqlDataSource DataSource { get; } = new NpgsqlDataSourceBuilder(connectionString)
    {
        ConnectionStringBuilder = { Pooling = false, KeepAlive = 15, ApplicationName = "triage-listener" },
    }.Build();

    public void Dispose() => DataSource.Dispose();
}

/// <summary>Wakes the job worker as soon as a job is queued anywhere (channel <c>triage_jobs</c>), instead of at its next poll.</summary>
public sealed class JobWakeup : IDatabaseNotificationHandler
{
    private readonly SemaphoreSlim _signal = new(0, 1);

    public string Channel => "triage_jobs";

    public void Handle(string payload) => Wake();

    public void Reset() => Wake();

    /// <summary>Wakes a waiting worker (at most one pending wake-up is kept).</summary>
    public void Wake()
    {
        try
        {
            _signal.Release();
        }
        catch (SemaphoreFullException)
        {
            // already signalled
        }
    }

    /// <summary>Waits for a wake-up or <paramref name="timeout"/>, whichever comes first.</summary>
    public async Task WaitAsync(TimeSpan timeout, CancellationToken ct) => await _signal.WaitAsync(timeout, ct);
}

/// <summary>A key issued, revoked or changed anywhere (channel <c>triage_keys</c>, payload the key id) is forgotten by this replica's cache at once, with the keys it remembered as unknown.</summary>
public sealed class KeyChangeListener(Access.KeyCache cache) : IDatabaseNotificationHandler
{
    public string Channel => "triage_keys";

    public void Handle(string payload)
    {
        if (Guid.TryParse(payload, out var id))
        {
            cache.Forget(id);
            // A key issued elsewhere may be remembered here as unknown.
            cache.ForgetUnknown();
        }
        else
        {
            cache.ForgetAll();
        }
    }

    public void Reset() => cache.ForgetAll();
}

public static class NotificationSetup
{
    public static IServiceCollection AddDatabaseNotifications(this IServiceCollection services, IConfiguration config)
    {
        services.AddOptions<NotificationOptions>().BindConfiguration("Triage:Notifications");
        services.AddSingleton(new DatabaseNotificationSource(DatabaseSetup.ConnectionString(config)));
        services.AddSingleton<JobWakeup>();
        services.AddSingleton<IDatabaseNotificationHandler>(sp => sp.GetRequiredService<JobWakeup>());
        services.AddSingleton<IDatabaseNotificationHandler, KeyChangeListener>();
        services.AddSingleton<DatabaseNotifications>();
        services.AddHostedService(sp => sp.GetRequiredService<DatabaseNotifications>());
        return services;
    }
}
