using System.Text.Json;
using System.Text.Json.Nodes;
using Microsoft.Extensions.DependencyInjection;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;
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
        Assert.Equal(41, pool2.GetProperty("waiting").GetInt32());
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
    }

    private static string Single(JsonElement plan, string candidateId) =>
        Entries(plan).Single(e => e.Entry.GetProperty("candidateId").GetString() == candidateId).Unit;
}
