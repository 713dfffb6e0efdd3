using System.CommandLine;
using Triage.Storage;

namespace Triage.Cli.Verbs;

/// <summary>The <c>--connection</c> option shared by the verbs that reach PostgreSQL.</summary>
internal static class ConnectionOption
{
    public static Option<string?> Create() => new("--connection")
    {
        Description = $"Npgsql connection string; default ${TriageDataSource.EnvironmentVariable} or the local run script's database.",
    };

    public static string Resolve(string? given) =>
        given ?? Environment.GetEnvironmentVariable(TriageDataSource.EnvironmentVariable) ?? TriageDataSource.LocalDefault;
}
