using System.Net;
using System.Text.Json;
using System.Text.Json.Nodes;
using Microsoft.Extensions.DependencyInjection;
using Triage.Api.Tests.Infrastructure;
using Triage.Core.Planning;
using Triage.Core.Season;
using Triage.Learning;
using Triage.Storage.Access;
using Triage.Storage.Roster;

namespace Triage.Api.Tests.Seasons;

/// <summary>
/// Simulated seasons as background jobs against PostgreSQL: the result is the season the core computes
/// for the stored roster and the active calibration (the JSON <c>triage simulate</c> writes), bad
/// requests are refused naming the field with no job queued, and only scheduler and admin keys may ask.
/// </summary>
public sealed class SeasonJobTests(IsolatedDatabaseFactory api) : IClassFixture<IsolatedDatabaseFactory>
{
    private static readonly JsonObject Small = new()
    {
        ["nights"] = 2,
        ["seed"] = 7,
        ["seeds"] = 2,
        ["strategies"] = new JsonArray("triage-with-escalation", "rule-brightest-first-largest-telescope"),
        ["peaksPerDay"] = 6,
        ["maxPool"] = 60,
        ["degrade"] = new JsonObject { ["Hyrax-100"] = 0.5 },
    };

    [Fact]
    public async Task Season_RunsAsAJob_ResultIsTheCoresSeasonForTheStoredRoster()
    {
        var (scheduler, _) = await DemoNetwork.ArrangeAsync(api, candidates: 5);

        var accepted = await scheduler.PostAsync("/api/seasons", Bodies.Json(Small.DeepClone()));
        Assert.Equal(HttpStatusCode.Accepted, accepted.StatusCode);
        var started = JsonDocument.Parse(await accepted.Content.ReadAsStringAsync()).RootElement;
        var seasonUrl = started.GetProperty("seasonUrl").GetString()!;
        Assert.Equal(accepted.Headers.Location?.ToString(), seasonUrl);
        var job = await DemoNetwork.WaitForJobAsync(scheduler, started.GetProperty("jobUrl").GetString()!);
        Assert.Equal(100, job.GetProperty("percentDone").GetDouble());
        Assert.True(job.GetProperty("etaSeconds").ValueKind == JsonValueKind.Null);

        var season = JsonDocument.Parse(await scheduler.GetStringAsync(seasonUrl)).RootElement;
        Assert.Equal("succeeded", season.GetProperty("status").GetString());
        Assert.Equal(new[] { 7, 8 }, season.GetProperty("seeds").EnumerateArray().Select(s => s.GetInt32()));
        var strategies = season.GetProperty("strategies").EnumerateArray().ToList();
        Assert.Equal(["triage-with-escalation", "rule-brightest-first-largest-telescope"], strategies.Select(s => s.GetProperty("name").GetString()));
        foreach (var field in new[] { "correctIdentifications", "wrongIdentifications", "observations", "highResolutionHours", "identificationsPerHighResolutionHour" })
        {
            Assert.All(strategies, s => Assert.Equal(JsonValueKind.Number, s.GetProperty(field).ValueKind));
        }

        // The same season computed here from the stored roster and the demo calibration (the active one).
        var roster = api.Services.GetRequiredService<RosterStore>();
        var sites = (await roster.ListSitesAsync(new SiteFilter())).Select(v => v.Value).ToList();
        var units = (await roster.ListSpectrographsAsync(new SpectrographFilter())).Select(v => v.Value).ToList();
        var surface = AccuracySurface.FromDocument(CalibrationJson.Deserialize(await File.ReadAllTextAsync(Repository.File("demo", "calibration.json"))));
        var settings = new SeasonSettings
        {
            Nights = 2,
            Sky = new SkySettings { PeaksPerDay = 6 },
            MaxPoolCandidates = 60,
            TruthDegradation = new Dictionary<string, double> { ["Hyrax-100"] = 0.5 },
            Strategies = [SeasonStrategy.TriageWithEscalation, SeasonStrategy.BrightestFirstLargestTelescope],
        };
        var expected = JsonDocument.Parse(SeasonReport.Run((sites, units), null, surface, surface, settings, [7, 8]).ToJson()).RootElement;
        // Stored as jsonb, which orders an object's keys its own way: compared as JSON values.
        foreach (var part in new[] { "strategies", "comparisons", "runs", "settings" })
        {
            Assert.True(JsonNode.DeepEquals(JsonNode.Parse(expected.GetProperty(part).GetRawText()), JsonNode.Parse(season.GetProperty(part).GetRawText())), part);
        }
    }

    public static TheoryData<string, string> BadRequests => new()
    {
        { """{"nights":0}""", "nights" },
        { """{"nights":91}""", "nights" },
        { """{"seeds":21}""", "seeds" },
        { """{"peaksPerDay":0}""", "peaksPerDay" },
        { """{"clearFraction":1.5}""", "clearFraction" },
        { """{"maxPool":0}""", "maxPool" },
        { """{"strategies":[]}""", "strategies" },
        { """{"strategies":["triage-with-escalation","best-guess"]}""", "strategies[1]" },
        { """{"degrade":{"Nowhere-10":0.5}}""", "degrade.Nowhere-10" },
        { """{"degrade":{"Hyrax-100":1.5}}""", "degrade.Hyrax-100" },
    };

    [Theory]
    [MemberData(nameof(BadRequests))]
    public async Task BadRequest_400NamingTheField_NoJobQueued(string body, string field)
    {
        var (scheduler, _) = await DemoNetwork.ArrangeAsync(api, candidates: 1);
        var before = JsonDocument.Parse(await scheduler.GetStringAsync("/api/jobs?kind=season&limit=500")).RootElement.GetArrayLength();

        await Bodies.AssertProblemNamingAsync(await scheduler.PostAsync("/api/seasons", Bodies.Raw(body)), 400, field);

        Assert.Equal(before, JsonDocument.Parse(await scheduler.GetStringAsync("/api/jobs?kind=season&limit=500")).RootElement.GetArrayLength());
    }

    [Fact]
    public async Task Scopes_BrokerAndObservatoryRefused_UnknownSeason404()
    {
        var (scheduler, observatoryKeys) = await DemoNetwork.ArrangeAsync(api, candidates: 1);
        var broker = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var observatory = api.ClientWith(observatoryKeys.Values.First());

        Assert.Equal(HttpStatusCode.Forbidden, (await broker.PostAsync("/api/seasons", Bodies.Raw("{}"))).StatusCode);
        Assert.Equal(HttpStatusCode.Forbidden, (await observatory.PostAsync("/api/seasons", Bodies.Raw("{}"))).StatusCode);
        Assert.Equal(HttpStatusCode.Forbidden, (await broker.GetAsync($"/api/seasons/{Guid.NewGuid()}")).StatusCode);
        await Bodies.AssertProblemNamingAsync(await scheduler.GetAsync($"/api/seasons/{Guid.NewGuid()}"), 404, "id");

        // A job of another kind is not a season.
        var plan = await scheduler.PostAsync("/api/plans", Bodies.Raw("""{"night":"2026-12-03","timeLimitSeconds":1}"""));
        var planJob = JsonDocument.Parse(await plan.Content.ReadAsStringAsync()).RootElement.GetProperty("jobId").GetString();
        await Bodies.AssertProblemNamingAsync(await scheduler.GetAsync($"/api/seasons/{planJob}"), 404, "id");
    }
}
