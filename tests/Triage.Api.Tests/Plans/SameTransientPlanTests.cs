using System.Text.Json;
using System.Text.Json.Nodes;
using Microsoft.Extensions.DependencyInjection;
using Triage.Api.Tests.Infrastructure;
using Triage.Core.Candidates;
using Triage.Storage.Access;
using Triage.Storage.Candidates;
using Triage.Storage.Roster;

namespace Triage.Api.Tests.Plans;

/// <summary>
/// One transient posted by two brokers is planned once: the second post (0.6″ away, its own id and key) stays out of
/// the pool and is named on the kept entry and in the operator queue; once the kept post is observed, neither is
/// planned again.
/// </summary>
public sealed class SameTransientPlanTests(IsolatedDatabaseFactory api) : IClassFixture<IsolatedDatabaseFactory>
{
    private const string Night = "2026-12-03";

    private static IEnumerable<(string Unit, JsonElement Entry)> Entries(JsonElement plan) => plan.GetProperty("spectrographs").EnumerateArray()
        .SelectMany(q => q.GetProperty("queue").EnumerateArray().Select(e => (q.GetProperty("spectrographId").GetString()!, e)));

    private static IEnumerable<string> InPool(JsonElement plan) => Entries(plan).Select(e => e.Entry.GetProperty("candidateId").GetString()!)
        .Concat(plan.GetProperty("unassigned").EnumerateArray().Select(u => u.GetProperty("candidateId").GetString()!));

    private async Task<JsonElement> PlanAsync(HttpClient scheduler, object body)
    {
        var result = await DemoNetwork.RunJobAsync(scheduler, await scheduler.PostAsync("/api/plans", Bodies.Raw(JsonSerializer.Serialize(body))));
        return JsonDocument.Parse(await scheduler.GetStringAsync($"/api/plans/{Night}?version={result.GetProperty("version").GetInt32()}")).RootElement.GetProperty("plan");
    }

    [Fact]
    public async Task ATransientPostedByTwoBrokers_IsPlannedOnce_AndNotAgainOnceObserved()
    {
        var (scheduler, observatoryKeys) = await DemoNetwork.ArrangeAsync(api, candidates: 40);
        var plan1 = await PlanAsync(scheduler, new { night = Night, timeLimitSeconds = 3 });
        Assert.Equal(0, plan1.GetProperty("pool").GetProperty("sameTransient").GetInt32());
        var (unit, entry) = Entries(plan1).OrderBy(e => e.Entry.GetProperty("startUtc").GetDateTimeOffset()).First();
        var keptId = entry.GetProperty("candidateId").GetString()!;
        var brokerId = entry.GetProperty("brokerCandidateId").GetString()!;

        // A second broker posts the same transient under its own id, 0.6″ north, with the first broker's photometry.
        var demo = JsonNode.Parse(await File.ReadAllTextAsync(Repository.File("demo", "candidates.json")))!["candidates"]!.AsArray();
        var copy = demo.Single(c => (string)c!["id"]! == brokerId)!.DeepClone().AsObject();
        copy["id"] = "OTHER-" + brokerId;
        copy["decDeg"] = (double)copy["decDeg"]! + 0.6 / 3600;
        var secondBroker = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var posted = await secondBroker.PostAsync("/api/candidates/batches", Bodies.Json(new JsonObject { ["candidates"] = new JsonArray(copy) }));
        Assert.True(posted.IsSuccessStatusCode, await posted.Content.ReadAsStringAsync());
        var copyId = Assert.Single(JsonDocument.Parse(await scheduler.GetStringAsync($"/api/candidates?brokerId=OTHER-{brokerId}")).RootElement
            .GetProperty("items").EnumerateArray()).GetProperty("id").GetString()!;

        // Each post's detail names the other, with the separation.
        var copyDetail = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/candidates/{copyId}")).RootElement;
        var twin = Assert.Single(copyDetail.GetProperty("sameTransient").EnumerateArray());
        Assert.Equal(keptId, twin.GetProperty("id").GetString());
        Assert.Equal(brokerId, twin.GetProperty("brokerCandidateId").GetString());
        Assert.Equal(0.6, twin.GetProperty("separationArcsec").GetDouble(), 2);
        var keptDetail = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/candidates/{keptId}")).RootElement;
        Assert.Equal(copyId, Assert.Single(keptDetail.GetProperty("sameTransient").EnumerateArray()).GetProperty("id").GetString());

        var plan2 = await PlanAsync(scheduler, new { night = Night, timeLimitSeconds = 3 });
        var pool2 = plan2.GetProperty("pool");
        Assert.Equal(1, pool2.GetProperty("sameTransient").GetInt32());
        // One more waiting post than before (other tests of the class may add their own candidates first).
        Assert.Equal(plan1.GetProperty("pool").GetProperty("waiting").GetInt32() + 1, pool2.GetProperty("waiting").GetInt32());
        Assert.Contains("not planned twice", pool2.GetProperty("reason").GetString(), StringComparison.Ordinal);
        Assert.DoesNotContain(copyId, InPool(plan2));
        var kept = Assert.Single(Entries(plan2), e => e.Entry.GetProperty("candidateId").GetString() == keptId).Entry;
        var other = Assert.Single(kept.GetProperty("alsoPostedAs").EnumerateArray());
        Assert.Equal(copyId, other.GetProperty("candidateId").GetString());
        Assert.Equal("OTHER-" + brokerId, other.GetProperty("brokerCandidateId").GetString());
        // The operator's queue names the other post, so a report can be matched to either broker's id.
        var csv = await scheduler.GetStringAsync($"/api/plans/{Night}/queues/{Single(plan2, keptId)}?format=csv");
        Assert.Contains("also_posted_as", csv, StringComparison.Ordinal);
        Assert.Contains("/OTHER-" + brokerId, csv, StringComparison.Ordinal);
        var sheet = await scheduler.GetStringAsync($"/api/plans/{Night}/queues/{Single(plan2, keptId)}?format=sheet");
        Assert.Contains("also posted as: ", sheet, StringComparison.Ordinal);

        // The kept post is observed: the other broker's post is not planned in its place.
        var site = (await api.Services.GetRequiredService<RosterStore>().GetSpectrographAsync(Guid.Parse(unit)))!.Value.SiteId;
        var observatory = api.ClientWith(observatoryKeys[site.ToString()]);
        var report = await observatory.PostAsync($"/api/candidates/{keptId}/observations", Bodies.Raw(JsonSerializer.Serialize(new
        {
            spectrographId = unit, outcome = "done", achievedSnr = 15.0,
            observedUtc = Triage.Core.Sky.DarkTime.LatestDarkInstant((await api.Services.GetRequiredService<RosterStore>().GetSiteAsync(site))!.Value, DateTimeOffset.UtcNow)!.Value,
        })));
        Assert.True(report.IsSuccessStatusCode, await report.Content.ReadAsStringAsync());
        var plan3 = await PlanAsync(scheduler, new { night = Night, timeLimitSeconds = 3 });
        Assert.DoesNotContain(keptId, InPool(plan3));
        Assert.DoesNotContain(copyId, InPool(plan3));
        Assert.Equal(1, plan3.GetProperty("pool").GetProperty("sameTransient").GetInt32());

        // A scheduler confirms the subtype of the kept post: the other broker's post is classified with it.
        var confirmed = await scheduler.PostAsync($"/api/candidates/{keptId}/identification", Bodies.Raw("""{"label":"Ia","reason":"sharp lines"}"""));
        Assert.True(confirmed.IsSuccessStatusCode, await confirmed.Content.ReadAsStringAsync());
        Assert.Equal(1, JsonDocument.Parse(await confirmed.Content.ReadAsStringAsync()).RootElement.GetProperty("otherPostsClassified").GetInt32());
        var followed = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/candidates/{copyId}")).RootElement;
        Assert.Equal("classified", followed.GetProperty("candidate").GetProperty("state").GetString());
        Assert.Equal("Ia", followed.GetProperty("candidate").GetProperty("classifiedLabel").GetString());
        Assert.Contains(followed.GetProperty("history").EnumerateArray(), h => h.GetProperty("detail").GetString() is { } d
            && d.Contains($"identified as Ia through {kept.GetProperty("broker").GetString()}/{brokerId}", StringComparison.Ordinal));
    }

    [Fact]
    public async Task AClassifyingReport_ClassifiesTheOtherWaitingPostsOfItsTransient_Only()
    {
        var store = api.Services.GetRequiredService<CandidateStore>();
        var now = DateTimeOffset.UtcNow;
        var ra = Math.Round(Random.Shared.NextDouble() * 350, 5);
        var tag = Guid.NewGuid().ToString("N")[..8];
        const double Arcsec = 1.0 / 3600;
        var scheduler = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        async Task<Guid> PostAsync(string name, double dec, double discoveredDaysAgo)
        {
            var broker = api.ClientWith(await api.KeyAsync(Scope.Broker));
            var body = new JsonObject
            {
                ["candidates"] = new JsonArray(new JsonObject
                {
                    ["id"] = $"{name}-{tag}", ["raDeg"] = ra, ["decDeg"] = dec, ["discoveredUtc"] = now.AddDays(-discoveredDaysAgo).ToString("O"),
                    ["photometry"] = new JsonArray(new JsonObject
                    {
                        ["timeUtc"] = now.AddDays(-discoveredDaysAgo + 1).ToString("O"), ["band"] = "r", ["fluxMicroJy"] = 40.0, ["fluxMicroJyError"] = 2.0,
                    }),
                }),
            };
            var posted = await broker.PostAsync("/api/candidates/batches", Bodies.Json(body));
            Assert.True(posted.IsSuccessStatusCode, await posted.Content.ReadAsStringAsync());
            return Guid.Parse(Assert.Single(JsonDocument.Parse(await scheduler.GetStringAsync($"/api/candidates?brokerId={name}-{tag}")).RootElement
                .GetProperty("items").EnumerateArray()).GetProperty("id").GetString()!);
        }

        var a = await PostAsync("A", -30, 5);
        var b = await PostAsync("B", -30 + 0.5 * Arcsec, 3);          // the same transient, another broker
        var earlier = await PostAsync("C", -30 - 0.8 * Arcsec, 200);  // the same place, a season earlier
        var far = await PostAsync("D", -30 + 2.0 * Arcsec, 4);        // 2″ away
        var given = await PostAsync("E", -30 - 0.3 * Arcsec, 4);      // the same transient, abandoned by a scheduler
        await store.TransitionAsync(given, CandidateState.Abandoned, _ => true, "test", "not wanted", now);
        var reach = new SameTransientSettings { RadiusArcsec = 1.5, MaxDiscoveryGapDays = 100 };
        Assert.Equal(new[] { b, given }.Order(), (await store.SameTransientAsync(a, reach)).Select(r => r.Id).Order());

        // A unit of its own to report on (the demo roster's first, under new ids and names).
        var (sites, units) = Triage.Core.Roster.RosterJson.Parse(await File.ReadAllTextAsync(Repository.File("demo", "roster.json")));
        var site = sites[0] with { Id = Guid.NewGuid(), Name = $"Follow Mesa {tag}" };
        var unit = units.First(u => u.SiteId == sites[0].Id) with { Id = Guid.NewGuid(), SiteId = site.Id, Name = $"Follow-{tag}" };
        var roster = api.Services.GetRequiredService<RosterStore>();
        await roster.InsertSiteAsync(site, now);
        await roster.InsertSpectrographAsync(unit, now);

        var (outcome, state, _, _, followed) = await store.ReportObservationAsync(a, unit.Id, ObservationOutcome.Done, 15, "IIn",
            now.AddHours(-1), "test observatory", now, follow: reach);

        Assert.Equal((ReportOutcome.Recorded, CandidateState.Classified, 1), (outcome, state, followed));
        Assert.Equal(("classified", "IIn"), await StateAsync(b));
        Assert.Equal("new", (await StateAsync(earlier)).State);
        Assert.Equal("new", (await StateAsync(far)).State);
        Assert.Equal("abandoned", (await StateAsync(given)).State);

        async Task<(string State, string? Label)> StateAsync(Guid id)
        {
            var c = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/candidates/{id}")).RootElement.GetProperty("candidate");
            return (c.GetProperty("state").GetString()!, c.TryGetProperty("classifiedLabel", out var l) && l.ValueKind == JsonValueKind.String ? l.GetString() : null);
        }
    }

    private static string Single(JsonElement plan, string candidateId) =>
        Entries(plan).Single(e => e.Entry.GetProperty("candidateId").GetString() == candidateId).Unit;
}
