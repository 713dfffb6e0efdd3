using System.Net;
using Microsoft.Extensions.DependencyInjection;
using System.Text.Json.Nodes;
using Triage.Api.Tests.Infrastructure;
using Triage.Core.Calibration;
using Triage.Core.Candidates;
using Triage.Core.Spectra;
using Triage.Learning;
using Triage.Storage.Access;
using Triage.Storage.Calibrations;

namespace Triage.Api.Tests.Candidates;

[Collection(ApiCollection.Name)]
public sealed class CandidateLifecycleTests(TriageApiFactory api)
{
    private async Task<string> NewCandidateAsync()
    {
        var broker = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var candidate = CandidateBodies.Candidate();
        double ra = Random.Shared.NextDouble() * 359;
        candidate["raDeg"] = ra;
        var posted = await broker.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(candidate)));
        Assert.Equal(HttpStatusCode.OK, posted.StatusCode);
        var reader = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        var listed = await reader.GetAsync($"/api/candidates?raDeg={ra}&decDeg=-23.5&radiusDeg=0.0001&limit=1000");
        Assert.True(listed.IsSuccessStatusCode, await listed.Content.ReadAsStringAsync());
        var page = await listed.ReadObjectAsync();
        return (string)page["items"]!.AsArray().Single(i => (string)i!["brokerCandidateId"]! == (string)candidate["id"]!)!["id"]!;
    }

    private async Task<(HttpClient Client, string SpectrographId)> ObservatoryAsync()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Observatory, Unique.Name("obs")));
        var site = await (await client.PostAsync("/api/sites", Bodies.Json(Bodies.Site()))).ReadObjectAsync();
        var sp = await (await client.PostAsync($"/api/sites/{site["id"]}/spectrographs", Bodies.Json(Bodies.Spectrograph()))).ReadObjectAsync();
        // A done report must lie in the site's dark window: the latest dark instant before now.
        var stored = (await api.Services.GetRequiredService<Triage.Storage.Roster.RosterStore>().GetSiteAsync(Guid.Parse((string)site["id"]!)))!.Value;
        _observedUtc = Triage.Core.Sky.DarkTime.LatestDarkInstant(stored, DateTimeOffset.UtcNow)!.Value;
        return (client, (string)sp["id"]!);
    }

    private DateTimeOffset _observedUtc = DateTimeOffset.UtcNow.AddHours(-1);

    private StringContent Report(string spectrographId, string outcome, double? snr = null, string? label = null) => Bodies.Json(new JsonObject
    {
        ["spectrographId"] = spectrographId,
        ["outcome"] = outcome,
        ["achievedSnr"] = snr,
        ["classifiedLabel"] = label,
        ["observedUtc"] = _observedUtc.ToString("O"),
    });

    private static StringContent To(string state, bool force = false) => Bodies.Json(new JsonObject { ["to"] = state, ["force"] = force });

    private async Task<string> StateAsync(string id)
    {
        var reader = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        return (string)(await (await reader.GetAsync($"/api/candidates/{id}")).ReadObjectAsync())["candidate"]!["state"]!;
    }

    /// <summary>
    /// A calibration whose every answer is right (diagonal confusion, each subtype its own broad class, so nothing is
    /// shrunk): one labelled report then settles the subtype whatever the prior. Other classes of this collection leave
    /// other calibrations active, so the lifecycle test activates its own.
    /// </summary>
    private static string CertainCalibrationJson()
    {
        var subtypes = DefaultSubtypeLabels.All.ToArray();
        var bin = new PhaseBin("all-phases", -1000, 1000);
        var cells = subtypes.Select(s => new CalibrationCell(s, 100, 10, bin.Name, 1, 1, 1, 1, 50, 50)).ToList();
        var counts = subtypes.Select((_, i) => (IReadOnlyList<int>)subtypes.Select((_, j) => i == j ? 50 : 0).ToList()).ToList();
        return CalibrationJson.Serialize(new AccuracyModelDocument("per resolution element", 6000, subtypes, [100], [10], [bin], cells,
            [new ConfusionMatrix(100, 10, bin.Name, subtypes, counts)])
        {
            BroadClasses = subtypes.Select(s => new BroadClass("class-of-" + s, [s])).ToList(),
        });
    }

    [Fact]
    public async Task Lifecycle_PlannedObservedClassified_NotReplannedUnlessForced()
    {
        await api.Services.GetRequiredService<CalibrationStore>().AddAsync(
            new NewCalibration("imported", false, null, "test", null, null, CertainCalibrationJson()), true, DateTimeOffset.UtcNow);
        var id = await NewCandidateAsync();
        var scheduler = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        var (observatory, spectrograph) = await ObservatoryAsync();

        Assert.Equal(HttpStatusCode.OK, (await scheduler.PostAsync($"/api/candidates/{id}/transitions", To("planned"))).StatusCode);
        var observed = await (await observatory.PostAsync($"/api/candidates/{id}/observations", Report(spectrograph, "done", 12))).ReadObjectAsync();
        Assert.Equal("observed", (string)observed["state"]!);
        var classified = await (await observatory.PostAsync($"/api/candidates/{id}/observations", Report(spectrograph, "done", 25, "Ic-BL"))).ReadObjectAsync();
        Assert.Equal("classified", (string)classified["state"]!);

        var refused = await scheduler.PostAsync($"/api/candidates/{id}/transitions", To("planned"));
        await Bodies.AssertProblemNamingAsync(refused, 409, "to");
        Assert.Equal(HttpStatusCode.OK, (await scheduler.PostAsync($"/api/candidates/{id}/transitions", To("planned", force: true))).StatusCode);

        var reader = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        var detail = await (await reader.GetAsync($"/api/candidates/{id}")).ReadObjectAsync();
        Assert.Equal("Ic-BL", (string)detail["candidate"]!["classifiedLabel"]!);
        Assert.Equal(2, detail["observations"]!.AsArray().Count);
        Assert.Equal(["created", "transition", "observation", "observation", "transition"], detail["history"]!.AsArray().Select(e => (string)e!["kind"]!));
    }

    [Fact]
    public async Task Report_LostToWeather_PlannedCandidateReturnsToNew()
    {
        var id = await NewCandidateAsync();
        var scheduler = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        var (observatory, spectrograph) = await ObservatoryAsync();
        await scheduler.PostAsync($"/api/candidates/{id}/transitions", To("planned"));

        var answer = await (await observatory.PostAsync($"/api/candidates/{id}/observations", Report(spectrograph, "weather"))).ReadObjectAsync();

        Assert.Equal("new", (string)answer["state"]!);
    }

    [Fact]
    public async Task Report_FromObservatoryNotOwningSpectrograph_403AndStateUnchanged()
    {
        var id = await NewCandidateAsync();
        var (_, spectrograph) = await ObservatoryAsync();
        var (other, _) = await ObservatoryAsync();

        var response = await other.PostAsync($"/api/candidates/{id}/observations", Report(spectrograph, "done", 30, "Ia"));

        await Bodies.AssertProblemNamingAsync(response, 403, "spectrographId");
        Assert.Equal("new", await StateAsync(id));
    }

    [Fact]
    public async Task Report_UnknownCandidate_404()
    {
        var (observatory, spectrograph) = await ObservatoryAsync();

        var response = await observatory.PostAsync($"/api/candidates/{Guid.NewGuid()}/observations", Report(spectrograph, "done", 30));

        await Bodies.AssertProblemNamingAsync(response, 404, "id");
    }

    [Fact]
    public async Task Report_UnknownSpectrograph_404()
    {
        var id = await NewCandidateAsync();
        var (observatory, _) = await ObservatoryAsync();

        var response = await observatory.PostAsync($"/api/candidates/{id}/observations", Report(Guid.NewGuid().ToString(), "failed"));

        await Bodies.AssertProblemNamingAsync(response, 404, "spectrographId");
    }

    [Theory]
    [InlineData("done", null, null, "achievedSnr")]
    [InlineData("cloudy", null, null, "outcome")]
    [InlineData("weather", null, "Ia", "classifiedLabel")]
    [InlineData("done", 10.0, "Ia-ish", "classifiedLabel")]
    public async Task Report_BadBody_400NamingField(string outcome, double? snr, string? label, string field)
    {
        var id = await NewCandidateAsync();
        var (observatory, spectrograph) = await ObservatoryAsync();

        var response = await observatory.PostAsync($"/api/candidates/{id}/observations", Report(spectrograph, outcome, snr, label));

        await Bodies.AssertProblemNamingAsync(response, 400, field);
    }

    [Fact]
    public async Task Report_ByBrokerKey_403()
    {
        var id = await NewCandidateAsync();
        var broker = api.ClientWith(await api.KeyAsync(Scope.Broker));

        var response = await broker.PostAsync($"/api/candidates/{id}/observations", Report(Guid.NewGuid().ToString(), "failed"));

        Assert.Equal(HttpStatusCode.Forbidden, response.StatusCode);
    }

    [Fact]
    public async Task Transition_AbandonedToPlanned_409AndUnknownCandidate404()
    {
        var id = await NewCandidateAsync();
        var scheduler = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        Assert.Equal(HttpStatusCode.OK, (await scheduler.PostAsync($"/api/candidates/{id}/transitions", To("abandoned"))).StatusCode);

        await Bodies.AssertProblemNamingAsync(await scheduler.PostAsync($"/api/candidates/{id}/transitions", To("planned")), 409, "to");
        await Bodies.AssertProblemNamingAsync(await scheduler.PostAsync($"/api/candidates/{Guid.NewGuid()}/transitions", To("planned")), 404, "id");
        await Bodies.AssertProblemNamingAsync(await scheduler.PostAsync($"/api/candidates/{id}/transitions", To("classified")), 400, "to");
    }
}
