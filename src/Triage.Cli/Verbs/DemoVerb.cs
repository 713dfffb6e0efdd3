using System.CommandLine;
using System.Text.Json;
using Triage.Core.Roster;
using Triage.Storage;
using Triage.Storage.Access;
using Triage.Storage.Roster;

namespace Triage.Cli.Verbs;

/// <summary>
/// <c>demo load [--roster FILE] [--keys-file FILE]</c>: loads the invented demo network and
/// issues demo keys (kept in the keys file so that a second run reuses them). Safe to repeat.
/// </summary>
internal static class DemoVerb
{
    public static Command Create()
    {
        var connection = ConnectionOption.Create();
        var roster = new Option<FileInfo>("--roster") { Description = "Roster file to load.", DefaultValueFactory = _ => new FileInfo("demo/roster.json") };
        var keysFile = new Option<FileInfo>("--keys-file") { Description = "Where the demo keys are written (and read back on the next run).", DefaultValueFactory = _ => new FileInfo("var/demo-keys.json") };
        var load = new Command("load", "Load the demo scenario into the database (idempotent).") { connection, roster, keysFile };
        load.SetAction(async (parse, ct) =>
        {
            var rosterFile = parse.GetValue(roster)!;
            if (!rosterFile.Exists)
            {
                Console.Error.WriteLine($"--roster: {rosterFile.FullName} not found.");
                return 2;
            }
            RosterDocument document;
            try
            {
                document = RosterJson.Parse(await File.ReadAllTextAsync(rosterFile.FullName, ct));
            }
            catch (JsonException e)
            {
                Console.Error.WriteLine($"--roster: {rosterFile.Name}: {e.Message}");
                return 2;
            }
            await using var data = TriageDataSource.Create(ConnectionOption.Resolve(parse.GetValue(connection)));
            var (sites, added) = await LoadRosterAsync(new RosterStore(data), document, ct);
            Console.WriteLine($"Demo roster: {sites} sites, {added} rows added (existing rows kept).");

            var keys = await EnsureKeysAsync(new KeyStore(data), document, parse.GetValue(keysFile)!, ct);
            Console.WriteLine($"Demo keys: {keys.FullName}");
            return 0;
        });
        return new Command("demo", "The invented demo scenario.") { load };
    }

    private static async Task<(int Sites, int Added)> LoadRosterAsync(RosterStore store, RosterDocument document, CancellationToken ct)
    {
        var (sites, instruments) = document.ToRecords();
        var now = DateTimeOffset.UtcNow;
        var added = 0;
        foreach (var site in sites)
        {
            if (await store.GetSiteAsync(site.Id, ct) is null && (await store.InsertSiteAsync(site, now, ct)).Outcome == WriteOutcome.Done)
            {
                added++;
            }
        }
        foreach (var sp in instruments)
        {
            if (await store.GetSpectrographAsync(sp.Id, ct) is null && (await store.InsertSpectrographAsync(sp, now, ct)).Outcome == WriteOutcome.Done)
            {
                added++;
            }
        }
        return (sites.Count, added);
    }

    /// <summary>The demo keys: reused when the file's keys still authenticate, issued afresh otherwise.</summary>
    private static async Task<FileInfo> EnsureKeysAsync(KeyStore keys, RosterDocument document, FileInfo file, CancellationToken ct)
    {
        if (file.Exists)
        {
            var existing = JsonSerializer.Deserialize<Dictionary<string, string>>(await File.ReadAllTextAsync(file.FullName, ct)) ?? [];
            var valid = existing.Count > 0;
            foreach (var secret in existing.Values)
            {
                valid &= await keys.AuthenticateAsync(secret, ct) is not null;
            }
            if (valid)
            {
                return file;
            }
        }
        var now = DateTimeOffset.UtcNow;
        var issued = new Dictionary<string, string>
        {
            ["admin"] = (await keys.IssueAsync("demo admin", [Scope.Admin], null, now, ct)).Secret,
            ["broker"] = (await keys.IssueAsync("demo broker", [Scope.Broker], null, now, ct)).Secret,
            ["scheduler"] = (await keys.IssueAsync("demo scheduler", [Scope.Scheduler], null, now, ct)).Secret,
        };
        foreach (var observatory in document.Sites.Select(s => s.Observatory).OfType<string>().Distinct())
        {
            issued[$"observatory: {observatory}"] = (await keys.IssueAsync($"demo {observatory}", [Scope.Observatory], observatory, now, ct)).Secret;
        }
        file.Directory?.Create();
        await File.WriteAllTextAsync(file.FullName, JsonSerializer.Serialize(issued, new JsonSerializerOptions { WriteIndented = true }), ct);
        if (!OperatingSystem.IsWindows())
        {
            File.SetUnixFileMode(file.FullName, UnixFileMode.UserRead | UnixFileMode.UserWrite);
        }
        return file;
    }
}
