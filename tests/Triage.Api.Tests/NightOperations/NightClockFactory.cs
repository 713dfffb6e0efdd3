using System.Diagnostics;
using System.Net;
using System.Text.Json;
using System.Text.Json.Nodes;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.TestHost;
using Microsoft.Extensions.DependencyInjection;
using Triage.Api.Tests.Infrastructure;
using Triage.Core.Roster;
using Triage.Core.Sky;
using Triage.Storage.Access;
using Triage.Storage.Calibrations;
using Triage.Storage.Roster;

namespace Triage.Api.Tests.NightOperations;

/// <summary>
/// A clock the test sets and that then runs at the real rate: every "now" of the service (replans from now, reports,
/// debounce of events) reads it.
/// </summary>
public sealed class SettableClock(DateTimeOffset start) : TimeProvider
{
    private readonly object _gate = new();
    private DateTimeOffset _set = start;
    private long _setAt = Stopwatch.GetTimestamp();

    public DateTimeOffset Now
    {
        get
        {
            lock (_gate)
            {
                return _set + Stopwatch.GetElapsedTime(_setAt);
            }
        }
        set
        {
            lock (_gate)
            {
                _set = value;
                _setAt = Stopwatch.GetTimestamp();
            }
        }
    }

    public override DateTimeOffset GetUtcNow() => Now;
}

/// <summary>
/// A host on its own database whose clock stands inside the demo network's dark time of <see cref="Night"/>, with
/// short debounce and poll intervals so that event-driven replans and pushes happen within seconds.
/// </summary>
public class NightClockFactory : IsolatedDatabaseFactory
{
    public static readonly DateOnly Night = new(2026, 12, 3);

    public SettableClock Clock { get; } = new(DarkStart().AddHours(2));

    /// <summary>Two hours into the demo network's first dark time.</summary>
    public static DateTimeOffset MidNight => DarkStart().AddHours(2);

    /// <summary>The earliest dark start of the demo sites on <see cref="Night"/>.</summary>
    public static DateTimeOffset DarkStart()
    {
        var (sites, _) = RosterJson.Parse(File.ReadAllText(Repository.File("demo", "roster.json")));
        return sites.Select(s => NightModel.For(s, Night).DarkWindow.Window).Where(w => w is not null).Min(w => w!.Value.StartUtc);
    }

    protected override IReadOnlyDictionary<string, string?> Settings => new Dictionary<string, string?>
    {
        ["Triage:Replanning:Debounce"] = "00:00:01",
        ["Triage:Replanning:MinimumInterval"] = "00:00:01",
        ["Triage:Replanning:Tick"] = "00:00:00.200",
        ["Triage:Events:PollInterval"] = "00:00:00.200",
        ["Triage:Events:RetryBase"] = "00:00:00.200",
        ["Triage:Events:KeepAlive"] = "00:00:01",
    };

    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        base.ConfigureWebHost(builder);
        builder.ConfigureTestServices(s => s.AddSingleton<TimeProvider>(Clock));
    }

    private Task<(HttpClient, Dictionary<Guid, string>, IReadOnlyList<Site>, IReadOnlyList<Spectrograph>)>? _arranged;

    /// <summary>The demo roster, the demo calibration and the first 80 demo candidates, once per factory; keys per site.</summary>
    public Task<(HttpClient Scheduler, Dictionary<Guid, string> ObservatoryKeys, IReadOnlyList<Site> Sites, IReadOnlyList<Spectrograph> Units)> ArrangeDemoAsync()
    {
        lock (this)
        {
            return _arranged ??= ArrangeOnceAsync(80);
        }
    }

    private async Task<(HttpClient Scheduler, Dictionary<Guid, string> ObservatoryKeys, IReadOnlyList<Site> Sites, IReadOnlyList<Spectrograph> Units)> ArrangeOnceAsync(int count)
    {
        // The demo candidates arrive before the instant the tests plan from (MidNight), so a plan made then has weighed them.
        Clock.Now = MidNight.AddMinutes(-10);
        var now = DateTimeOffset.UtcNow;
        var (sites, spectrographs) = RosterJson.Parse(await File.ReadAllTextAsync(Repository.File("demo", "roster.json")));
        var roster = Services.GetRequiredService<RosterStore>();
        foreach (var s in sites)
        {
            await roster.InsertSiteAsync(s, now);
        }
        foreach (var s in spectrographs)
        {
            await roster.InsertSpectrographAsync(s, now);
        }
        var keys = new Dictionary<Guid, string>();
        foreach (var s in sites)
        {
            keys[s.Id] = await KeyAsync(Scope.Observatory, s.Observatory);
        }
        await Services.GetRequiredService<CalibrationStore>().AddAsync(new NewCalibration(
            "synthetic", true, null, "test", null, null, await File.ReadAllTextAsync(Repository.File("demo", "calibration.json"))), true, now);
        var batch = JsonNode.Parse(await File.ReadAllTextAsync(Repository.File("demo", "candidates.json")))!.AsObject();
        var some = new JsonArray(batch["candidates"]!.AsArray().Take(count).Select(c => c!.DeepClone()).ToArray());
        var broker = ClientWith(await KeyAsync(Scope.Broker));
        var posted = await broker.PostAsync("/api/candidates/batches", Bodies.Json(new JsonObject { ["candidates"] = some }));
        Assert.True(posted.IsSuccessStatusCode, await posted.Content.ReadAsStringAsync());
        return (ClientWith(await KeyAsync(Scope.Scheduler)), keys, sites, spectrographs);
    }

    /// <summary>Runs a job to its end and returns its result.</summary>
    public static async Task<JsonElement> RunJobAsync(HttpClient client, HttpResponseMessage accepted)
    {
        Assert.Equal(HttpStatusCode.Accepted, accepted.StatusCode);
        var jobUrl = JsonDocument.Parse(await accepted.Content.ReadAsStringAsync()).RootElement.GetProperty("jobUrl").GetString()!;
        return (await DemoNetwork.WaitForJobAsync(client, jobUrl, 300)).GetProperty("result");
    }

    /// <summary>Waits until the night has at least <paramref name="version"/> versions; returns their metadata.</summary>
    public static async Task<JsonElement> WaitForVersionAsync(HttpClient client, DateOnly night, int version, TimeSpan timeout)
    {
        var until = DateTime.UtcNow + timeout;
        while (DateTime.UtcNow < until)
        {
            var versions = JsonDocument.Parse(await client.GetStringAsync($"/api/plans/{night:yyyy-MM-dd}/versions")).RootElement;
            if (versions.GetArrayLength() >= version)
            {
                return versions[version - 1];
            }
            await Task.Delay(250);
        }
        throw new TimeoutException($"no version {version} of {night} within {timeout}");
    }

    /// <summary>(unit id, entry) of every queue entry of a plan version's body.</summary>
    public static List<(string Unit, JsonElement Entry)> Entries(JsonElement planResponse) =>
        planResponse.GetProperty("plan").GetProperty("spectrographs").EnumerateArray()
            .SelectMany(q => q.GetProperty("queue").EnumerateArray().Select(e => (q.GetProperty("spectrographId").GetString()!, e)))
            .ToList();
}
