using Npgsql;

namespace Triage.Storage;

/// <summary>Builds the one <see cref="NpgsqlDataSource"/> of a process.</summary>
public static class TriageDataSource
{
    /// <summary>Environment variable read when no connection string is configured.</summary>
    public const string EnvironmentVariable = "TRIAGE_CONNECTION";

    /// <summary>The connection string used by the run script and the demo.</summary>
    public const string LocalDefault = "Host=127.0.0.1;Port=5432;Username=triage;Password=triage;Database=triage";

    /// <summary>Pool cap used unless the connection string sets one (Npgsql's own default, 100, equals PostgreSQL's default <c>max_connections</c>).</summary>
    public const int DefaultMaxPoolSize = 24;

    /// <summary>Statements kept prepared per connection unless the connection string sets <c>Max Auto Prepare</c>.</summary>
    public const int DefaultMaxAutoPrepare = 64;

    /// <summary>
    /// A data source with Triage's defaults where the connection string is silent: a pool of
    /// <see cref="DefaultMaxPoolSize"/> connections (a few busy backends per core answer faster
    /// than a hundred competing ones, and the server's connection slots are shared) and automatic
    /// preparation of repeated statements, so the intake merge and the key lookup are planned once
    /// per connection instead of once per request; and no session reset on return to the pool.
    /// </summary>
    public static NpgsqlDataSource Create(string connectionString)
    {
        var builder = new NpgsqlDataSourceBuilder(connectionString);
        if (!Mentions(connectionString, "Maximum Pool Size", "Max Pool Size", "MaxPoolSize"))
        {
            builder.ConnectionStringBuilder.MaxPoolSize = DefaultMaxPoolSize;
        }
        if (!Mentions(connectionString, "Max Auto Prepare", "MaxAutoPrepare"))
        {
            builder.ConnectionStringBuilder.MaxAutoPrepare = DefaultMaxAutoPrepare;
        }
        if (!Mentions(connectionString, "No Reset On Close", "NoResetOnClose"))
        {
            // Triage keeps no session state across uses of a connection (staging tables and settings
            // are transaction-scoped, advisory locks are released explicitly), so the reset round
            // trip on every return to the pool is skipped.
            builder.ConnectionStringBuilder.NoResetOnClose = true;
        }
        return builder.Build();
    }

    private static bool Mentions(string connectionString, params string[] keywords) =>
        connectionString.Split(';').Select(part => part.Split('=')[0].Trim())
            .Any(k => keywords.Contains(k, StringComparer.OrdinalIgnoreCase));
}
