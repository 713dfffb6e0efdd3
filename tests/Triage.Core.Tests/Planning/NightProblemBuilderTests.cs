using Triage.Core.Planning;
using Triage.Core.Roster;
using Triage.Core.Sky;

namespace Triage.Core.Tests.Planning;

public class NightProblemBuilderTests
{
    // Invented site and spectrograph (demo numbers, not a real facility).
    internal static readonly Site Site = new(Guid.Parse("00000000-0000-0000-0000-00000000a001"), "Mesa Test", 30, -110, 2000,
        30, 45, 20, 1.0, 21.5, 6000, 0.12, SiteStatus.Open);

    internal static readonly Spectrograph Unit = new(Guid.Parse("00000000-0000-0000-0000-00000000b001"), Site.Id, "Test-1000", 1000, 6000,
        4000, 9000, 2.0, 0.1, 0.25, 4, 0.001, 2.5, 0.4, 1.5, 300, 1800, 2.0, 100, 8, SpectrographStatus.Available);

    private static readonly DateOnly Night = new(2030, 3, 14);

    private static LinearTargetForecast Target(string id, double ra, double dec, double mag) => new(id, new SkyTarget(ra, dec), 1,
        new Dictionary<string, double> { ["Ia"] = 0.6, ["Ic"] = 0.3, ["II"] = 0.1 },
        new DateTimeOffset(2030, 3, 15, 6, 0, 0, TimeSpan.Zero), mag, 0.05, 0.1, new DateTimeOffset(2030, 3, 12, 0, 0, 0, TimeSpan.Zero), 2);

    private static PlanningNight Build() => NightProblemBuilder.Build([Site], [Unit],
        [Target("never-up", 10, -85, 17), Target("too-faint", 180, 30, 27), Target("good", 180, 30, 17), Target("sets-early", 150, 20, 17)],
        AccuracySurface.FromDocument(CalibrationFixtures.Document()), Night, new DateTimeOffset(2030, 3, 14, 12, 0, 0, TimeSpan.Zero));

    [Fact]
    public void Build_FourTargets_ClassifiesWhyEachCanOrCannotBePlanned()
    {
        var night = Build();

        Assert.Equal(
            [CandidateStanding.NeverVisible, CandidateStanding.TooFaint, CandidateStanding.Plannable, CandidateStanding.Plannable],
            night.Problem.Candidates.Select(c => c.Standing));
    }

    [Fact]
    public void Build_VisibleTarget_OptionsLieInsideTheDarkWindowWithIncreasingLevels()
    {
        var night = Build();
        var dark = NightModel.For(Site, Night).DarkWindow.Window!.Value;

        var options = night.Problem.Options.Where(o => o.Candidate == 2).ToList();

        Assert.NotEmpty(options);
        foreach (var option in options)
        {
            Assert.True(night.Problem.EpochUtc.AddSeconds(option.Window.FromSeconds) >= dark.StartUtc);
            Assert.True(night.Problem.EpochUtc.AddSeconds(option.Window.ToSeconds) <= dark.EndUtc);
            Assert.Equal(option.Levels.OrderBy(l => l.Snr).Select(l => l.DurationSeconds).Order(), option.Levels.OrderBy(l => l.Snr).Select(l => l.DurationSeconds));
            Assert.All(option.Levels, l => Assert.InRange(l.ExpectedAccuracy, 0, 1));
            Assert.All(option.Levels, l => Assert.True(l.DurationSeconds >= l.ExposureSeconds + Unit.OverheadSeconds - 1e-9));
        }
    }

    [Fact]
    public void Build_ExposureLevels_AreTheCalibrationsNumericSnrLevelsOnly()
    {
        // The fixture also holds native (noiseless) cells; they have no single S/N, so no option may plan
        // "S/N 100" (or any level the calibration did not measure) and no explanation can quote one.
        var night = Build();

        var levels = night.Problem.Options.SelectMany(o => o.Levels).Select(l => l.Snr).Distinct().Order().ToArray();

        Assert.NotEmpty(levels);
        Assert.All(levels, snr => Assert.Contains(snr, new[] { 5.0, 20.0 }));
    }

    [Fact]
    public void SafetyViolations_EntryInsideItsWindow_IsKept()
    {
        var night = Build();
        var o = night.Problem.Options.Select((x, i) => (x, i)).First(t => t.x.Candidate == 2);

        var violations = night.SafetyViolations([new PlannedObservation(o.i, 0, o.x.Window.FromSeconds)]);

        Assert.Empty(violations);
    }

    [Fact]
    public void SafetyViolations_EntryMovedIntoDaylight_IsRejectedWithTheReason()
    {
        var night = Build();
        var o = night.Problem.Options.Select((x, i) => (x, i)).First(t => t.x.Candidate == 2);

        var violations = night.SafetyViolations([new PlannedObservation(o.i, 0, o.x.Window.FromSeconds - 6 * 3600)]);

        Assert.Contains("dark window", Assert.Single(violations).Value);
    }

    [Fact]
    public void SafetyViolations_EntryAfterTheTargetSets_IsRejected()
    {
        var night = Build();
        var o = night.Problem.Options.Select((x, i) => (x, i)).Where(t => t.x.Candidate == 3).MaxBy(t => t.x.Window.ToSeconds);
        var dark = night.Problem.Units[o.x.Unit].Available;

        // Start one hour after its visibility ends, still inside the dark window: only the altitude limit is broken.
        var start = o.x.Window.ToSeconds + 3600;
        Assert.True(start + o.x.Levels[0].DurationSeconds < dark.ToSeconds, "the fixture must set well before dawn");
        var violations = night.SafetyViolations([new PlannedObservation(o.i, 0, start)]);

        Assert.Contains("altitude", Assert.Single(violations).Value);
    }

    [Fact]
    public void Build_AfterTheNightEnds_HasNoUnits()
    {
        var night = NightProblemBuilder.Build([Site], [Unit], [Target("good", 180, 30, 17)],
            AccuracySurface.FromDocument(CalibrationFixtures.Document()), Night, new DateTimeOffset(2030, 3, 16, 0, 0, 0, TimeSpan.Zero));

        Assert.Empty(night.Problem.Units);
        Assert.Equal(CandidateStanding.NeverVisible, Assert.Single(night.Problem.Candidates).Standing);
    }
}
