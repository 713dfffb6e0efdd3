using System.Text.Json;
using System.Text.Json.Nodes;
using Microsoft.Extensions.DependencyInjection;
using Triage.Api.Replanning;
using Triage.Api.Tests.Infrastructure;

namespace Triage.Api.Tests.NightOperations;

/// <summary>
/// A candidate posted after tonight's plan replans the night by itself when it is worth more per hour of some unit's
/// time than that time earns at the margin in the active version; one no unit can reach does not.
/// </summary>
public sealed class ArrivalReplanTests(NightClockFactory api) : IClassFixture<NightClockFactory>
{
    [Fact]
    public async Task ValuableArrival_ReplansTheNight_AnUnreachableOneDoesNot()
    {
        var (scheduler, _, _, _) = await api.ArrangeDemoAsync();
        var watch = api.Services.GetRequiredService<ArrivalWatch>();
        var night = NightClockFactory.Night.ToString("yyyy-MM-dd");
        api.Clock.Now = NightClockFactory.MidNight;
        await NightClockFactory.RunJobAsync(scheduler, await scheduler.PostAsync("/api/plans", Bodies.Raw(JsonSerializer.Serialize(new { night }))));
        var v1 = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/plans/{night}")).RootElement;

        // The planned entry that earns most per hour of its unit's time, still ahead: its twin is worth as much.
        var now = api.Clock.Now;
        var best = NightClockFactory.Entries(v1)
            .Select(e => e.Entry)
            .Where(e => e.GetProperty("startUtc").GetDateTimeOffset() > now.AddMinutes(30))
            .MaxBy(e => e.GetProperty("value").GetDouble() / (e.GetProperty("endUtc").GetDateTimeOffset() - e.GetProperty("startUtc").GetDateTimeOffset()).TotalHours);
        var brokerId = best.GetProperty("brokerCandidateId").GetString()!;
        var demo = JsonNode.Parse(await File.ReadAllTextAsync(Repository.File("demo", "candidates.json")))!["candidates"]!.AsArray();
        // A twin stands 10″ north (the faint one 10″ south) of the original: another transient of the same kind (a copy
        // within 1.5″ would be another broker's post of the same one, which the plan takes only once; checked last).
        JsonObject Twin(string id, double dimmedBy, double northArcsec = 10)
        {
            var twin = demo.Single(c => c!["id"]!.GetValue<string>() == brokerId)!.DeepClone().AsObject();
            twin["id"] = id;
            twin["decDeg"] = twin["decDeg"]!.GetValue<double>() + northArcsec / 3600;
            foreach (var p in twin["photometry"]!.AsArray())
            {
                p!["magAb"] = p["magAb"]!.GetValue<double>() + dimmedBy;
            }
            return twin;
        }
        var broker = api.ClientWith(await api.KeyAsync(Triage.Storage.Access.Scope.Broker));

        // Eight magnitudes fainter no unit reaches the lowest S/N: a look happens, and no version names it.
        await WaitAsync(() => watch.Looks > 0, TimeSpan.FromSeconds(30));
        var looks = watch.Looks;
        var faint = await broker.PostAsync("/api/candidates/batches", Bodies.Json(new JsonObject { ["candidates"] = new JsonArray(Twin("TG26-90001", 8, -10)) }));
        Assert.True(faint.IsSuccessStatusCode, await faint.Content.ReadAsStringAsync());
        await WaitAsync(() => watch.Looks > looks, TimeSpan.FromSeconds(60));

        // The twin itself: a replan from now, recorded as caused by the candidate.
        var posted = await broker.PostAsync("/api/candidates/batches", Bodies.Json(new JsonObject { ["candidates"] = new JsonArray(Twin("TG26-90002", 0)) }));
        Assert.True(posted.IsSuccessStatusCode, await posted.Content.ReadAsStringAsync());
        var meta = await VersionNamingAsync(scheduler, night, "TG26-90002", TimeSpan.FromMinutes(2));
        Assert.Equal("candidate", meta.GetProperty("trigger").GetProperty("kind").GetString());
        var versions = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/plans/{night}/versions")).RootElement.EnumerateArray().ToList();
        Assert.DoesNotContain(versions, v => Detail(v).Contains("TG26-90001", StringComparison.Ordinal));
        var replanned = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/plans/{night}?version={meta.GetProperty("version").GetInt32()}")).RootElement;
        Assert.True(replanned.GetProperty("version").GetProperty("plannedFrom").GetDateTimeOffset() >= now);

        // Another broker posts the planned original again, 0.5″ away: the same transient, no reason to replan.
        var otherBroker = api.ClientWith(await api.KeyAsync(Triage.Storage.Access.Scope.Broker));
        await WaitAsync(() => watch.Looks > looks + 1, TimeSpan.FromSeconds(60)); // past the look that saw TG26-90002
        looks = watch.Looks;
        var triggered = watch.Triggered;
        var copy = await otherBroker.PostAsync("/api/candidates/batches", Bodies.Json(new JsonObject { ["candidates"] = new JsonArray(Twin("TG26-90003", 0, 0.5)) }));
        Assert.True(copy.IsSuccessStatusCode, await copy.Content.ReadAsStringAsync());
        await WaitAsync(() => watch.Looks > looks, TimeSpan.FromSeconds(60)); // the look its arrival notice wakes
        Assert.Equal(triggered, watch.Triggered);
    }

    private static string Detail(JsonElement version) =>
        version.TryGetProperty("trigger", out var t) && t.ValueKind == JsonValueKind.Object && t.TryGetProperty("detail", out var d) && d.ValueKind == JsonValueKind.String
            ? d.GetString()! : "";

    private static async Task<JsonElement> VersionNamingAsync(HttpClient client, string night, string text, TimeSpan timeout)
    {
        var until = DateTime.UtcNow + timeout;
        while (true)
        {
            var versions = JsonDocument.Parse(await client.GetStringAsync($"/api/plans/{night}/versions")).RootElement.EnumerateArray().ToList();
            if (versions.FirstOrDefault(v => Detail(v).Contains(text, StringComparison.Ordinal)) is { ValueKind: JsonValueKind.Object } found)
            {
                return found;
            }
            Assert.True(DateTime.UtcNow < until, $"no version of {night} names {text} within {timeout}");
            await Task.Delay(250);
        }
    }

    private static async Task WaitAsync(Func<bool> condition, TimeSpan timeout)
    {
        var until = DateTime.UtcNow + timeout;
        while (!condition())
        {
            Assert.True(DateTime.UtcNow < until, "condition not met in time");
            await Task.Delay(200);
        }
    }
}
