using Triage.Core.Calibration;
using Triage.Core.Planning;
using Triage.Core.Season;
using Triage.Core.Sky;
using Triage.Core.Tests.Planning;

namespace Triage.Core.Tests.Season;

/// <summary>
/// The closing rule of docs/sequential-triage.md §5 "Final labels" on a crafted sky of five transients and an
/// uninformative calibration: every confusion row is uniform, so a spectrum leaves the posterior equal to the
/// broker prior (Bayes' rule with a constant likelihood) and no candidate can reach τ = 0.9. Each observed
/// candidate is therefore closed with its prior's most probable subtype, which the test knows in advance.
/// </summary>
public class SeasonClosingTests
{
    private static readonly DateOnly FirstNight = new(2026, 12, 2);
    private static readonly DateTimeOffset SeasonStart = new(2026, 12, 2, 12, 0, 0, TimeSpan.Zero);

    /// <summary>The fixture's grid with recall 1/3 and every confusion row uniform (40 spectra per answer).</summary>
    internal static AccuracySurface Uninformative()
    {
        var subtypes = CalibrationFixtures.Subtypes;
        var cells = new List<CalibrationCell>();
        var confusions = new List<ConfusionMatrix>();
        foreach (var r in CalibrationFixtures.Resolutions)
        {
            foreach (var snr in CalibrationFixtures.SnrLevels)
            {
                foreach (var bin in CalibrationFixtures.Bins)
                {
                    cells.AddRange(subtypes.Select(s => new CalibrationCell(s, r, snr, bin.Name, 1.0 / 3, 0.2, 0.45, 1.0 / 3, 120, 30)));
                    confusions.Add(new ConfusionMatrix(r, snr, bin.Name, subtypes,
                        subtypes.Select(_ => (IReadOnlyList<int>)[40, 40, 40]).ToList()));
                }
            }
        }

        var document = new AccuracyModelDocument("per resolution element", 6000, subtypes, CalibrationFixtures.Resolutions,
            CalibrationFixtures.SnrLevels, CalibrationFixtures.Bins, cells, confusions);
        return AccuracySurface.FromDocument(document, new AccuracySurfaceOptions { Recall = RecallEstimate.Point });
    }

    /// <summary>
    /// A transient at RA 70°, Dec −25° (high in the December night sky of the two southern demo sites), z = 0.01,
    /// peak 15 mag declining 0.01 mag/day (15.6 mag at 60 d, far above m_lim + 1 = 20.5), discovered 80 days
    /// before the season: whether it is in the pool is decided by its phase alone.
    /// </summary>
    internal static Transient Crafted(int index, int subtype, double phaseAtSeasonStart, double[] broker, double raDeg = 70) =>
        new(index, $"crafted-{index}", new SkyTarget(raDeg, -25), subtype, 0.01,
            SeasonStart.AddDays(-phaseAtSeasonStart * 1.01), 15, 15, 0.01, SeasonStart.AddDays(-80), broker, 0, 0);

    private static SeasonResult Run()
    {
        var (sites, units) = SeasonSimulatorTests.DemoRoster();
        var surface = Uninformative();
        // Indices in the fixture's order: 0 = Ia, 1 = Ic, 2 = II.
        IReadOnlyList<Transient> sky =
        [
            // Observed on night 1, past 60 rest days by the evening of night 2: closed then, true Ia, best Ia (0.8): correct.
            Crafted(0, 0, 59.5, [0.8, 0.1, 0.1]),
            // The same, but truly Ic: closed on night 2 with Ia (0.8): wrong.
            Crafted(1, 1, 59.5, [0.8, 0.1, 0.1], raDeg: 72),
            // Stays in the pool all season: closed at the end (night 3), best Ia (0.7), true Ia: correct.
            Crafted(2, 0, 10, [0.7, 0.2, 0.1], raDeg: 74),
            // Already past 60 rest days on the first evening: never observed, never labelled.
            Crafted(3, 0, 61, [0.8, 0.1, 0.1], raDeg: 76),
            // Discovered after the season: never in the pool, never labelled.
            Crafted(4, 0, 10, [0.8, 0.1, 0.1], raDeg: 78) with { DiscoveredUtc = SeasonStart.AddDays(10) },
        ];
        var settings = new SeasonSettings
        {
            Nights = 3,
            FirstNight = FirstNight,
            Seed = 7,
            ClearFraction = 1,
            LearnUnitAccuracy = false,
            LocalSearchRounds = 50,
            // The accuracy objective values an uninformative spectrum at its expected accuracy (1/3), so the
            // candidates are observed; the identification objective would value them at 0 (τ is out of reach).
            Strategies = [SeasonStrategy.TriageSequentialAccuracyObjective, SeasonStrategy.TriageWithoutEscalation],
        };
        return SeasonSimulator.RunOnSky(sites, units, surface, surface, settings, sky);
    }

    [Fact]
    public void Run_UnsettledCandidateLeavingThePool_IsClosedWithItsMostProbableSubtype()
    {
        var sequential = Run().Strategies[0];

        // Nothing can reach τ = 0.9 through an uninformative channel.
        Assert.Equal(new LabelCount(0, 0, double.NaN), sequential.IdentifiedAtConfidence);
        // Closed: transients 0 and 2 correctly (Ia), transient 1 wrongly (Ia for an Ic); mean probability (0.8 + 0.8 + 0.7)/3.
        var closed = sequential.ClosedWithBestLabel!;
        Assert.Equal(2, closed.Correct);
        Assert.Equal(1, closed.Wrong);
        Assert.Equal((0.8 + 0.8 + 0.7) / 3, closed.MeanProbability, 4);
        // Of these, transient 2 alone was closed at the end of the season.
        Assert.Equal(new LabelCount(1, 0, 0.7), sequential.ClosedAtSeasonEnd);
        // Final labels count both kinds; transients 3 and 4 (no spectrum) get none.
        Assert.Equal(2, sequential.CorrectIdentifications);
        Assert.Equal(1, sequential.WrongIdentifications);
        // Transient 0 is counted on the night it left (night 2), transient 2 on the last night.
        Assert.Equal([0, 1, 2], sequential.CumulativeCorrectByNight);
        // Days to a correct final label: 1 (closed on the evening of night 2), 3 (the evening after night 3); median = upper middle.
        Assert.Equal(3, sequential.MedianDaysToIdentification, 9);
    }

    [Fact]
    public void Run_OneShotStrategy_ReportsNoSplitOfItsLabels()
    {
        var oneShot = Run().Strategies[1];

        Assert.Equal("triage-without-escalation", oneShot.Name);
        Assert.Null(oneShot.IdentifiedAtConfidence);
        Assert.Null(oneShot.ClosedWithBestLabel);
        Assert.Null(oneShot.ClosedAtSeasonEnd);
        // Its reported labels are final at once: at most one per observed transient (0, 1, 2).
        Assert.InRange(oneShot.CorrectIdentifications + oneShot.WrongIdentifications, 1, 3);
    }

    [Fact]
    public void Summary_SplitsTheLabelsOfSequentialStrategiesOnly()
    {
        var season = Run();
        var summary = SeasonSummary.Of([season]);

        var sequential = summary.Strategies[0];
        Assert.Equal(2, sequential.ClosedWithBestLabel!.Correct.Mean);
        Assert.Equal(0, sequential.IdentifiedAtConfidence!.Correct.Mean);
        Assert.Null(summary.Strategies[1].ClosedWithBestLabel);
    }
}
