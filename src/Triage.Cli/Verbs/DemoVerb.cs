using System.CommandLine;
using System.Text.Json;
using Triage.Core.Candidates;
using Triage.Learning;
using Triage.Storage.Calibrations;
using Triage.Storage.Candidates;
using Triage.Storage.Jobs;
using Triage.Storage.Plans;
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
        var candidates = new Option<FileInfo?>("--candidates") { Description = "Broker batch of demo candidates to post as the demo broker (optional)." };
        var calibration = new Option<FileInfo?>("--calibration") { Description = "Calibration JSON to store and activate when none is active (optional)." };
        var planNight = new Option<string?>("--plan-night") { Description = "Queue a plan job for this night (YYYY-MM-DD) unless it has a plan already; the service computes it." };
        var shiftNight = new Option<string?>("--night") { Description = $"Shift the scenario's times so that its night ({DemoShift.ScenarioNight:yyyy-MM-dd}) becomes this night (YYYY-MM-DD, or 'tonight'); default: no shift." };
        var load = new Command("load", "Load the demo scenario into the database (idempotent).") { connection, roster, keysFile, candidates, calibration, planNight, shiftNight };
        load.SetAction(async (parse, ct) =>
        {
            var rosterFile = parse.GetValue(roster)!;
            if (!rosterFile.Exists)
            {
                Console.Error.WriteLine($"--roster: {rosterFile.FullName} not found.");
                return 2;
            }
            (IReadOnlyList<Site> Sites, IReadOnlyList<Spectrograph> Spectrographs) network;
            try
            {
                network = RosterJson.Parse(await File.ReadAllTextAsync(rosterFile.FullName, ct));
            }
            catch (FormatException e)
            {
                Console.Error.WriteLine($"--roster: {rosterFile.Name}: {e.Message}");
                return 2;
            }
            await using var data = TriageDataSource.Create(ConnectionOption.Resolve(parse.GetValue(connection)));
            var (sites, added) = await LoadRosterAsync(new RosterStore(data), network.Sites, network.Spectrographs, ct);
            Console.WriteLine($"Demo roster: {sites} sites, {added} rows added (existing rows kept).");

            var keysPath = await EnsureKeysAsync(new KeyStore(data), network.Sites, parse.GetValue(keysFile)!, ct);
            Console.WriteLine($"Demo keys: {keysPath.FullName}");

            if (parse.GetValue(calibration) is { } calibrationFile)
            {
                var store = new CalibrationStore(data);
                if (await store.GetAsync(null, ct) is null)
                {
                    var json = await File.ReadAllTextAsync(calibrationFile.FullName, ct);
                    var document = CalibrationJson.Deserialize(json);
                    await store.AddAsync(new NewCalibration(document.Synthetic ? "synthetic" : "library", document.Synthetic,
                        document.Provenance?.LibraryFingerprint, document.Provenance?.CodeVersion ?? "demo file", null, null, json), true, DateTimeOffset.UtcNow, ct);
                    Console.WriteLine($"Demo calibration: {calibrationFile.Name} stored and active{(document.Synthetic ? " (computed from a SYNTHETIC library)" : "")}.");
                }
            }
            if (parse.GetValue(candidates) is { } candidatesFile)
            {
                var secrets = JsonSerializer.Deserialize<Dictionary<string, string>>(await File.ReadAllTextAsync(keysPath.FullName, ct))!;
                var broker = await new KeyStore(data).AuthenticateAsync(secrets["broker"], ct);
                var secondBroker = await new KeyStore(data).AuthenticateAsync(secrets[SecondBrokerKey], ct);
                var json = await File.ReadAllTextAsync(candidatesFile.FullName, ct);
                var store = new CandidateStore(data);
                if (parse.GetValue(shiftNight) is { } target)
                {
                    if (!DemoShift.TryParseNight(target, DateTimeOffset.UtcNow, out var night))
                    {
                        Console.Error.WriteLine($"--night: '{target}' is not a date YYYY-MM-DD or 'tonight'.");
                        return 2;
                    }

                    // The scenario is loaded for one night at a time: when the night changes, the demo broker's
                    // candidates of the previous night are replaced (their photometry would otherwise mix two shifts).
                    var marker = new FileInfo(Path.Combine(keysPath.DirectoryName!, "demo-night.txt"));
                    var loaded = marker.Exists ? (await File.ReadAllTextAsync(marker.FullName, ct)).Trim() : null;
                    var wanted = night.ToString("yyyy-MM-dd", System.Globalization.CultureInfo.InvariantCulture);
                    if (loaded != wanted)
                    {
                        var removed = await store.DeleteBrokerCandidatesAsync(broker!.PublicId, ct)
                            + await store.DeleteBrokerCandidatesAsync(secondBroker!.PublicId, ct);
                        if (removed > 0)
                        {
                            Console.WriteLine($"Demo candidates of the night of {loaded ?? "an earlier load"} removed: {removed}.");
                        }
                    }

                    json = DemoShift.Shift(json, night);
                    await File.WriteAllTextAsync(marker.FullName, wanted, ct);
                    Console.WriteLine($"Demo scenario shifted from the night of {DemoShift.ScenarioNight:yyyy-MM-dd} to the night of {wanted} ({night.DayNumber - DemoShift.ScenarioNight.DayNumber:+0;-0;0} days).");
                }

                Console.WriteLine($"Demo candidates: {await PostCandidatesAsync(store, broker!.PublicId, json, ct)}");
                // A second invented broker reposts one candidate in twelve under its own ids (surveys overlap): the
                // plan takes each such transient once.
                Console.WriteLine($"Second demo broker (reposts of one candidate in {DemoSecondBroker.Every}): {await PostCandidatesAsync(store, secondBroker!.PublicId, DemoSecondBroker.Batch(json), ct)}");
            }
            if (parse.GetValue(planNight) is { } nightText)
            {
                if (!DateOnly.TryParseExact(nightText, "yyyy-MM-dd", System.Globalization.CultureInfo.InvariantCulture, System.Globalization.DateTimeStyles.None, out var night))
                {
                    Console.Error.WriteLine($"--plan-night: '{nightText}' is not a date YYYY-MM-DD.");
                    return 2;
                }
                if (await new PlanStore(data).GetAsync(night, null, ct) is null)
                {
                    // The same input the plans endpoint queues; the service's worker runs it.
                    var input = $$"""{"night":"{{night:yyyy-MM-dd}}","objective":"{{Triage.Core.Planning.PlanDefaults.ObjectiveName}}","timeLimitSeconds":5,"fromUtc":null}""";
                    var job = await new JobStore(data).EnqueueAsync("plan", input, null, DateTimeOffset.UtcNow, ct);
                    Console.WriteLine($"Demo plan for the night of {night:yyyy-MM-dd}: queued as job {job}; the service computes it when it starts.");
                }
            }
            return 0;
        });
        return new Command("demo", "The invented demo scenario.") { load };
    }

    /// <summary>The broker intake path without HTTP: the same validation, hashing and merge as the API.</summary>
    private static async Task<string> PostCandidatesAsync(CandidateStore store, string broker, string json, CancellationToken ct)
    {
        var batch = JsonSerializer.Deserialize<BrokerBatch>(json, BrokerBatchJson.Options);
        var result = BrokerBatchValidator.Validate(batch, DefaultSubtypeLabels.Set, new BatchLimits { MaxCandidates = 5000 });
        if (!result.IsValid)
        {
            return $"refused: {result.Errors.Count} problem(s), first: {result.Errors[0].Field}: {result.Errors[0].Message}";
        }
        var intake = result.Candidates
            .Select((c, i) => CandidateIntake.From(c, batch!.Candidates![i]!))
            .ToList();
        var s = await store.UpsertBatchAsync(broker, intake, DateTimeOffset.UtcNow, ct);
        return $"{s.Received} received, {s.Created} new, {s.Unchanged} unchanged.";
    }

    private static async Task<(int Sites, int Added)> LoadRosterAsync(RosterStore store, IReadOnlyList<Site> sites, IReadOnlyList<Spectrograph> instruments, CancellationToken ct)
    {
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
    private static async Task<FileInfo> EnsureKeysAsync(KeyStore keys, IReadOnlyList<Site> sites, FileInfo file, CancellationToken ct)
    {
        if (file.Exists)
        {
            var existing = JsonSerializer.Deserialize<Dictionary<string, string>>(await File.ReadAllTextAsync(file.FullName, ct)) ?? [];
            var valid = existing.Count > 0;
            foreach (var secret in existing.Values)
            {
                valid &= await keys.AuthenticateAsync(secret, ct) is not null;
            }
            if (valid && existing.ContainsKey(SecondBrokerKey))
            {
                return file;
            }
            if (valid)
            {
                // A keys file from before the second demo broker: keep its keys, add that one.
                existing[SecondBrokerKey] = (await keys.IssueAsync("demo second broker", [Scope.Broker], null, DateTimeOffset.UtcNow, ct)).Secret;
                await WriteKeysAsync(file, existing, ct);
                return file;
            }
        }
        var now = DateTimeOffset.UtcNow;
        var issued = new Dictionary<string, string>
        {
            ["admin"] = (await keys.IssueAsync("demo admin", [Scope.Admin], null, now, ct)).Secret,
            ["broker"] = (await keys.IssueAsync("demo broker", [Scope.Broker], null, now, ct)).Secret,
            [SecondBrokerKey] = (await keys.IssueAsync("demo second broker", [Scope.Broker], null, now, ct)).Secret,
            ["scheduler"] = (await keys.IssueAsync("demo scheduler", [Scope.Scheduler], null, now, ct)).Secret,
        };
        foreach (var observatory in sites.Select(s => s.Observatory).OfType<string>().Distinct())
        {
            issued[$"observatory: {observatory}"] = (await keys.IssueAsync($"demo {observatory}", [Scope.Observatory], observatory, now, ct)).Secret;
        }
        await WriteKeysAsync(file, issued, ct);
        return file;
    }

    /// <summary>The name of the second demo broker's key in the keys file.</summary>
    private const string SecondBrokerKey = "second broker";

    private static async Task WriteKeysAsync(FileInfo file, Dictionary<string, string> keys, CancellationToken ct)
    {
        file.Directory?.Create();
        await File.WriteAllTextAsync(file.FullName, JsonSerializer.Serialize(keys, new JsonSerializerOptions { WriteIndented = true }), ct);
        if (!OperatingSystem.IsWindows())
        {
            File.SetUnixFileMode(file.FullName, UnixFileMode.UserRead | UnixFileMode.UserWrite);
        }
    }
}
