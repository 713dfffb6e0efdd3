using Dapper;
using Npgsql;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage;
using Triage.Storage.Migrations;

namespace Triage.Api.Tests.Operations;

/// <summary>
/// The schema-step runner on databases of its own: a fresh one, one made before the history
/// table was renamed (history in the old table), and one lacking a lower-numbered step.
/// </summary>
public sealed class SchemaHistoryTests
{
    [Fact]
    public async Task Apply_FreshDatabase_AppliesEveryStepIntoTheNewHistoryTable()
    {
        await using var db = await ScratchDatabase.CreateAsync();
        var report = await MigrationRunner.ApplyAsync(db.Data, TimeProvider.System);

        Assert.Equal(MigrationRunner.Embedded.Select(m => m.Version), report.Applied);
        await using var conn = await db.Data.OpenConnectionAsync();
        Assert.False(await conn.ExecuteScalarAsync<bool>("SELECT to_regclass('schema_migrations') IS NOT NULL"));
        var recorded = (await conn.QueryAsync<int>($"SELECT version FROM {MigrationRunner.HistoryTable} ORDER BY version")).ToArray();
        Assert.Equal(MigrationRunner.Embedded.Select(m => m.Version), recorded);
        Assert.Empty(await MigrationRunner.PendingVersionsAsync(db.Data));
    }

    [Fact]
    public async Task Apply_DatabaseWithOldHistoryTable_RenamesItKeepingItsRowsAndAppliesTheRest()
    {
        await using var db = await ScratchDatabase.CreateAsync();
        var before = MigrationRunner.Embedded.Where(m => m.Version < MigrationRunner.RenameVersion).ToArray();
        var oldAt = new DateTimeOffset(2026, 11, 1, 12, 0, 0, TimeSpan.Zero);
        await using (var conn = await db.Data.OpenConnectionAsync())
        {
            // What the runner of earlier builds left behind: its own table, then each step with its row.
            await conn.ExecuteAsync("""
                CREATE TABLE schema_migrations (version integer PRIMARY KEY, name text NOT NULL,
                                                checksum text NOT NULL, applied_at timestamptz NOT NULL)
                """);
            foreach (var m in before)
            {
                await conn.ExecuteAsync(m.Sql);
                await conn.ExecuteAsync("INSERT INTO schema_migrations VALUES (@Version, @Name, @Checksum, @oldAt)", new { m.Version, m.Name, m.Checksum, oldAt });
            }
        }
        Assert.Equal(before.Select(m => m.Version).Max(), await MigrationRunner.CurrentVersionAsync(db.Data));
        Assert.Contains(MigrationRunner.RenameVersion, await MigrationRunner.PendingVersionsAsync(db.Data));

        var report = await MigrationRunner.ApplyAsync(db.Data, TimeProvider.System);

        Assert.Equal(MigrationRunner.RenameVersion, report.Applied[0]);
        Assert.Equal(MigrationRunner.Embedded.Where(m => m.Version >= MigrationRunner.RenameVersion).Select(m => m.Version), report.Applied);
        await using (var conn = await db.Data.OpenConnectionAsync())
        {
            Assert.False(await conn.ExecuteScalarAsync<bool>("SELECT to_regclass('schema_migrations') IS NOT NULL"));
            var rows = (await conn.QueryAsync<(int Version, DateTime AppliedAt)>(
                $"SELECT version, applied_at FROM {MigrationRunner.HistoryTable} ORDER BY version")).ToArray();
            Assert.Equal(MigrationRunner.Embedded.Select(m => m.Version), rows.Select(r => r.Version));
            Assert.All(rows.Where(r => r.Version < MigrationRunner.RenameVersion), r => Assert.Equal(oldAt.UtcDateTime, r.AppliedAt.ToUniversalTime()));
        }
        Assert.Empty(await MigrationRunner.PendingVersionsAsync(db.Data));
        Assert.Empty((await MigrationRunner.ApplyAsync(db.Data, TimeProvider.System)).Applied);
    }

    [Fact]
    public async Task Apply_LowerNumberedStepLandingLate_IsStillApplied()
    {
        await using var db = await ScratchDatabase.CreateAsync();
        await MigrationRunner.ApplyAsync(db.Data, TimeProvider.System);
        await using (var conn = await db.Data.OpenConnectionAsync())
        {
            // As if step 0010 arrived after higher-numbered steps had been applied.
            await conn.ExecuteAsync($"DELETE FROM {MigrationRunner.HistoryTable} WHERE version = @v", new { v = MigrationRunner.RenameVersion });
        }
        Assert.Equal([MigrationRunner.RenameVersion], await MigrationRunner.PendingVersionsAsync(db.Data));

        var report = await MigrationRunner.ApplyAsync(db.Data, TimeProvider.System);

        Assert.Equal([MigrationRunner.RenameVersion], report.Applied);
        Assert.Empty(await MigrationRunner.PendingVersionsAsync(db.Data));
    }

    /// <summary>An empty database for one test, dropped afterwards.</summary>
    private sealed class ScratchDatabase : IAsyncDisposable
    {
        private readonly string _name;

        private ScratchDatabase(string name, NpgsqlDataSource data)
        {
            _name = name;
            Data = data;
        }

        public NpgsqlDataSource Data { get; }

        public static async Task<ScratchDatabase> CreateAsync()
        {
            string name = "triage_iso_" + Guid.NewGuid().ToString("N")[..12];
            await using (var admin = new NpgsqlConnection(ScratchDatabases.Admin()))
            {
                await admin.OpenAsync();
                await admin.ExecuteAsync($"CREATE DATABASE {name}");
            }
            var own = new NpgsqlConnectionStringBuilder(TriageApiFactory.ConnectionString) { Database = name, Pooling = false };
            return new ScratchDatabase(name, TriageDataSource.Create(own.ConnectionString));
        }

        public async ValueTask DisposeAsync()
        {
            await Data.DisposeAsync();
            ScratchDatabases.Drop(_name);
        }
    }
}
