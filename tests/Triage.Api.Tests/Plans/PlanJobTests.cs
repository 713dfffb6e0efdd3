using System.Net;
using System.Text.Json;
using System.Text.Json.Nodes;
using Microsoft.Extensions.DependencyInjection;
using Triage.Api.Tests.Infrastructure;
using Triage.Core.Roster;
using Triage.Storage.Access;
using Triage.Core.Candidates;
using Triage.Storage.Calibrations;
using Triage.Storage.Candidates;
using Triage.Storage.Roster;

namespace Triage.Api.Tests.Plans;

/// <summary>
/// The whole loop through the API against PostgreSQL: the demo network and candidates go in,
/// a plan is computed by the background job, an observation is reported, and the night is
/// replanned from an instant during it.
/// </summary>
public sealed class PlanJobTests(IsolatedDatabaseFactory api) : IClassFixture<IsolatedDatabaseFactory>
{
    private static readonly DateOnly Night = new(2026, 12, 3);

    private Task<(HttpClient Scheduler, Dictionary<string, string> ObservatoryKeys)> ArrangeAsync() => DemoNetwork.ArrangeAsync(api);

    private static Task<JsonElement> RunJobAsync(HttpClient client, HttpResponseMessage accepted) => DemoNetwork.RunJobAsync(client, accepted);

    [Fact]
    public async Task WaitingCandidates_OneBulkRead_MatchesTheOneByOneReads()
    {
        await ArrangeAsync();
        var store = api.Services.GetRequiredService<CandidateStore>();

        var bulk = await store.InStatesWithPhotometryAsync([CandidateState.New, CandidateState.Planned]);

        Assert.True(bulk.Count >= 80, $"{bulk.Count} candidates read");
        Assert.Equal(bulk.Select(b => b.Id).Order(), bulk.Select(b => b.Id));
        foreach (var (id, candidate) in bulk)
        {
            var single = (await store.GetAsync(id))!;
            Assert.Contains(single.Summary.State, new[] { "new", "planned" });
            Assert.Equal(single.Candidate.Id, candidate.Id);
            Assert.Equal(single.Candidate.ScienceWeight, candidate.ScienceWeight);
            Assert.Equal(single.Candidate.DiscoveredUtc, candidate.DiscoveredUtc);
            Assert.Equal(single.Candidate.Photometry, candidate.Photometry);
            Assert.NotEmpty(candidate.Photometry);
        }
    }

    [Fact]
    public async Task Plan_ThenReportAndReplan_KeepsExecutingWorkAndDropsTheClassified()
    {
        var (scheduler, observatoryKeys) = await ArrangeAsync();

        var first = await RunJobAsync(scheduler, await scheduler.PostAsync("/api/plans", Bodies.Raw("""{"night":"2026-12-03","timeLimitSeconds":3}""")));
        Assert.Equal(1, first.GetProperty("version").GetInt32());
        var response1 = JsonDocument.Parse(await scheduler.GetStringAsync("/api/plans/2026-12-03")).RootElement;
        var plan1 = response1.GetProperty("plan");
        // Asked for no objective: planned for identification, the service's default (docs/sequential-triage.md §6),
        // in the version row and in the plan body alike.
        Assert.Equal("identification", response1.GetProperty("version").GetProperty("objective").GetString());
        Assert.Equal("identification", plan1.GetProperty("objective").GetString());
        var entries1 = plan1.GetProperty("spectrographs").EnumerateArray()
            .SelectMany(q => q.GetProperty("queue").EnumerateArray().Select(e => (Unit: q.GetProperty("spectrographId").GetString()!, Entry: e)))
            .ToList();
        Assert.NotEmpty(entries1);
        Assert.Contains("advisory", plan1.GetProperty("advisory").GetString(), StringComparison.OrdinalIgnoreCase);

        // Planned candidates moved to "planned".
        var (unit, entry) = entries1.OrderBy(e => e.Entry.GetProperty("startUtc").GetDateTimeOffset()).First();
        var candidateId = entry.GetProperty("candidateId").GetString()!;
        var detail = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/candidates/{candidateId}")).RootElement;
        Assert.Equal("planned", detail.GetProperty("candidate").GetProperty("state").GetString());

        // The observatory of the first entry's spectrograph reports it classified.
        var site = (await api.Services.GetRequiredService<RosterStore>().GetSpectrographAsync(Guid.Parse(unit)))!.Value.SiteId;
        var observatory = api.ClientWith(observatoryKeys[site.ToString()]);
        var report = await observatory.PostAsync($"/api/candidates/{candidateId}/observations", Bodies.Raw(JsonSerializer.Serialize(new
        {
            spectrographId = unit, outcome = "done", achievedSnr = 18.0, classifiedLabel = "Ia",
            // A done report must lie in the site's dark window (and not in the future): the latest dark minute so far.
            observedUtc = Triage.Core.Sky.DarkTime.LatestDarkInstant((await api.Services.GetRequiredService<RosterStore>().GetSiteAsync(site))!.Value, DateTimeOffset.UtcNow)!.Value,
        })));
        Assert.True(report.IsSuccessStatusCode, await report.Content.ReadAsStringAsync());
        var after = JsonDocument.Parse(await report.Content.ReadAsStringAsync()).RootElement.GetProperty("state").GetString();
        Assert.Contains(after, new[] { "classified", "unsettled" });
        if (after == "unsettled")
        {
            // One label at this R and S/N did not reach the identification confidence: the scheduler confirms it.
            var confirmed = await scheduler.PostAsync($"/api/candidates/{candidateId}/identification", Bodies.Raw(JsonSerializer.Serialize(new { label = "Ia" })));
            Assert.True(confirmed.IsSuccessStatusCode, await confirmed.Content.ReadAsStringAsync());
        }

        // Replan from the middle of another entry: that entry is kept, the classified one is gone.
        var executing = entries1.First(e => e.Entry.GetProperty("candidateId").GetString() != candidateId);
        var start = executing.Entry.GetProperty("startUtc").GetDateTimeOffset();
        var end = executing.Entry.GetProperty("endUtc").GetDateTimeOffset();
        var fromUtc = start + (end - start) / 2;
        var second = await RunJobAsync(scheduler, await scheduler.PostAsync("/api/plans", Bodies.Raw(
            JsonSerializer.Serialize(new { night = "2026-12-03", timeLimitSeconds = 3, fromUtc }))));
        Assert.Equal(2, second.GetProperty("version").GetInt32());
        var plan2 = JsonDocument.Parse(await scheduler.GetStringAsync("/api/plans/2026-12-03")).RootElement.GetProperty("plan");
        var entries2 = plan2.GetProperty("spectrographs").EnumerateArray()
            .SelectMany(q => q.GetProperty("queue").EnumerateArray().Select(e => (Unit: q.GetProperty("spectrographId").GetString()!, Entry: e)))
            .ToList();
        Assert.DoesNotContain(entries2, e => e.Entry.GetProperty("candidateId").GetString() == candidateId);
        // Every observation executing at the instant (on any unit) is kept as it was.
        string Id(JsonElement e) => e.GetProperty("candidateId").GetString()!;
        DateTimeOffset Start(JsonElement e) => e.GetProperty("startUtc").GetDateTimeOffset();
        DateTimeOffset End(JsonElement e) => e.GetProperty("endUtc").GetDateTimeOffset();
        var executingAtFrom = entries1.Where(e => Start(e.Entry) <= fromUtc && fromUtc < End(e.Entry) && Id(e.Entry) != candidateId).ToList();
        Assert.Contains(executingAtFrom, e => Id(e.Entry) == Id(executing.Entry));
        foreach (var (u, e) in executingAtFrom)
        {
            var keptEntry = Assert.Single(entries2, x => Id(x.Entry) == Id(e));
            Assert.Equal(u, keptEntry.Unit);
            Assert.Equal(Start(e), Start(keptEntry.Entry));
        }
        var keptIds = executingAtFrom.Select(e => Id(e.Entry)).ToHashSet();
        // Nothing new starts before the replanning instant, nor before the kept work on its unit ends.
        foreach (var (u, e) in entries2.Where(x => !keptIds.Contains(Id(x.Entry))))
        {
            Assert.True(Start(e) >= fromUtc, $"{Id(e)} starts {Start(e):O}, before {fromUtc:O}");
            foreach (var k in executingAtFrom.Where(k => k.Unit == u))
            {
                Assert.True(Start(e) >= End(k.Entry), $"{Id(e)} overlaps kept {Id(k.Entry)}");
            }
        }

        var diff = JsonDocument.Parse(await scheduler.GetStringAsync("/api/plans/2026-12-03/diff?from=1&to=2")).RootElement;
        Assert.Contains(diff.GetProperty("changes").EnumerateArray(),
            c => c.GetProperty("candidateId").GetString() == candidateId && c.GetProperty("kind").GetString() == "removed");
    }

    [Fact]
    public async Task Plan_WithoutActiveCalibration_FailsClearly_AndLeavesNoVersion()
    {
        // A second isolated database: no calibration at all.
        using var bare = new IsolatedDatabaseFactory();
        var scheduler = bare.ClientWith(await bare.KeyAsync(Scope.Scheduler));
        var accepted = await scheduler.PostAsync("/api/plans", Bodies.Raw("""{"night":"2026-12-04"}"""));
        var jobUrl = JsonDocument.Parse(await accepted.Content.ReadAsStringAsync()).RootElement.GetProperty("jobUrl").GetString();
        JsonElement job = default;
        for (var i = 0; i < 150; i++)
        {
            job = JsonDocument.Parse(await scheduler.GetStringAsync(jobUrl)).RootElement;
            if (job.GetProperty("status").GetString() is "failed" or "succeeded")
            {
                break;
            }
            await Task.Delay(200);
        }
        Assert.Equal("failed", job.GetProperty("status").GetString());
        Assert.Contains("No calibration is active", job.GetProperty("error").GetString(), StringComparison.Ordinal);
        Assert.Equal(HttpStatusCode.NotFound, (await scheduler.GetAsync("/api/plans/2026-12-04")).StatusCode);
    }
}
