using System.Net;
using System.Text.Json.Nodes;
using Microsoft.Extensions.DependencyInjection;
using Triage.Api.Tests.Candidates;
using Triage.Api.Tests.Infrastructure;
using Triage.Core.Calibration;
using Triage.Learning;
using Triage.Storage.Access;
using Triage.Storage.Calibrations;

namespace Triage.Api.Tests.Identification;

/// <summary>
/// Labelled observation reports through the API on a database of its own (the active calibration
/// is global): the posterior rule against a hand computation with Bayes' theorem (E. T. Jaynes,
/// Probability Theory: The Logic of Science, 2003, ch. 4) on a three-subtype confusion matrix,
/// the unsettled state, the history line naming the matrix cell, and refused reports storing nothing.
/// </summary>
public sealed class LabelledReportTests(IsolatedDatabaseFactory api) : IClassFixture<IsolatedDatabaseFactory>
{
    // Rows = truth, columns = answer (Ia, Ia-91T-like, II), at R = 100, S/N = 10, one phase bin:
    //   Ia [40, 8, 2] → [0.8, 0.16, 0.04];  91T [10, 10, 0] → [0.5, 0.5, 0];  II [3, 0, 27] → [0.1, 0, 0.9].
    private static readonly string[] Subtypes = ["Ia", "Ia-91T-like", "II"];
    private static readonly int[][] Counts = [[40, 8, 2], [10, 10, 0], [3, 0, 27]];

    private static string CalibrationJsonText()
    {
        var bin = new PhaseBin("all-phases", -1000, 1000);
        var cells = Subtypes.Select((s, i) =>
        {
            var n = Counts[i].Sum();
            var recall = (double)Counts[i][i] / n;
            return new CalibrationCell(s, 100, 10, bin.Name, recall, recall, recall, recall, n, n);
        }).ToList();
        var matrix = new ConfusionMatrix(100, 10, bin.Name, Subtypes, Counts.Select(r => (IReadOnlyList<int>)r).ToList());
        // Each subtype is a broad class of its own, so the surface's shrinkage towards the broad class
        // leaves the rows as counted and the hand computation holds exactly.
        return CalibrationJson.Serialize(new AccuracyModelDocument("per resolution element", 6000, Subtypes, [100], [10], [bin], cells, [matrix])
        {
            BroadClasses = [new("thermonuclear-normal", ["Ia"]), new("thermonuclear-bright", ["Ia-91T-like"]), new("hydrogen-rich", ["II"])],
        });
    }

    private async Task<(HttpClient Observatory, HttpClient Reader, string Spectrograph, string Candidate)> ArrangeAsync()
    {
        await api.Services.GetRequiredService<CalibrationStore>().AddAsync(
            new NewCalibration("imported", false, null, "test", null, null, CalibrationJsonText()), true, DateTimeOffset.UtcNow);
        var observatory = api.ClientWith(await api.KeyAsync(Scope.Observatory, Unique.Name("obs")));
        var site = await (await observatory.PostAsync("/api/sites", Bodies.Json(Bodies.Site()))).ReadObjectAsync();
        var body = Bodies.Spectrograph();
        body["resolvingPower"] = 100;
        var unit = await (await observatory.PostAsync($"/api/sites/{site["id"]}/spectrographs", Bodies.Json(body))).ReadObjectAsync();
        // A done report must lie in the site's dark window: the latest dark instant before now.
        var stored = (await api.Services.GetRequiredService<Triage.Storage.Roster.RosterStore>().GetSiteAsync(Guid.Parse((string)site["id"]!)))!.Value;
        _observedUtc = Triage.Core.Sky.DarkTime.LatestDarkInstant(stored, DateTimeOffset.UtcNow)!.Value;

        var broker = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var candidate = CandidateBodies.Candidate();
        candidate["subtypeProbabilities"] = new JsonObject { ["Ia"] = 0.7, ["Ia-91T-like"] = 0.1, ["II"] = 0.2 };
        var posted = await broker.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(candidate)));
        Assert.Equal(HttpStatusCode.OK, posted.StatusCode);
        var reader = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        var page = await (await reader.GetAsync("/api/candidates?limit=1000")).ReadObjectAsync();
        var id = (string)page["items"]!.AsArray().Single(i => (string)i!["brokerCandidateId"]! == (string)candidate["id"]!)!["id"]!;
        return (observatory, reader, (string)unit["id"]!, id);
    }

    private DateTimeOffset _observedUtc = DateTimeOffset.UtcNow.AddHours(-1);

    private StringContent Report(string unit, string label, double snr = 10, JsonObject? probabilities = null, double? phase = 0) => Bodies.Json(new JsonObject
    {
        ["spectrographId"] = unit,
        ["outcome"] = "done",
        ["achievedSnr"] = snr,
        ["classifiedLabel"] = label,
        ["classProbabilities"] = probabilities,
        ["phaseDays"] = phase,
        ["observedUtc"] = _observedUtc.ToString("O"),
    });

    [Fact]
    public async Task LabelledReports_MoveByThePosteriorRule_UnsettledThenIdentified()
    {
        var (observatory, reader, unit, id) = await ArrangeAsync();

        // Hand: L = C(Ia|k) = [0.8, 0.5, 0.1]; p·L = [0.56, 0.05, 0.02] → p(Ia) = 0.56/0.63 = 8/9 < 0.9.
        var first = await (await observatory.PostAsync($"/api/candidates/{id}/observations", Report(unit, "Ia"))).ReadObjectAsync();
        Assert.Equal("unsettled", (string)first["state"]!);
        Assert.Equal(8.0 / 9, (double)first["posterior"]!["Ia"]!, 9);
        Assert.Equal(2.0 / 63, (double)first["posterior"]!["II"]!, 9);

        var detail = await (await reader.GetAsync($"/api/candidates/{id}")).ReadObjectAsync();
        Assert.Equal("unsettled", (string)detail["candidate"]!["state"]!);
        // The label its books would be closed with now: Ia at 8/9, below τ = 0.9.
        Assert.Equal("Ia", (string)detail["bestLabel"]!["label"]!);
        Assert.Equal(8.0 / 9, (double)detail["bestLabel"]!["probability"]!, 9);
        Assert.False((bool)detail["bestLabel"]!["atConfidence"]!);
        var history = detail["history"]!.AsArray().Last()!;
        Assert.Equal("unsettled", (string)history["toState"]!);
        var line = (string)history["detail"]!;
        Assert.True(line.Contains("R 100–100, S/N 10–10, phase all-phases 100", StringComparison.Ordinal), line);
        var cell = detail["observations"]!.AsArray().Single()!["confusionCell"]!;
        Assert.Equal(100, (double)cell["gridResolutionLow"]!);

        // Second agreeing report: prior × L² = [0.448, 0.025, 0.002] → p(Ia) = 0.448/0.475 = 0.94316 ≥ 0.9.
        var second = await (await observatory.PostAsync($"/api/candidates/{id}/observations", Report(unit, "Ia"))).ReadObjectAsync();
        Assert.Equal("classified", (string)second["state"]!);
        Assert.Equal(0.448 / 0.475, (double)second["posterior"]!["Ia"]!, 9);
        var after = await (await reader.GetAsync($"/api/candidates/{id}")).ReadObjectAsync();
        Assert.Equal("Ia", (string)after["candidate"]!["classifiedLabel"]!);
        Assert.Equal(0.448 / 0.475, (double)after["posterior"]!["Ia"]!, 9);
        Assert.True((bool)after["bestLabel"]!["atConfidence"]!);
    }

    [Fact]
    public async Task BroadClassWithProbabilities_IsSoftEvidence()
    {
        var (observatory, _, unit, id) = await ArrangeAsync();

        // q = {Ia: 0.5, hydrogen-rich: 0.5}: L = 0.5·C(Ia|k) + 0.5·C(II|k) = [0.42, 0.25, 0.5]; p·L sum 0.419.
        var q = new JsonObject { ["Ia"] = 0.5, ["hydrogen-rich"] = 0.5 };
        var answer = await (await observatory.PostAsync($"/api/candidates/{id}/observations", Report(unit, "Ia", probabilities: q))).ReadObjectAsync();

        Assert.Equal("unsettled", (string)answer["state"]!);
        Assert.Equal(0.294 / 0.419, (double)answer["posterior"]!["Ia"]!, 9);
        Assert.Equal(0.1 / 0.419, (double)answer["posterior"]!["II"]!, 9);
    }

    [Fact]
    public async Task Confirmation_BySchedulerClassifies_RefusedForObservatoryAndUnknownLabel()
    {
        var (observatory, reader, unit, id) = await ArrangeAsync();
        await observatory.PostAsync($"/api/candidates/{id}/observations", Report(unit, "Ia"));
        Body Confirm(string label) => new(Bodies.Json(new JsonObject { ["label"] = label, ["reason"] = "spectrum inspected" }));

        Assert.Equal(HttpStatusCode.Forbidden, (await observatory.PostAsync($"/api/candidates/{id}/identification", Confirm("Ia").Content)).StatusCode);
        await Bodies.AssertProblemNamingAsync(await reader.PostAsync($"/api/candidates/{id}/identification", Confirm("Ia-ish").Content), 400, "label");
        var ok = await (await reader.PostAsync($"/api/candidates/{id}/identification", Confirm("Ia-91T-like").Content)).ReadObjectAsync();

        Assert.Equal("unsettled", (string)ok["from"]!);
        var detail = await (await reader.GetAsync($"/api/candidates/{id}")).ReadObjectAsync();
        Assert.Equal("classified", (string)detail["candidate"]!["state"]!);
        Assert.Equal("Ia-91T-like", (string)detail["candidate"]!["classifiedLabel"]!);
        Assert.Contains("confirmed: spectrum inspected", (string)detail["history"]!.AsArray().Last()!["detail"]!, StringComparison.Ordinal);
    }

    private sealed record Body(StringContent Content);

    [Fact]
    public async Task UnitAccuracy_CountsTrialsOfIdentifiedCandidates_FlagsAUnitFarBelowTheModel()
    {
        var (observatory, reader, unit, id) = await ArrangeAsync();
        // Ten answers "II" on a candidate the scheduler then confirms as Ia: ten trials, none correct.
        for (var i = 0; i < 10; i++)
        {
            Assert.True((await observatory.PostAsync($"/api/candidates/{id}/observations", Report(unit, "II"))).IsSuccessStatusCode);
        }

        Assert.True((await reader.PostAsync($"/api/candidates/{id}/identification", Bodies.Json(new JsonObject { ["label"] = "Ia" }))).IsSuccessStatusCode);

        var answer = await (await reader.GetAsync("/api/units/accuracy")).ReadObjectAsync();
        var row = answer["units"]!.AsArray().Single(u => (string)u!["spectrographId"]! == unit)!;

        // Model: C(Ia|Ia) = 0.8 at R = 100, S/N 10; E = 8, V = 10·0.8·0.2 = 1.6, z = (0 − 8)/√1.6 = −6.325.
        Assert.Equal(10, (int)row["trials"]!);
        Assert.Equal(0, (int)row["correct"]!);
        Assert.Equal(0.8, (double)row["modelledRecall"]!, 9);
        Assert.Equal(-8 / Math.Sqrt(1.6), (double)row["z"]!, 3);
        // Under the model the recall of these ten trials lies in (8 ± 1.96·√1.6)/10 = 0.552 … 1.048 → 1 (95 %).
        Assert.Equal((8 - 1.96 * Math.Sqrt(1.6)) / 10, (double)row["modelledLow"]!, 9);
        Assert.Equal(1, (double)row["modelledHigh"]!, 9);
        Assert.True((bool)row["flagged"]!);
        Assert.Contains("worse than modelled", (string)row["warning"]!, StringComparison.Ordinal);
        Assert.Equal(0, (double)row["measuredLow"]!, 9);
    }

    [Fact]
    public async Task UnitAccuracy_AgreeingTrials_NotFlagged()
    {
        var (observatory, reader, unit, id) = await ArrangeAsync();
        await observatory.PostAsync($"/api/candidates/{id}/observations", Report(unit, "Ia"));
        await observatory.PostAsync($"/api/candidates/{id}/observations", Report(unit, "Ia")); // identified (0.943)

        var answer = await (await reader.GetAsync("/api/units/accuracy")).ReadObjectAsync();
        var row = answer["units"]!.AsArray().Single(u => (string)u!["spectrographId"]! == unit)!;

        Assert.Equal(2, (int)row["trials"]!);
        Assert.Equal(1.0, (double)row["measuredRecall"]!, 9);
        Assert.False((bool)row["flagged"]!);
    }

    public static TheoryData<string, JsonObject?, double, double?, string> BadReports => new()
    {
        { "Ia-ish", null, 10, 0, "classifiedLabel" },
        { "Ibn", null, 10, 0, "classifiedLabel" },                                             // taxonomy label the calibration cannot weigh
        { "thermonuclear", null, 10, 0, "classifiedLabel" },                                   // not a broad class of this calibration
        { "Ia", new JsonObject { ["Ia"] = 0.5, ["II"] = 0.3 }, 10, 0, "classProbabilities" },   // sums to 0.8
        { "Ia", new JsonObject { ["Ia"] = 1.2, ["II"] = -0.2 }, 10, 0, "classProbabilities" },  // outside [0, 1]
        { "Ia", new JsonObject { ["Ia"] = 0.9, ["Ia-ish"] = 0.1 }, 10, 0, "classProbabilities" },
        { "Ia", null, 0, 0, "achievedSnr" },
        { "Ia", null, -3, 0, "achievedSnr" },
        { "Ia", null, 10, 5000, "phaseDays" },
    };

    [Theory]
    [MemberData(nameof(BadReports))]
    public async Task RefusedReport_400NamingTheField_NothingStored(string label, JsonObject? q, double snr, double? phase, string field)
    {
        var (observatory, reader, unit, id) = await ArrangeAsync();
        await (await observatory.PostAsync($"/api/candidates/{id}/observations", Report(unit, "II"))).ReadObjectAsync();
        var before = await StoredAsync(reader, id);

        var response = await observatory.PostAsync($"/api/candidates/{id}/observations", Report(unit, label, snr, q, phase));

        await Bodies.AssertProblemNamingAsync(response, 400, field);
        Assert.Equal(before, await StoredAsync(reader, id));
    }

    // What a report could change: state, label, update time, posterior, history, observations.
    private static async Task<string> StoredAsync(HttpClient reader, string id)
    {
        var d = await (await reader.GetAsync($"/api/candidates/{id}")).ReadObjectAsync();
        var c = d["candidate"]!;
        return new JsonArray(c["state"]!.DeepClone(), c["classifiedLabel"]?.DeepClone(), c["updatedUtc"]!.DeepClone(),
            d["posterior"]?.DeepClone(), d["history"]!.DeepClone(), d["observations"]!.DeepClone()).ToJsonString();
    }
}
