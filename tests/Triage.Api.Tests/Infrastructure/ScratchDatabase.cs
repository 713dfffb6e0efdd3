using Npgsql;

namespace Triage.Api.Tests.Infrastructure;

/// <summary>Creating and dropping the databases tests make for themselves.</summary>
public static class ScratchDatabases
{
    /// <summary>A connection string to the server's maintenance database, without pooling.</summary>
    public static string Admin() =>
        new NpgsqlConnectionStringBuilder(TriageApiFactory.ConnectionString) { Database = "postgres", Pooling = false }.ConnectionString;

    /// <summary>
    /// Drops <paramref name="name"/>, ending the sessions still on it. A server process (an autovacuum worker on a
    /// database just written to) may be on it for a moment and the triage role may not end it (PostgreSQL answers
    /// "must be a member of the role whose process is being terminated"): tried again for up to 5 s, then left for
    /// deploy/test.sh, which drops leftovers before the next run. A test's cleanup never fails the run for it.
    /// </summary>
    public static void Drop(string name)
    {
        using var admin = new NpgsqlConnection(Admin());
        admin.Open();
        for (var attempt = 0; ; attempt++)
        {
            try
            {
                using var drop = new NpgsqlCommand($"DROP DATABASE IF EXISTS {name} WITH (FORCE)", admin);
                drop.ExecuteNonQuery();
                return;
            }
            catch (PostgresException e) when (e.SqlState is PostgresErrorCodes.InsufficientPrivilege or PostgresErrorCodes.ObjectInUse)
            {
                if (attempt >= 20)
                {
                    return;
                }
                Thread.Sleep(250);
            }
        }
    }
}
