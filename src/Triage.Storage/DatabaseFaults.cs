using System.Net.Sockets;
using Npgsql;

namespace Triage.Storage;

/// <summary>What kind of failure a database exception is, for the API's answer and the job runner's retry.</summary>
public enum DatabaseFault
{
    /// <summary>Not a database failure Triage knows how to classify.</summary>
    None,

    /// <summary>
    /// The database could not take the statement now and nothing was stored: unreachable, the
    /// connection dropped, the pool exhausted, a statement or lock timeout, a serialization
    /// failure or deadlock, the server shutting down or out of connection slots. Worth retrying.
    /// </summary>
    Unavailable,

    /// <summary>A unique, foreign-key, exclusion or check constraint refused the write (a concurrent change won).</summary>
    Conflict,

    /// <summary>A value PostgreSQL cannot hold (out of range, a NUL character, bad encoding) reached it.</summary>
    BadValue,
}

/// <summary>Classifies database exceptions; the one place that knows the SQLSTATE codes.</summary>
public static class DatabaseFaults
{
    /// <summary>The classification of <paramref name="exception"/> or of the first classifiable exception inside it.</summary>
    public static DatabaseFault Classify(Exception? exception)
    {
        for (var e = exception; e is not null; e = e.InnerException)
        {
            var fault = ClassifyOne(e);
            if (fault != DatabaseFault.None)
            {
                return fault;
            }
        }
        return DatabaseFault.None;
    }

    /// <summary>True when retrying later could succeed (see <see cref="DatabaseFault.Unavailable"/>).</summary>
    public static bool IsUnavailable(Exception? exception) => Classify(exception) == DatabaseFault.Unavailable;

    /// <summary>The constraint that refused a write, when the failure is a <see cref="DatabaseFault.Conflict"/>.</summary>
    public static PostgresException? ConstraintViolation(Exception? exception)
    {
        for (var e = exception; e is not null; e = e.InnerException)
        {
            if (e is PostgresException pg && ClassifyOne(pg) == DatabaseFault.Conflict)
            {
                return pg;
            }
        }
        return null;
    }

    private static DatabaseFault ClassifyOne(Exception e) => e switch
    {
        PostgresException pg => ByState(pg.SqlState),
        NpgsqlException npgsql when npgsql.IsTransient => DatabaseFault.Unavailable,
        // Pool exhausted or connect timed out: Npgsql wraps a TimeoutException.
        NpgsqlException { InnerException: TimeoutException } => DatabaseFault.Unavailable,
        // A connection broken mid-statement surfaces as an NpgsqlException around an I/O error.
        NpgsqlException { InnerException: IOException or SocketException or EndOfStreamException } => DatabaseFault.Unavailable,
        // Npgsql refuses to use a connection that broke earlier in the same operation.
        InvalidOperationException io when io.Source == "Npgsql" && io.Message.Contains("connection", StringComparison.OrdinalIgnoreCase) => DatabaseFault.Unavailable,
        _ => DatabaseFault.None,
    };

    private static DatabaseFault ByState(string state) => state switch
    {
        PostgresErrorCodes.UniqueViolation or PostgresErrorCodes.ForeignKeyViolation or PostgresErrorCodes.ExclusionViolation
            or PostgresErrorCodes.CheckViolation or PostgresErrorCodes.NotNullViolation => DatabaseFault.Conflict,
        PostgresErrorCodes.SerializationFailure or PostgresErrorCodes.DeadlockDetected or PostgresErrorCodes.LockNotAvailable
            or PostgresErrorCodes.QueryCanceled or PostgresErrorCodes.AdminShutdown or PostgresErrorCodes.CrashShutdown
            or PostgresErrorCodes.CannotConnectNow or PostgresErrorCodes.TooManyConnections or PostgresErrorCodes.IdleSessionTimeout
            or PostgresErrorCodes.ReadOnlySqlTransaction => DatabaseFault.Unavailable,
        _ when state.StartsWith("08", StringComparison.Ordinal) => DatabaseFault.Unavailable, // connection exceptions
        _ when state.StartsWith("53", StringComparison.Ordinal) => DatabaseFault.Unavailable, // insufficient resources
        _ when state.StartsWith("22", StringComparison.Ordinal) => DatabaseFault.BadValue,    // data exceptions
        _ => DatabaseFault.None,
    };
}
