using System.Net.Http.Headers;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Mvc.Testing;
using Microsoft.Extensions.DependencyInjection;
using Npgsql;
using Triage.Storage;
using Triage.Storage.Access;
using Triage.Storage.Migrations;

namespace Triage.Api.Tests.Infrastructure;

/// <summary>
/// The real HTTP pipeline against a real PostgreSQL (never a mock). The database comes from
/// <c>TRIAGE_TEST_CONNECTION</c> (set by deploy/test.sh); migrations are applied once per run.
/// Tests create their own data with unique names, so their order never matters.
/// </summary>
public class TriageApiFactory : WebApplicationFactory<Program>
{
    public static string ConnectionString { get; } =
        Environment.GetEnvironmentVariable("TRIAGE_TEST_CONNECTION")
        ?? "Host=127.0.0.1;Port=5432;Username=triage;Password=triage;Database=triage_test";

    private static readonly Lazy<Task> Migrated = new(async () =>
    {
        await using var data = TriageDataSource.Create(ConnectionString);
        await MigrationRunner.ApplyAsync(data, TimeProvider.System);
    });

    /// <summary>Extra configuration for a test host (e.g. a tight rate limit).</summary>
    protected virtual IReadOnlyDictionary<string, string?> Settings => new Dictionary<string, string?>();

    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        Migrated.Value.GetAwaiter().GetResult();
        builder.UseEnvironment("Testing");
        builder.UseSetting("ConnectionStrings:Triage", ConnectionString);
        builder.UseSetting("Serilog:MinimumLevel:Default", "Warning");
        // Every test request comes from one address; the failed-authentication limit has its own tests.
        builder.UseSetting("Triage:Access:FailuresPerWindow", "1000000");
        foreach (var (k, v) in Settings)
        {
            builder.UseSetting(k, v);
        }
    }

    public NpgsqlDataSource DataSource => Services.GetRequiredService<NpgsqlDataSource>();

    /// <summary>Issues a key straight in the store (no HTTP), for arranging a test.</summary>
    public async Task<string> KeyAsync(Scope scope, string? observatory = null)
    {
        var keys = Services.GetRequiredService<KeyStore>();
        var obs = scope == Scope.Observatory ? observatory ?? Unique.Name("obs") : null;
        var issued = await keys.IssueAsync($"test {scope}", [scope], obs, DateTimeOffset.UtcNow);
        return issued.Secret;
    }

    /// <summary>A client that sends <paramref name="key"/> as its bearer key (none when null).</summary>
    public HttpClient ClientWith(string? key)
    {
        var client = CreateClient();
        if (key is not null)
        {
            client.DefaultRequestHeaders.Authorization = new AuthenticationHeaderValue("Bearer", key);
        }
        return client;
    }
}

/// <summary>Names that never collide between tests or runs.</summary>
public static class Unique
{
    public static string Name(string prefix) => $"{prefix}-{Guid.NewGuid():N}"[..(prefix.Length + 13)];
}

[CollectionDefinition(Name)]
public sealed class ApiCollection : ICollectionFixture<TriageApiFactory>
{
    public const string Name = "api";
}
