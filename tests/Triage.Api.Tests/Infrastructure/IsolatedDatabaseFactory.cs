using Microsoft.AspNetCore.Hosting;
using Npgsql;

namespace Triage.Api.Tests.Infrastructure;

/// <summary>
/// A host on a database of its own, created empty for this factory and dropped afterwards:
/// for tests that read the whole network (planning), where other tests' rows would intrude.
/// </summary>
public class IsolatedDatabaseFactory : TriageApiFactory
{
    private readonly string _database = "triage_iso_" + Guid.NewGuid().ToString("N")[..12];
    private readonly Lazy<string> _connection;

    public IsolatedDatabaseFactory()
    {
        _connection = new Lazy<string>(() =>
        {
            var admin = new NpgsqlConnectionStringBuilder(ConnectionString) { Database = "postgres", Pooling = false };
            using var conn = new NpgsqlConnection(admin.ConnectionString);
            conn.Open();
            using var cmd = new NpgsqlCommand($"CREATE DATABASE {_database}", conn);
            cmd.ExecuteNonQuery();
            var own = new NpgsqlConnectionStringBuilder(ConnectionString) { Database = _database };
            using var data = Triage.Storage.TriageDataSource.Create(own.ConnectionString);
            Triage.Storage.Migrations.MigrationRunner.ApplyAsync(data, TimeProvider.System).GetAwaiter().GetResult();
            return own.ConnectionString;
        });
    }

    public string IsolatedConnectionString => _connection.Value;

    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        base.ConfigureWebHost(builder);
        builder.UseSetting("ConnectionStrings:Triage", IsolatedConnectionString);
        builder.UseSetting("Triage:Jobs:PollInterval", "00:00:00.200");
    }

    protected override void Dispose(bool disposing)
    {
        base.Dispose(disposing);
        if (disposing && _connection.IsValueCreated)
        {
            NpgsqlConnection.ClearAllPools();
            ScratchDatabases.Drop(_database);
        }
    }
}

/// <summary>Where the repository's files are, for tests that read the demo scenario.</summary>
public static class Repository
{
    public static string Root { get; } = Find();

    private static string Find()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !System.IO.File.Exists(Path.Combine(dir.FullName, "Triage.sln")))
        {
            dir = dir.Parent;
        }
        return dir?.FullName ?? throw new InvalidOperationException("Triage.sln not found above the test folder.");
    }

    public static string File(params string[] parts) => Path.Combine([Root, .. parts]);
}
