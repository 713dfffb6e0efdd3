using Triage.Core.Planning;
using Triage.Core.Sky;

namespace Triage.Core.Tests.Planning;

/// <summary>Closures and replanning in the problem builder and the replan split.</summary>
public class NightOperationsBuildTests
{
    private static readonly DateOnly Night = new(2030, 3, 14);

    private static LinearTargetForecast Target(string id, double ra, double dec, double mag) => new(id, new SkyTarget(ra, dec), 1,
        new Dictionary<string, double> { ["Ia"] = 0.6, ["Ic"] = 0.3, ["II"] = 0.1 },
        new DateTimeOffset(2030, 3, 15, 6, 0, 0, TimeSpan.Zero), mag, 0.05, 0.1, new DateTimeOffset(2030, 3, 12, 0, 0, 0, TimeSpan.Zero), 2);

    private static PlanningNight Build(NightBuildSettings settings) => NightProblemBuilder.Build(
        [NightProblemBuilderTests.Site], [NightProblemBuilderTests.Unit],
        [Target("too-faint", 180, 30, 27), Target("good", 180, 30, 17)],
        AccuracySurface.FromDocument(CalibrationFixtures.Document()), Night, new DateTimeOffset(2030, 3, 14, 12, 0, 0, TimeSpan.Zero), settings);

    [Fact]
    public void Closure_CutsEveryOptionWindowOutOfTheClosedSpan()
    {
        var dark = NightModel.For(NightProblemBuilderTests.Site, Night).DarkWindow.Window!.Value;
        var from = dark.StartUtc.AddHours(2);
        var to = dark.StartUtc.AddHours(4);
        var night = Build(new NightBuildSettings { Closures = [new UnitClosure(NightProblemBuilderTests.Site.Id, null, from, to)] });

        var options = night.Problem.Options.Where(o => o.Candidate == 1).ToList();
        Assert.NotEmpty(options);
        Assert.Contains(options, o => night.Problem.EpochUtc.AddSeconds(o.Window.ToSeconds) <= from);
        Assert.Contains(options, o => night.Problem.EpochUtc.AddSeconds(o.Window.FromSeconds) >= to);
        Assert.All(options, o =>
        {
            var start = night.Problem.EpochUtc.AddSeconds(o.Window.FromSeconds);
            var end = night.Problem.EpochUtc.AddSeconds(o.Window.ToSeconds);
            Assert.False(start < to && from < end, $"option {start:HH:mm}–{end:HH:mm} overlaps the closure");
        });
    }

    [Fact]
    public void Standing_WindowTooShort_IsNotCalledTooFaint()
    {
        // Everything closed but four minutes: shorter than the unit's 300 s overhead, so nothing fits; the bright
        // target is "window too short", the 27 mag one stays "too faint" (unreachable even in two hours).
        var dark = NightModel.For(NightProblemBuilderTests.Site, Night).DarkWindow.Window!.Value;
        var closure = new UnitClosure(NightProblemBuilderTests.Site.Id, NightProblemBuilderTests.Unit.Id, dark.StartUtc, dark.EndUtc.AddMinutes(-6));
        var night = Build(new NightBuildSettings { Closures = [closure] });

        Assert.Equal([CandidateStanding.TooFaint, CandidateStanding.WindowTooShort], night.Problem.Candidates.Select(c => c.Standing));
    }

    [Fact]
    public void Epoch_IsTheNightsFirstDarkStart_EvenWhenPlanningLater()
    {
        var dark = NightModel.For(NightProblemBuilderTests.Site, Night).DarkWindow.Window!.Value;
        var later = NightProblemBuilder.Build([NightProblemBuilderTests.Site], [NightProblemBuilderTests.Unit], [Target("good", 180, 30, 17)],
            AccuracySurface.FromDocument(CalibrationFixtures.Document()), Night, dark.StartUtc.AddHours(3));

        Assert.Equal(dark.StartUtc, later.Problem.EpochUtc);
        Assert.All(later.Problem.Options, o => Assert.True(later.Problem.EpochUtc.AddSeconds(o.Window.FromSeconds) >= dark.StartUtc.AddHours(3)));
    }

    private static QueueEntry Entry(string id, DateTimeOffset start, double minutes) =>
        new(id, start, start.AddMinutes(minutes), minutes * 50, 1.2, 18, 20, 0.8, 0.5, 0.8, "r", [], null, 0);

    [Fact]
    public void Split_KeepsWorkUnderWayOrAboutToStart_AnchorsLaterWork_AndLeavesHistory()
    {
        var t = new DateTimeOffset(2030, 3, 15, 2, 0, 0, TimeSpan.Zero);
        var unit = Guid.NewGuid().ToString();
        var plan = new NightPlan("a", PlanObjective.Accuracy,
            [new SpectrographQueue(unit, "u", "s", 1000, 36000, 0, 0, null,
                [Entry("over", t.AddMinutes(-60), 30), Entry("running", t.AddMinutes(-10), 30), Entry("soon", t.AddMinutes(3), 20), Entry("later", t.AddMinutes(40), 20)])],
            [], new PlanSummary(4, 4, 3, 2, 3, null, null, PlanStatus.Feasible, 0, 0, 0), []);

        var split = NightReplan.Split(plan, t, NightReplan.DefaultFreeze);

        Assert.Equal(["running", "soon"], split.Kept.Select(k => k.Entry.CandidateId));
        Assert.Equal(["later"], split.Anchors.Select(a => a.CandidateId));
        Assert.Equal(t.AddMinutes(23), split.BusyUntilUtc[Guid.Parse(unit)]);

        // Churn counts only what was still ahead: "over" is history, not a removal.
        var next = plan with { Spectrographs = [plan.Spectrographs[0] with { Queue = [Entry("running", t.AddMinutes(-10), 30), Entry("soon", t.AddMinutes(3), 20), Entry("new", t.AddMinutes(40), 20)] }] };
        var (changes, churn) = PlanChurn.Between(plan, next, t);
        Assert.Equal(3, churn.ComparedEntries);
        Assert.Equal((0, 0, 1, 1), (churn.Moved, churn.Retimed, churn.Added, churn.Removed));
        Assert.Equal(2.0 / 3.0, churn.Share, 12);
        Assert.DoesNotContain(changes, c => c.CandidateId == "over");
    }
}

/// <summary>The demo scenario moved to another night.</summary>
public class DemoShiftTests
{
    private const string Batch = """
        {"candidates":[{"id":"X1","raDeg":359.5,"decDeg":-20,"discoveredUtc":"2026-11-20T01:00:00+00:00",
          "photometry":[{"timeUtc":"2026-11-21T02:30:00.5+00:00","band":"g","magAb":19.1,"magAbError":0.05},
                        {"mjd":61366.125,"band":"r","fluxMicroJy":40.0,"fluxMicroJyError":2.0}]}]}
        """;

    [Fact]
    public void Shift_MovesEveryTimeByWholeDays_AndRightAscensionByTheSunsMeanMotion()
    {
        var shifted = System.Text.Json.Nodes.JsonNode.Parse(Triage.Core.Candidates.DemoShift.Shift(Batch, new DateOnly(2026, 12, 12)))!["candidates"]![0]!;

        Assert.Equal(new DateTimeOffset(2026, 11, 30, 1, 0, 0, TimeSpan.Zero), DateTimeOffset.Parse((string)shifted["discoveredUtc"]!, System.Globalization.CultureInfo.InvariantCulture));
        Assert.Equal(new DateTimeOffset(2026, 12, 1, 2, 30, 0, 500, TimeSpan.Zero), DateTimeOffset.Parse((string)shifted["photometry"]![0]!["timeUtc"]!, System.Globalization.CultureInfo.InvariantCulture));
        // A point stamped in MJD moves by the same 10 days (it did not move at all before).
        Assert.Equal(61376.125, (double)shifted["photometry"]![1]!["mjd"]!, 9);
        // 10 days × 0.98564736°/day (Meeus ch. 25, the Sun's mean motion) from 359.5°, wrapped: 9.35647°.
        Assert.Equal(9.35647, (double)shifted["raDeg"]!, 5);
        Assert.Equal(-20, (double)shifted["decDeg"]!);
    }

    [Fact]
    public void Shift_OfTheDemoBatch_KeepsEveryPointAtItsPlaceInItsLightCurve()
    {
        var json = File.ReadAllText(Path.Combine(Triage.Core.Tests.Spectra.TaxonomyTests.RepoRoot(), "demo", "candidates.json"));
        var before = Times(System.Text.Json.Nodes.JsonNode.Parse(json)!);
        var after = Times(System.Text.Json.Nodes.JsonNode.Parse(Triage.Core.Candidates.DemoShift.Shift(json, new DateOnly(2027, 2, 14)))!);
        var days = new DateOnly(2027, 2, 14).DayNumber - Triage.Core.Candidates.DemoShift.ScenarioNight.DayNumber;

        Assert.Equal(before.Count, after.Count);
        Assert.Contains(before, t => t.Mjd); // the file mixes both forms
        Assert.Contains(before, t => !t.Mjd);
        Assert.All(before.Zip(after), pair => Assert.Equal(days, pair.Second.Day - pair.First.Day, 6));
    }

    private static List<(double Day, bool Mjd)> Times(System.Text.Json.Nodes.JsonNode root) => root["candidates"]!.AsArray()
        .SelectMany(c => c!["photometry"]!.AsArray())
        .Select(p => p!["mjd"] is { } mjd
            ? ((double)mjd, true)
            : (Triage.Core.LightCurves.ModifiedJulianDate.FromUtc(DateTimeOffset.Parse((string)p["timeUtc"]!, System.Globalization.CultureInfo.InvariantCulture)), false))
        .ToList();

    [Fact]
    public void Tonight_IsTheUtcDateTwelveHoursAgo()
    {
        Assert.True(Triage.Core.Candidates.DemoShift.TryParseNight("tonight", new DateTimeOffset(2027, 3, 5, 6, 0, 0, TimeSpan.Zero), out var night));
        Assert.Equal(new DateOnly(2027, 3, 4), night);
        Assert.Equal(Batch, Triage.Core.Candidates.DemoShift.Shift(Batch, Triage.Core.Candidates.DemoShift.ScenarioNight));
    }
}
