using Microsoft.Extensions.Diagnostics.HealthChecks;
using Npgsql;
using Triage.Storage;
using Triage.Storage.Access;
using Triage.Storage.Migrations;

namespace Triage.Api.Operations;

/// <summary>Service options (section <c>Triage</c>).</summary>
public sealed record TriageOptions
{
    /// <summary>Apply pending migrations when the service starts (default false: the run script and <c>triage db advance</c> do it).</summary>
    public bool MigrateOnStart { get; init; }
}

/// <summary>Database limits of the service's connections (section <c>Triage:Database</c>).</summary>
public sealed record DatabaseLimits
{
    /// <summary>
    /// Longest a single statement may run before PostgreSQL cancels it (default 10 s; 0 = no limit).
    /// The request then answers 503 with Retry-After instead of holding a pooled connection.
    /// </summary>
    public double StatementTimeoutSeconds { get; init; } = 10;

    /// <summary>Longest a statement waits for a lock (default 3 s; 0 = no limit), so one held table lock cannot starve the pool.</summary>
    public double LockTimeoutSeconds { get; init; } = 3;

    /// <summary>Longest a request waits for a pooled connection or a new one, unless the connection string sets <c>Timeout</c> (default 15 s, Npgsql's own).</summary>
    public int ConnectionWaitSeconds { get; init; } = 15;

    /// <summary>Longest the readiness check waits for the database before it reports unhealthy (default 2 s).</summary>
    public double ReadyCheckSeconds { get; init; } = 2;

    /// <summary>
    /// The connection string with these limits where it is silent: <c>statement_timeout</c> and
    /// <c>lock_timeout</c> as server options, the pool wait as <c>Timeout</c>.
    /// </summary>
    public string Apply(string connectionString)
    {
        var b = new NpgsqlConnectionStringBuilder(connectionString);
        if (string.IsNullOrWhiteSpace(b.Options))
        {
            var options = new List<string>();
            if (StatementTimeoutSeconds > 0)
            {
                options.Add($"-c statement_timeout={(int)Math.Round(StatementTimeoutSeconds * 1000)}");
            }
            if (LockTimeoutSeconds > 0)
            {
                options.Add($"-c lock_timeout={(int)Math.Round(LockTimeoutSeconds * 1000)}");
            }
            b.Options = options.Count == 0 ? null : string.Join(' ', options);
        }
        if (!HasKey(connectionString, "Timeout"))
        {
            b.Timeout = ConnectionWaitSeconds;
        }
        return b.ConnectionString;
    }

    private static bool HasKey(string cs, string key) =>
        cs.Split(';').Any(part => string.Equals(part.Split('=')[0].Trim(), key, StringComparison.OrdinalIgnoreCase));
}

public static class DatabaseSetup
{
    /// <summary>Environment variable holding a first admin key, registered at start when no admin key exists.</summary>
    public const string BootstrapAdminKeyVariable = "TRIAGE_ADMIN_KEY";

    /// <summary>The one data source, from <c>ConnectionStrings:Triage</c> or <c>TRIAGE_CONNECTION</c>.</summary>
    public static IServiceCollection AddDatabase(this IServiceCollection services, IConfiguration config)
    {
        var cs = ConnectionString(config);
        var limits = config.GetSection("Triage:Database").Get<DatabaseLimits>() ?? new DatabaseLimits();
        services.AddSingleton(limits);
        services.AddSingleton(_ => TriageDataSource.Create(limits.Apply(cs)));
        services.AddHealthChecks().AddCheck<DatabaseReadyCheck>("database", tags: ["ready"]);
        return services;
    }

    /// <summary>The configured connection string: <c>ConnectionStrings:Triage</c>, else <c>TRIAGE_CONNECTION</c>, else the local default.</summary>
    internal static string ConnectionString(IConfiguration config) =>
        config.GetConnectionString("Triage")
        ?? Environment.GetEnvironmentVariable(TriageDataSource.EnvironmentVariable)
        ?? TriageDataSource.LocalDefault;

    /// <summary>Migrations (when configured) and the first admin key, before the first request.</summary>
    public static async Task PrepareDatabaseAsync(this WebApplication app)
    {
        var options = app.Configuration.GetSection("Triage").Get<TriageOptions>() ?? new TriageOptions();
        var data = app.Services.GetRequiredService<NpgsqlDataSource>();
        var clock = app.Services.GetRequiredService<TimeProvider>();
        if (options.MigrateOnStart)
        {
            var report = await MigrationRunner.ApplyAsync(data, clock);
            app.Logger.LogInformation("Database at migration {Version}; applied {Applied}", report.CurrentVersion, report.Applied);
        }
        var bootstrap = Environment.GetEnvironmentVariable(BootstrapAdminKeyVariable);
        if (!string.IsNullOrWhiteSpace(bootstrap))
        {
            var keys = app.Services.GetRequiredService<KeyStore>();
            if (await MigrationRunner.CurrentVersionAsync(data) >= 1 && !await keys.AnyActiveAdminAsync())
            {
                var row = await keys.RegisterAsync(bootstrap.Trim(), "bootstrap admin", [Scope.Admin], clock.GetUtcNow());
                if (row is null)
                {
                    app.Logger.LogWarning("{Variable} is not a key in Triage's format (trk_<id>_<secret>); ignored", BootstrapAdminKeyVariable);
                }
                else
                {
                    app.Logger.LogInformation("Registered the first admin key {PublicId} from {Variable}", row.PublicId, BootstrapAdminKeyVariable);
                }
            }
        }
    }
}

/// <summary>Ready when the database answers and carries every migration this build ships.</summary>
internal sealed class DatabaseReadyCheck(NpgsqlDataSource data, DatabaseLimits limits) : IHealthCheck
{
    public async Task<HealthCheckResult> CheckHealthAsync(HealthCheckContext context, CancellationToken ct = default)
    {
        // Bounded: a full pool or a held lock makes the service unready quickly instead of hanging the probe.
        using var bounded = CancellationTokenSource.CreateLinkedTokenSource(ct);
        bounded.CancelAfter(TimeSpan.FromSeconds(limits.ReadyCheckSeconds));
        try
        {
            var pending = await MigrationRunner.PendingVersionsAsync(data, bounded.Token);
            return pending.Count == 0
                ? HealthCheckResult.Healthy($"schema step {MigrationRunner.LatestVersion}")
                : HealthCheckResult.Unhealthy($"database lacks schema step(s) {string.Join(", ", pending)} of this build; run 'triage db advance'");
        }
        catch (OperationCanceledException) when (bounded.IsCancellationRequested && !ct.IsCancellationRequested)
        {
            return HealthCheckResult.Unhealthy($"database did not answer within {limits.ReadyCheckSeconds} s");
        }
        catch (Exception e) when (e is NpgsqlException or TimeoutException or System.Net.Sockets.SocketException || Triage.Storage.DatabaseFaults.IsUnavailable(e))
        {
            return HealthCheckResult.Unhealthy("database unreachable");
        }
    }
}
