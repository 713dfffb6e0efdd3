using System.Reflection;
using System.Security.Cryptography;
using System.Text;
using Dapper;
using Npgsql;

namespace Triage.Storage.Migrations;

/// <summary>A numbered plain-SQL migration embedded from <c>db/migrations</c>.</summary>
public sealed record Migration(int Version, string Name, string Sql)
{
    /// <summary>SHA-256 of the SQL text, so an edited, already-applied migration is noticed.</summary>
    public string Checksum { get; } = Convert.ToHexString(SHA256.HashData(Encoding.UTF8.GetBytes(Sql)));
}

/// <summary>What a migration run did.</summary>
public sealed record MigrationReport(IReadOnlyList<int> Applied, int CurrentVersion);

/// <summary>
/// Applies the embedded migrations in order, each in its own transaction, under a
/// PostgreSQL advisory lock so that concurrent runners (several test hosts, a run
/// script and a CLI) never apply the same migration twice. Applied steps are recorded in
/// <see cref="HistoryTable"/>; numbers may have gaps and a lower number shipped later is
/// still applied.
/// </summary>
/// <remarks>
/// Databases made before migration <see cref="RenameVersion"/> keep their history in
/// <see cref="LegacyHistoryTable"/>; on such a database the runner applies that migration
/// (which renames the table) first, together with its own history row, in one transaction.
/// </remarks>
public static class MigrationRunner
{
    private const long LockKey = 0x7472696167650001; // arbitrary, stable

    /// <summary>The table recording applied schema steps.</summary>
    public const string HistoryTable = "triage_schema_steps";

    /// <summary>The history table's name before migration <see cref="RenameVersion"/>.</summary>
    public const string LegacyHistoryTable = "schema_migrations";

    /// <summary>The migration that renames <see cref="LegacyHistoryTable"/> to <see cref="HistoryTable"/>.</summary>
    public const int RenameVersion = 10;

    /// <summary>The migrations shipped with this build, ordered by version.</summary>
    public static IReadOnlyList<Migration> Embedded { get; } = LoadEmbedded();

    /// <summary>Highest version shipped with this build.</summary>
    public static int LatestVersion => Embedded.Count == 0 ? 0 : Embedded[^1].Version;

    public static async Task<MigrationReport> ApplyAsync(NpgsqlDataSource dataSource, TimeProvider clock, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await conn.ExecuteAsync(new CommandDefinition("SELECT pg_advisory_lock(@k)", new { k = LockKey }, cancellationToken: ct));
        try
        {
            var done = new List<int>();
            if (await TableExistsAsync(conn, LegacyHistoryTable, ct) && !await TableExistsAsync(conn, HistoryTable, ct))
            {
                var rename = Embedded.Single(m => m.Version == RenameVersion);
                await using var tx = await conn.BeginTransactionAsync(ct);
                await conn.ExecuteAsync(new CommandDefinition(rename.Sql, transaction: tx, cancellationToken: ct));
                await RecordAsync(conn, tx, rename, clock, ct);
                await tx.CommitAsync(ct);
                done.Add(rename.Version);
            }
            await conn.ExecuteAsync(new CommandDefinition(CreateHistorySql, cancellationToken: ct));
            var applied = (await conn.QueryAsync<(int Version, string Checksum)>(
                new CommandDefinition($"SELECT version, checksum FROM {HistoryTable}", cancellationToken: ct)))
                .ToDictionary(r => r.Version, r => r.Checksum);
            foreach (var m in Embedded)
            {
                if (applied.TryGetValue(m.Version, out var checksum))
                {
                    if (checksum != m.Checksum)
                    {
                        throw new InvalidOperationException(
                            $"Migration {m.Version} ({m.Name}) was changed after it was applied; add a new migration instead.");
                    }
                    continue;
                }
                await using var tx = await conn.BeginTransactionAsync(ct);
                // No client-side timeout: a migration that rewrites a large table must finish (or roll back), not be cut at 30 s.
                await conn.ExecuteAsync(new CommandDefinition(m.Sql, transaction: tx, commandTimeout: 0, cancellationToken: ct));
                await RecordAsync(conn, tx, m, clock, ct);
                await tx.CommitAsync(ct);
                done.Add(m.Version);
            }
            return new MigrationReport(done, LatestVersion);
        }
        finally
        {
            await conn.ExecuteAsync(new CommandDefinition("SELECT pg_advisory_unlock(@k)", new { k = LockKey }, cancellationToken: CancellationToken.None));
        }
    }

    /// <summary>The highest version applied, or 0 when no migration was ever applied.</summary>
    public static async Task<int> CurrentVersionAsync(NpgsqlDataSource dataSource, CancellationToken ct = default)
    {
        var applied = await AppliedVersionsAsync(dataSource, ct);
        return applied.Count == 0 ? 0 : applied.Max();
    }

    /// <summary>Versions shipped with this build that the database does not carry yet (empty when up to date).</summary>
    public static async Task<IReadOnlyList<int>> PendingVersionsAsync(NpgsqlDataSource dataSource, CancellationToken ct = default)
    {
        var applied = await AppliedVersionsAsync(dataSource, ct);
        return Embedded.Select(m => m.Version).Where(v => !applied.Contains(v)).ToList();
    }

    private static async Task<HashSet<int>> AppliedVersionsAsync(NpgsqlDataSource dataSource, CancellationToken ct)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        string? table = await TableExistsAsync(conn, HistoryTable, ct) ? HistoryTable
            : await TableExistsAsync(conn, LegacyHistoryTable, ct) ? LegacyHistoryTable
            : null;
        if (table is null)
        {
            return [];
        }
        return (await conn.QueryAsync<int>(new CommandDefinition($"SELECT version FROM {table}", cancellationToken: ct))).ToHashSet();
    }

    private static Task<bool> TableExistsAsync(NpgsqlConnection conn, string table, CancellationToken ct) =>
        conn.ExecuteScalarAsync<bool>(new CommandDefinition("SELECT to_regclass(@table) IS NOT NULL", new { table }, cancellationToken: ct));

    private static Task RecordAsync(NpgsqlConnection conn, NpgsqlTransaction tx, Migration m, TimeProvider clock, CancellationToken ct) =>
        conn.ExecuteAsync(new CommandDefinition(
            $"INSERT INTO {HistoryTable} (version, name, checksum, applied_at) VALUES (@Version, @Name, @Checksum, @At)",
            new { m.Version, m.Name, m.Checksum, At = clock.GetUtcNow() }, tx, cancellationToken: ct));

    private const string CreateHistorySql = $$"""
        CREATE TABLE IF NOT EXISTS {{HistoryTable}} (
            version    integer PRIMARY KEY,
            name       text NOT NULL,
            checksum   text NOT NULL,
            applied_at timestamptz NOT NULL
        )
        """;

    private static IReadOnlyList<Migration> LoadEmbedded()
    {
        var asm = typeof(MigrationRunner).Assembly;
        var list = new List<Migration>();
        foreach (var resource in asm.GetManifestResourceNames().Where(n => n.EndsWith(".sql", StringComparison.Ordinal)))
        {
            // Resource names look like "Triage.Storage.Migrations.0001_roster_and_keys.sql".
            var file = resource["Triage.Storage.Migrations.".Length..];
            var digits = new string(file.TakeWhile(char.IsDigit).ToArray());
            if (digits.Length == 0)
            {
                continue;
            }
            using var stream = asm.GetManifestResourceStream(resource)!;
            using var reader = new StreamReader(stream, Encoding.UTF8);
            list.Add(new Migration(int.Parse(digits, System.Globalization.CultureInfo.InvariantCulture), Path.GetFileNameWithoutExtension(file), reader.ReadToEnd()));
        }
        var dup = list.GroupBy(m => m.Version).FirstOrDefault(g => g.Count() > 1);
        if (dup is not null)
        {
            throw new InvalidOperationException($"Two migrations share version {dup.Key}: {string.Join(", ", dup.Select(m => m.Name))}.");
        }
        return list.OrderBy(m => m.Version).ToList();
    }
}
