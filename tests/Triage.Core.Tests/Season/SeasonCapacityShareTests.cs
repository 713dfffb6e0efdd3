using Triage.Core.Season;

namespace Triage.Core.Tests.Season;

/// <summary>
/// The capacity share q of docs/sequential-triage.md §5: q(d+1) = min(1, H_high / (t_high (U + f N_new))), where U
/// counts the unsettled candidates that can still take a follow-up. A candidate that has left the pool for good
/// (past 60 rest days) can never take one, so it is no demand on the high-R units.
/// </summary>
public class SeasonCapacityShareTests
{
    [Fact]
    public void Run_UnsettledCandidatesThatLeftThePool_AreNoDemandOnTheHighResolutionUnits()
    {
        var (sites, units) = SeasonSimulatorTests.DemoRoster();
        // Half an hour a night on each high-R unit (R ≥ 1000): H_high = 1.5 h, so a demand of a few dozen follow-ups
        // would hold q far below 1.
        units = units.Select(u => u.ResolvingPower >= 1000 ? u with { NightlyBudgetHours = 0.5 } : u).ToList();
        var surface = SeasonClosingTests.Uninformative();
        // 120 transients at 59.5 rest days on the first evening, spread over 60° of RA: in the pool on night 1 only
        // (60.5 d by the evening of night 2). Through an uninformative channel every spectrum leaves its candidate unsettled.
        var sky = Enumerable.Range(0, 120)
            .Select(i => SeasonClosingTests.Crafted(i, i % 3, 59.5, [0.6, 0.2, 0.2], raDeg: 40 + i * 0.5))
            .ToList();
        var settings = new SeasonSettings
        {
            Nights = 3,
            Seed = 11,
            ClearFraction = 1,
            LearnUnitAccuracy = false,
            LocalSearchRounds = 50,
            // The accuracy objective values an uninformative spectrum at 1/3, so the candidates are observed.
            Strategies = [SeasonStrategy.TriageSequentialAccuracyObjective],
        };

        var run = SeasonSimulator.RunOnSky(sites, units, surface, surface, settings, sky).Strategies[0];

        // The premise: night 1 left dozens of candidates unsettled, and all of them were closed when they left on night 2.
        Assert.InRange(run.Observations, 30, 120);
        Assert.Equal(run.Observations, run.ClosedWithBestLabel!.Correct + run.ClosedWithBestLabel.Wrong);
        Assert.Equal(new LabelCount(0, 0, double.NaN), run.ClosedAtSeasonEnd);
        // Night 1 plans with the starting q = 0.5.
        Assert.Equal(0.5, run.CapacityShareByNight[0]);
        // From night 3 on nothing is left to follow up and the pool of night 2 was empty: no demand, so q = 1 (the
        // high-R units can take every unsettled result). Counting the departed candidates as demand would give
        // 1.5 h / (t_high · 30 or more) ≪ 1.
        Assert.Equal(1, run.CapacityShareByNight[2]);
    }
}
