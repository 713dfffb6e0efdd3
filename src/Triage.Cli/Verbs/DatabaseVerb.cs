using System.CommandLine;
using Triage.Storage;
using Triage.Storage.Migrations;

namespace Triage.Cli.Verbs;

/// <summary><c>db advance [--connection CS]</c>: applies the numbered SQL schema steps (db/migrations) not yet applied.</summary>
internal static class DatabaseVerb
{
    public static Command Create()
    {
        var connection = ConnectionOption.Create();
        var migrate = new Command("advance", "Bring the database schema up to this build: apply the numbered SQL steps it lacks (safe to run again).") { connection };
        migrate.SetAction(async (parse, ct) =>
        {
            await using var data = TriageDataSource.Create(ConnectionOption.Resolve(parse.GetValue(connection)));
            var report = await MigrationRunner.ApplyAsync(data, TimeProvider.System, ct);
            Console.WriteLine(report.Applied.Count == 0
                ? $"Database schema already up to date (step {report.CurrentVersion})."
                : $"Applied schema steps {string.Join(", ", report.Applied)}; database at step {report.CurrentVersion}.");
            return 0;
        });
        return new Command("db", "Database administration.") { migrate };
    }
}
