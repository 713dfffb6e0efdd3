using System.CommandLine;
using Triage.Storage;
using Triage.Storage.Migrations;

namespace Triage.Cli.Verbs;

/// <summary><c>db migrate [--connection CS]</c>: applies the numbered SQL migrations.</summary>
internal static class DatabaseVerb
{
    public static Command Create()
    {
        var connection = ConnectionOption.Create();
        var migrate = new Command("migrate", "Apply pending schema migrations (safe to run again).") { connection };
        migrate.SetAction(async (parse, ct) =>
        {
            await using var data = TriageDataSource.Create(ConnectionOption.Resolve(parse.GetValue(connection)));
            var report = await MigrationRunner.ApplyAsync(data, TimeProvider.System, ct);
            Console.WriteLine(report.Applied.Count == 0
                ? $"Database already at migration {report.CurrentVersion}."
                : $"Applied migrations {string.Join(", ", report.Applied)}; database at {report.CurrentVersion}.");
            return 0;
        });
        return new Command("db", "Database administration.") { migrate };
    }
}
