using Npgsql;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage;

namespace Triage.Api.Tests.Faults;

/// <summary>
/// The classification behind the 503/409/400 answers, on exceptions a real PostgreSQL raises:
/// a statement timeout, a lock timeout, a serialization failure, a refused connection, a unique
/// violation and a NUL character in text.
/// </summary>
public sealed class DatabaseFaultsTests
{
    private static async Task<Exception> FailureOfAsync(Func<NpgsqlConnection, Task> action, string? options = null)
    {
        var cs = new NpgsqlConnectionStringBuilder(TriageApiFactory.ConnectionString) { Pooling = false, Options = options };
        await using var conn = new NpgsqlConnection(cs.ConnectionString);
        await conn.OpenAsync();
        return await Assert.ThrowsAnyAsync<Exception>(() => action(conn));
    }

    [Fact]
    public async Task StatementTimeout_IsUnavailable()
    {
        var e = await FailureOfAsync(c => new NpgsqlCommand("SELECT pg_sleep(5)", c).ExecuteNonQueryAsync(), "-c statement_timeout=100");
        Assert.Equal(DatabaseFault.Unavailable, DatabaseFaults.Classify(e));
    }

    [Fact]
    public async Task LockTimeout_IsUnavailable()
    {
        var table = "fault_lock_" + Guid.NewGuid().ToString("N")[..8];
        var cs = new NpgsqlConnectionStringBuilder(TriageApiFactory.ConnectionString) { Pooling = false };
        await using var holder = new NpgsqlConnection(cs.ConnectionString);
        await holder.OpenAsync();
        await new NpgsqlCommand($"CREATE TABLE {table} (x int)", holder).ExecuteNonQueryAsync();
        try
        {
            await using var tx = await holder.BeginTransactionAsync();
            await new NpgsqlCommand($"LOCK TABLE {table} IN ACCESS EXCLUSIVE MODE", holder, tx).ExecuteNonQueryAsync();
            var e = await FailureOfAsync(c => new NpgsqlCommand($"SELECT * FROM {table}", c).ExecuteNonQueryAsync(), "-c lock_timeout=100");
            Assert.Equal(DatabaseFault.Unavailable, DatabaseFaults.Classify(e));
            await tx.RollbackAsync();
        }
        finally
        {
            await new NpgsqlCommand($"DROP TABLE {table}", holder).ExecuteNonQueryAsync();
        }
    }

    [Fact]
    public async Task SerializationFailure_IsUnavailable()
    {
        var table = "fault_serial_" + Guid.NewGuid().ToString("N")[..8];
        var cs = new NpgsqlConnectionStringBuilder(TriageApiFactory.ConnectionString) { Pooling = false };
        await using var a = new NpgsqlConnection(cs.ConnectionString);
        await using var b = new NpgsqlConnection(cs.ConnectionString);
        await a.OpenAsync();
        await b.OpenAsync();
        await new NpgsqlCommand($"CREATE TABLE {table} (x int); INSERT INTO {table} VALUES (1)", a).ExecuteNonQueryAsync();
        try
        {
            await using var ta = await a.BeginTransactionAsync(System.Data.IsolationLevel.Serializable);
            await using var tb = await b.BeginTransactionAsync(System.Data.IsolationLevel.Serializable);
            await new NpgsqlCommand($"SELECT * FROM {table}", a, ta).ExecuteNonQueryAsync();
            await new NpgsqlCommand($"SELECT * FROM {table}", b, tb).ExecuteNonQueryAsync();
            await new NpgsqlCommand($"UPDATE {table} SET x = 2", a, ta).ExecuteNonQueryAsync();
            await ta.CommitAsync();
            var e = await Assert.ThrowsAnyAsync<Exception>(() => new NpgsqlCommand($"UPDATE {table} SET x = 3", b, tb).ExecuteNonQueryAsync());
            Assert.Equal(PostgresErrorCodes.SerializationFailure, Assert.IsType<PostgresException>(e).SqlState);
            Assert.Equal(DatabaseFault.Unavailable, DatabaseFaults.Classify(e));
        }
        finally
        {
            await new NpgsqlCommand($"DROP TABLE {table}", a).ExecuteNonQueryAsync();
        }
    }

    [Fact]
    public async Task RefusedConnection_IsUnavailable()
    {
        // A port nobody listens on (taken and released at once).
        var probe = new System.Net.Sockets.TcpListener(System.Net.IPAddress.Loopback, 0);
        probe.Start();
        var port = ((System.Net.IPEndPoint)probe.LocalEndpoint).Port;
        probe.Stop();
        var cs = new NpgsqlConnectionStringBuilder(TriageApiFactory.ConnectionString) { Port = port, Pooling = false, Timeout = 2 };
        await using var conn = new NpgsqlConnection(cs.ConnectionString);
        var e = await Assert.ThrowsAnyAsync<Exception>(() => conn.OpenAsync());
        Assert.Equal(DatabaseFault.Unavailable, DatabaseFaults.Classify(e));
    }

    [Fact]
    public async Task UniqueViolation_IsConflict_AndNulInText_IsBadValue()
    {
        var conflict = await FailureOfAsync(c => new NpgsqlCommand("CREATE TEMP TABLE u (x int UNIQUE); INSERT INTO u VALUES (1), (1)", c).ExecuteNonQueryAsync());
        Assert.Equal(DatabaseFault.Conflict, DatabaseFaults.Classify(conflict));
        Assert.NotNull(DatabaseFaults.ConstraintViolation(conflict));

        var nul = await FailureOfAsync(async c =>
        {
            await using var cmd = new NpgsqlCommand("SELECT @t::text", c);
            cmd.Parameters.AddWithValue("t", "a\u0000b");
            await cmd.ExecuteScalarAsync();
        });
        Assert.Equal(DatabaseFault.BadValue, DatabaseFaults.Classify(nul));
    }
}
