using System.Net;
using System.Text.Json;
using System.Text.Json.Nodes;
using Microsoft.Extensions.DependencyInjection;
using Triage.Core.Roster;
using Triage.Storage.Access;
using Triage.Storage.Calibrations;
using Triage.Storage.Roster;

namespace Triage.Api.Tests.Infrastructure;

/// <summary>The demo roster, calibration and first candidates in a host's database, for tests that plan.</summary>
public static class DemoNetwork
{
    /// <summary>Stores the demo network and posts the first <paramref name="candidates"/> demo candidates as a broker.</summary>
    public static async Task<(HttpClient Scheduler, Dictionary<string, string> ObservatoryKeys)> ArrangeAsync(TriageApiFactory api, int candidates = 80)
    {
        var now = DateTimeOffset.UtcNow;
        var (sites, spectrographs) = RosterJson.Parse(await File.ReadAllTextAsync(Repository.File("demo", "roster.json")));
        var roster = api.Services.GetRequiredService<RosterStore>();
        foreach (var s in sites)
        {
            await roster.InsertSiteAsync(s, now);
        }
        foreach (var s in spectrographs)
        {
            await roster.InsertSpectrographAsync(s, now);
        }
        var observatoryKeys = new Dictionary<string, string>();
        foreach (var s in sites)
        {
            observatoryKeys[s.Id.ToString()] = await api.KeyAsync(Scope.Observatory, s.Observatory);
        }
        await api.Services.GetRequiredService<CalibrationStore>().AddAsync(new NewCalibration(
            "synthetic", true, null, "test", null, null, await File.ReadAllTextAsync(Repository.File("demo", "calibration.json"))), true, now);

        var batch = JsonNode.Parse(await File.ReadAllTextAsync(Repository.File("demo", "candidates.json")))!.AsObject();
        var some = new JsonArray(batch["candidates"]!.AsArray().Take(candidates).Select(c => c!.DeepClone()).ToArray());
        var broker = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var posted = await broker.PostAsync("/api/candidates/batches", Bodies.Json(new JsonObject { ["candidates"] = some }));
        Assert.True(posted.IsSuccessStatusCode, await posted.Content.ReadAsStringAsync());
        return (api.ClientWith(await api.KeyAsync(Scope.Scheduler)), observatoryKeys);
    }

    /// <summary>Waits for the job a 202 answer names to succeed and returns its result (fails the test if the job fails).</summary>
    public static async Task<JsonElement> RunJobAsync(HttpClient client, HttpResponseMessage accepted)
    {
        Assert.Equal(HttpStatusCode.Accepted, accepted.StatusCode);
        var jobUrl = JsonDocument.Parse(await accepted.Content.ReadAsStringAsync()).RootElement.GetProperty("jobUrl").GetString()!;
        return (await WaitForJobAsync(client, jobUrl)).GetProperty("result");
    }

    /// <summary>Waits for a job to succeed; fails the test when it fails or takes longer than <paramref name="seconds"/>.</summary>
    public static async Task<JsonElement> WaitForJobAsync(HttpClient client, string jobUrl, int seconds = 120)
    {
        for (var i = 0; i < seconds * 5; i++)
        {
            var answer = await client.GetAsync(jobUrl);
            if (answer.IsSuccessStatusCode)
            {
                var job = JsonDocument.Parse(await answer.Content.ReadAsStringAsync()).RootElement;
                var status = job.GetProperty("status").GetString();
                if (status == "succeeded")
                {
                    return job;
                }
                Assert.True(status != "failed", job.GetProperty("error").GetString());
            }
            await Task.Delay(200);
        }
        throw new TimeoutException($"the job {jobUrl} did not finish in {seconds} s");
    }
}
