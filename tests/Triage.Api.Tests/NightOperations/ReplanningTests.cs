using System.Net;
using System.Text.Json;
using Microsoft.Extensions.DependencyInjection;
using Triage.Api.Tests.Infrastructure;
using Triage.Core.Planning;
using Triage.Storage.Candidates;

namespace Triage.Api.Tests.NightOperations;

/// <summary>
/// Replans during the night through the API, on the demo network with the service's clock inside the dark time:
/// a replan without fromUtc starts now, replans without news change nothing, identical inputs give an identical plan,
/// and candidates that leave the plan go back to waiting in the same transaction.
/// </summary>
public sealed class ReplanningTests(NightClockFactory api) : IClassFixture<NightClockFactory>
{
    private static string Id(JsonElement e) => e.GetProperty("candidateId").GetString()!;

    private static DateTimeOffset Start(JsonElement e) => e.GetProperty("startUtc").GetDateTimeOffset();

    private async Task<JsonElement> PlanAsync(HttpClient scheduler, object body)
    {
        var result = await NightClockFactory.RunJobAsync(scheduler, await scheduler.PostAsync("/api/plans", Bodies.Raw(JsonSerializer.Serialize(body))));
        return JsonDocument.Parse(await scheduler.GetStringAsync(result.GetProperty("url").GetString())).RootElement;
    }

    // Pinned to accuracy: step 3's "half an hour later nothing moves" holds there on the demo night. Under identification
    // (the default) an observation that ended without a report puts its candidate back in the pool, and in this
    // scenario its re-entry displaces one later entry (measured 2026-12-03: 1 moved, 2 added, churn 5 %, within the
    // budget), which is a change the news (no report) asked for, not a reshuffle.
    private const string Objective = "accuracy";

    [Fact]
    public async Task ReplanWithoutFromUtc_StartsNow_NoNewsChangesNothing_AndDroppedCandidatesWaitAgain()
    {
        var (scheduler, _, _, _) = await api.ArrangeDemoAsync();
        var night = NightClockFactory.Night.ToString("yyyy-MM-dd");
        api.Clock.Now = NightClockFactory.MidNight;
        var now = api.Clock.Now;

        // 1. Without fromUtc the plan starts now (the clock runs): nothing before it, and plannedFrom says when.
        var v1 = await PlanAsync(scheduler, new { night, objective = Objective });
        var plannedFrom = v1.GetProperty("version").GetProperty("plannedFrom").GetDateTimeOffset();
        Assert.InRange(plannedFrom, now, api.Clock.Now);
        now = plannedFrom;
        var entries1 = NightClockFactory.Entries(v1);
        Assert.NotEmpty(entries1);
        Assert.All(entries1, e => Assert.True(Start(e.Entry) >= now, $"{Id(e.Entry)} starts {Start(e.Entry):O}, before now {now:O}"));

        // 2. Two replans with no new information: zero moves, zero changes, and the same plan twice.
        var v2 = await PlanAsync(scheduler, new { night, objective = Objective });
        var v3 = await PlanAsync(scheduler, new { night, objective = Objective });
        foreach (var (from, to) in new[] { (1, 2), (2, 3) })
        {
            var diff = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/plans/{night}/diff?from={from}&to={to}")).RootElement;
            Assert.Equal(0, diff.GetProperty("changes").GetArrayLength());
        }
        var churn = v3.GetProperty("version").GetProperty("churn");
        Assert.Equal(entries1.Count, churn.GetProperty("comparedEntries").GetInt32());
        Assert.Equal(0, churn.GetProperty("moved").GetInt32());
        Assert.Equal(0.0, churn.GetProperty("share").GetDouble());
        static string Key(List<(string Unit, JsonElement Entry)> es) => string.Join("|", es.Select(e =>
            $"{e.Unit}:{Id(e.Entry)}:{Start(e.Entry):O}:{e.Entry.GetProperty("exposureSeconds").GetDouble()}").Order(StringComparer.Ordinal));
        Assert.Equal(Key(NightClockFactory.Entries(v2)), Key(NightClockFactory.Entries(v3)));

        // 3. Half an hour later, still no news: no moves; the part still ahead is unchanged.
        api.Clock.Now = now.AddMinutes(30);
        var v4 = await PlanAsync(scheduler, new { night, objective = Objective });
        var later = v4.GetProperty("version").GetProperty("churn");
        Assert.Equal(0, later.GetProperty("moved").GetInt32());
        Assert.Equal(0, later.GetProperty("removed").GetInt32());
        var from4 = v4.GetProperty("version").GetProperty("plannedFrom").GetDateTimeOffset();
        Assert.All(NightClockFactory.Entries(v4), e => Assert.True(Start(e.Entry) >= from4 || e.Entry.GetProperty("endUtc").GetDateTimeOffset() > from4,
            $"{Id(e.Entry)} ended before the replan"));

        // 4. A candidate that leaves the plan returns to waiting: abandon-free way to drop one is to close its unit
        // for the rest of the night via a replan request that cannot use it (explicit fromUtc after the night's end).
        var store = api.Services.GetRequiredService<CandidateStore>();
        var inV4 = NightClockFactory.Entries(v4).Select(e => Guid.Parse(Id(e.Entry))).ToList();
        var afterNight = now.AddDays(1);
        var v5 = await PlanAsync(scheduler, new { night, objective = Objective, fromUtc = afterNight });
        Assert.Empty(NightClockFactory.Entries(v5));
        foreach (var id in inV4)
        {
            var detail = await store.GetAsync(id);
            Assert.Equal("new", detail!.Summary.State);
            Assert.Contains(detail.History, h => h.ToState == "new" && h.Actor == "planner" && h.Detail!.Contains("left out of plan version 5", StringComparison.Ordinal));
        }
    }

    [Fact]
    public async Task OperatorQueue_CarriesBrokerIdPositionMagnitudeAndFallback_InJsonCsvAndNightSheet()
    {
        var (scheduler, _, _, units) = await api.ArrangeDemoAsync();
        api.Clock.Now = NightClockFactory.MidNight;
        var night = NightClockFactory.Night.AddDays(1).ToString("yyyy-MM-dd");
        var plan = await PlanAsync(scheduler, new { night });
        var (unit, entry) = NightClockFactory.Entries(plan).First();
        var candidate = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/candidates/{Id(entry)}")).RootElement.GetProperty("candidate");
        var brokerId = candidate.GetProperty("brokerCandidateId").GetString()!;
        var ra = candidate.GetProperty("raDeg").GetDouble();
        var dec = candidate.GetProperty("decDeg").GetDouble();

        var queue = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/plans/{night}/queues/{unit}")).RootElement.GetProperty("queue");
        var first = queue.EnumerateArray().Single(e => Id(e) == Id(entry));
        Assert.Equal(brokerId, first.GetProperty("brokerCandidateId").GetString());
        Assert.Equal(ra, first.GetProperty("raDeg").GetDouble(), 9);
        Assert.Equal(dec, first.GetProperty("decDeg").GetDouble(), 9);
        Assert.Equal(Triage.Core.Sky.Sexagesimal.RightAscension(ra), first.GetProperty("raSexagesimal").GetString());
        var airmass = new[] { "airmassStart", "airmass", "airmassEnd" }.Select(p => first.GetProperty(p).GetDouble()).ToArray();
        Assert.All(airmass, a => Assert.InRange(a, 1, units.Max(u => u.MaxAirmass)));
        Assert.InRange(first.GetProperty("moonSeparationDeg").GetDouble(), 0, 180);
        var count = first.GetProperty("exposureCount").GetInt32();
        Assert.Equal(first.GetProperty("exposureSeconds").GetDouble(), count * first.GetProperty("subExposureSeconds").GetDouble(), 6);

        var csv = (await scheduler.GetStringAsync($"/api/plans/{night}/queues/{unit}?format=csv")).Split('\n', StringSplitOptions.RemoveEmptyEntries);
        var header = csv[1].Split(',');
        Assert.Contains("broker_candidate_id", header);
        Assert.Contains("ra_hms", header);
        Assert.Contains("predicted_mag_ab", header);
        Assert.Contains(csv, line => line.Contains($"\"{brokerId}\"", StringComparison.Ordinal) && line.Contains(Triage.Core.Sky.Sexagesimal.Declination(dec), StringComparison.Ordinal));

        var sheet = await scheduler.GetAsync($"/api/plans/{night}/queues/{unit}?format=sheet");
        Assert.Equal("text/plain", sheet.Content.Headers.ContentType?.MediaType);
        var text = await sheet.Content.ReadAsStringAsync();
        Assert.Contains(brokerId, text, StringComparison.Ordinal);
        Assert.Contains(Triage.Core.Sky.Sexagesimal.RightAscension(ra), text, StringComparison.Ordinal);
        Assert.Contains(first.GetProperty("predictedMagnitude").GetDouble().ToString("0.0", System.Globalization.CultureInfo.InvariantCulture), text, StringComparison.Ordinal);
        Assert.All(text.Split('\n'), line => Assert.True(line.Length <= 100, $"line too wide to print: {line}"));

        // Brokers find their candidate by their own id.
        var listed = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/candidates?brokerId={Uri.EscapeDataString(brokerId)}")).RootElement.GetProperty("items");
        Assert.Equal(Id(entry), Assert.Single(listed.EnumerateArray()).GetProperty("id").GetString());
        var byPath = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/candidates/by-broker-id/{Uri.EscapeDataString(brokerId)}")).RootElement;
        Assert.Equal(Id(entry), byPath.GetProperty("candidate").GetProperty("id").GetString());
        Assert.Equal(HttpStatusCode.NotFound, (await scheduler.GetAsync("/api/candidates/by-broker-id/no-such-candidate-anywhere")).StatusCode);
    }
}
