using Npgsql;

namespace Triage.Storage;

/// <summary>Builds the one <see cref="NpgsqlDataSource"/> of a process.</summary>
public static class TriageDataSource
{
    /// <summary>Environment variable read when no connection string is configured.</summary>
    public const string EnvironmentVariable = "TRIAGE_CONNECTION";

    /// <summary>The connection string used by the run script and the demo.</summary>
    public const string LocalDefault = "Host=127.0.0.1;Port=5432;Username=triage;Password=triage;Database=triage";

    public static NpgsqlDataSource Create(string connectionString)
    {
        var builder = new NpgsqlDataSourceBuilder(connectionString);
        return builder.Build();
    }
}
