using System.Net.Http.Json;
using System.Text;
using System.Text.Json.Nodes;
using Microsoft.Extensions.DependencyInjection;
using Triage.Core.Planning;
using Triage.Storage.Access;
using Triage.Storage.Plans;

namespace Triage.Browser.Tests.Infrastructure;

/// <summary>
/// An invented night arranged through the API and the plan store: one site, two spectrographs,
/// four candidates (one observed, one lost to weather, two pending) and a stored plan version.
/// Every scenario uses its own names and a night far in the future, so tests never share rows.
/// </summary>
public sealed class NightScenario
{
    private static int _nights;

    public required string AdminKey { get; init; }
    public required DateOnly Night { get; init; }
    public required string SiteId { get; init; }
    public required string[] SpectrographIds { get; init; }
    public required string[] SpectrographNames { get; init; }
    /// <summary>Stored candidate ids: [0] done, [1] lost, [2] and [3] pending.</summary>
    public required string[] CandidateIds { get; init; }
    public required string[] BrokerIds { get; init; }

    public string NightText => Night.ToString("yyyy-MM-dd");

    public DateTimeOffset Evening => new(Night.ToDateTime(new TimeOnly(23, 0)), TimeSpan.Zero);

    public static async Task<NightScenario> CreateAsync(NightViewHost host)
    {
        var admin = await host.KeyAsync(Scope.Admin);
        var client = host.ClientWith(admin);
        var tag = Guid.NewGuid().ToString("N")[..8];
        var site = await PostAsync(client, "/api/sites", SiteBody($"Test Mesa {tag}"));
        var siteId = (string)site["id"]!;
        string[] names = [$"Wide-{tag}", $"Fine-{tag}"];
        var low = await PostAsync(client, $"/api/sites/{siteId}/spectrographs", SpectrographBody(names[0], 90));
        var high = await PostAsync(client, $"/api/sites/{siteId}/spectrographs", SpectrographBody(names[1], 4200));
        string[] spectrographs = [(string)low["id"]!, (string)high["id"]!];

        var broker = host.ClientWith(await host.KeyAsync(Scope.Broker));
        double ra = Math.Round(Random.Shared.NextDouble() * 350, 5);
        var brokerIds = Enumerable.Range(1, 4).Select(i => $"demo-{tag}-{i}").ToArray();
        var batch = new JsonObject { ["candidates"] = new JsonArray(brokerIds.Select((id, i) => (JsonNode)CandidateBody(id, ra, -20.0 - i * 0.01)).ToArray()) };
        await PostAsync(broker, "/api/candidates/batches", batch);
        var page = await client.GetFromJsonAsync<JsonObject>($"/api/candidates?raDeg={ra}&decDeg=-20.015&radiusDeg=0.1&limit=100");
        var byBroker = page!["items"]!.AsArray().ToDictionary(i => (string)i!["brokerCandidateId"]!, i => (string)i!["id"]!);
        var ids = brokerIds.Select(b => byBroker[b]).ToArray();

        var night = new DateOnly(2040, 1, 1).AddDays(Interlocked.Increment(ref _nights) + Random.Shared.Next(0, 20000)); // within the sky model's years
        var scenario = new NightScenario
        {
            AdminKey = admin, Night = night, SiteId = siteId, SpectrographIds = spectrographs, SpectrographNames = names,
            CandidateIds = ids, BrokerIds = brokerIds,
        };
        var t0 = scenario.Evening;
        await scenario.StorePlanAsync(host,
            [Entry(ids[0], t0, 18.4), Entry(ids[2], t0.AddMinutes(40), 19.1)],
            [Entry(ids[1], t0.AddMinutes(10), 20.2), Entry(ids[3], t0.AddMinutes(90), 20.8)]);
        // Reported after the version was computed, so the reports are about its entries.
        // A done report must lie in the site's dark window: the latest dark minute at most 30 minutes ago.
        var siteRecord = (await host.Services.GetRequiredService<Triage.Storage.Roster.RosterStore>().GetSiteAsync(Guid.Parse(siteId)))!.Value;
        var observedUtc = Triage.Core.Sky.DarkTime.LatestDarkInstant(siteRecord, DateTimeOffset.UtcNow.AddMinutes(-30))!.Value.ToString("O");
        await PostAsync(client, $"/api/candidates/{ids[0]}/observations", new JsonObject
        {
            ["spectrographId"] = spectrographs[0], ["outcome"] = "done", ["achievedSnr"] = 18.0, ["observedUtc"] = observedUtc,
        });
        await PostAsync(client, $"/api/candidates/{ids[1]}/observations", new JsonObject
        {
            ["spectrographId"] = spectrographs[1], ["outcome"] = "weather", ["observedUtc"] = observedUtc,
        });

        return scenario;
    }

    /// <summary>
    /// A planned observation with a reason naming the candidate, so a test can tell reasons apart, worded as an
    /// identification plan (the default objective) words it.
    /// </summary>
    public static QueueEntry Entry(string id, DateTimeOffset start, double mag) => new(
        id, start, start.AddMinutes(30), 1500, 1.25, mag, 22, 0.72, 0.6, 0.72,
        $"Reason for {id}: A=0.72 at S/N 22 per resolution element, value 0.720 (expected correct identifications at posterior ≥ 0.9, a follow-up included); {CheapFirst}", [], null, 0);

    /// <summary>The escalation clause of <see cref="Entry"/>'s reason.</summary>
    public const string CheapFirst = "cheap spectrum first: if it reports Ia (45 % likely), an R=4200 spectrum then identifies the subtype with probability 0.71 (0.69 expected correct); 0.30 identified now + 0.12 more from the follow-up than without this spectrum";

    /// <summary>Stores a new plan version with one queue per spectrograph of the scenario.</summary>
    public async Task StorePlanAsync(NightViewHost host, params QueueEntry[][] queues)
    {
        var plan = new NightPlan(
            NightPlan.AdvisoryStatement,
            PlanObjective.Identification,
            queues.Select((q, i) => new SpectrographQueue(SpectrographIds[i], SpectrographNames[i], "Test Mesa", i == 0 ? 90 : 4200, 8 * 3600, q.Length * 1800, 10, 0.1, q)).ToList(),
            [],
            new PlanSummary(4, queues.Sum(q => q.Length), queues.Sum(q => q.Sum(e => e.ExpectedAccuracy)), 1, 1, 1.1, 0.05, PlanStatus.Feasible, 20, 10, 8),
            []) { Night = Night };
        await host.Services.GetRequiredService<PlanStore>().AddVersionAsync(new NewPlanVersion(
            Night, Evening.AddHours(-1), "identification", plan.Summary.Status.ToString(), plan.Summary.ExpectedCorrectIdentifications,
            plan.Summary.Assigned, null, null, PlanJson.Serialize(plan)), DateTimeOffset.UtcNow);
    }

    private static async Task<JsonObject> PostAsync(HttpClient client, string path, JsonNode body)
    {
        var response = await client.PostAsync(path, new StringContent(body.ToJsonString(), Encoding.UTF8, "application/json"));
        var text = await response.Content.ReadAsStringAsync();
        Assert.True(response.IsSuccessStatusCode, $"POST {path}: {(int)response.StatusCode} {text}");
        return JsonNode.Parse(text)!.AsObject();
    }

    private static JsonObject SiteBody(string name) => new()
    {
        ["name"] = name, ["observatory"] = "Invented Ridge Observatory",
        ["latitudeDeg"] = -28.5, ["longitudeDeg"] = -68.9, ["elevationM"] = 2300,
        ["minAltitudeDeg"] = 25, ["sunAvoidanceDeg"] = 45, ["moonAvoidanceDeg"] = 20, ["seeingArcsec"] = 1.0,
        ["darkSkyMagArcsec2"] = 21.6, ["skyReferenceWavelengthAngstrom"] = 6000, ["extinctionMagPerAirmass"] = 0.12,
    };

    private static JsonObject SpectrographBody(string name, double r) => new()
    {
        ["name"] = name, ["resolvingPower"] = r, ["referenceWavelengthAngstrom"] = 6000,
        ["minWavelengthAngstrom"] = 3800, ["maxWavelengthAngstrom"] = 9200, ["apertureM"] = 1.5,
        ["centralObstruction"] = 0.1, ["throughput"] = 0.2, ["readNoiseElectrons"] = 4,
        ["darkCurrentElectronsPerSecond"] = 0.003, ["pixelsPerResolutionElement"] = 2.5,
        ["spatialPixelScaleArcsec"] = 0.5, ["slitWidthArcsec"] = 1.5, ["overheadSeconds"] = 300,
        ["maxExposureSeconds"] = 1800, ["maxAirmass"] = 2.2, ["costPerHour"] = 60, ["nightlyBudgetHours"] = 8,
    };

    /// <summary>A rise and decline in g and r over a month (invented).</summary>
    internal static JsonObject CandidateBody(string id, double ra, double dec)
    {
        var start = DateTimeOffset.UtcNow.AddDays(-30);
        var photometry = new JsonArray();
        for (int i = 0; i < 12; i++)
        {
            double day = 2.5 * (i / 2);
            double mag = 20.6 - 2.0 * Math.Exp(-Math.Pow((day - 8) / 6, 2));
            photometry.Add(new JsonObject
            {
                ["timeUtc"] = start.AddDays(day + (i % 2) * 0.02).ToString("O"),
                ["band"] = i % 2 == 0 ? "g" : "r",
                ["magAb"] = Math.Round(mag + (i % 2) * 0.25, 3),
                ["magAbError"] = 0.05,
            });
        }
        return new JsonObject { ["id"] = id, ["raDeg"] = ra, ["decDeg"] = dec, ["discoveredUtc"] = start.ToString("O"), ["photometry"] = photometry };
    }
}
