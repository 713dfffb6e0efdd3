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

public static class DatabaseSetup
{
    /// <summary>Environment variable holding a first admin key, registered at start when no admin key exists.</summary>
    public const string BootstrapAdminKeyVariable = "TRIAGE_ADMIN_KEY";

    /// <summary>The one data source, from <c>ConnectionStrings:Triage</c> or <c>TRIAGE_CONNECTION</c>.</summary>
    public static IServiceCollection AddDatabase(this IServiceCollection services, IConfiguration config)
    {
        var cs = config.GetConnectionString("Triage")
            ?? Environment.GetEnvironmentVariable(TriageDataSource.EnvironmentVariable)
            ?? TriageDataSource.LocalDefault;
        services.AddSingleton(_ => TriageDataSource.Create(cs));
        services.AddHealthChecks().AddCheck<DatabaseReadyCheck>("database", tags: ["ready"]);
        return services;
    }

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
internal sealed class DatabaseReadyCheck(NpgsqlDataSource data) : IHealthCheck
{
    public async Task<HealthCheckResult> CheckHealthAsync(HealthCheckContext context, CancellationToken ct = default)
    {
        try
        {
            var pending = await MigrationRunner.PendingVersionsAsync(data, ct);
            return pending.Count == 0
                ? HealthCheckResult.Healthy($"schema step {MigrationRunner.LatestVersion}")
                : HealthCheckResult.Unhealthy($"database lacks schema step(s) {string.Join(", ", pending)} of this build; run 'triage db advance'");
        }
        catch (Exception e) when (e is NpgsqlException or TimeoutException or System.Net.Sockets.SocketException)
        {
            return HealthCheckResult.Unhealthy("database unreachable: " + e.GetType().Name);
        }
    }
}
