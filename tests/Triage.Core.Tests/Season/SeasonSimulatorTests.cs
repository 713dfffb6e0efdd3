using System.Text.Json;
using Triage.Core.Planning;
using Triage.Core.Roster;
using Triage.Core.Season;
using Triage.Core.Tests.Planning;

namespace Triage.Core.Tests.Season;

/// <summary>
/// Properties of a short simulated season on the demo roster and a small invented calibration:
/// reproducible from the seed, counts that add up, and one-shot strategies never spending high-R
/// time on an object a low-R spectrum left unsettled.
/// </summary>
public class SeasonSimulatorTests
{
    private static readonly Lazy<SeasonResult> Short = new(() => Run(seed: 3));

    internal static (IReadOnlyList<Site>, IReadOnlyList<Spectrograph>) DemoRoster()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (!File.Exists(Path.Combine(dir!.FullName, "Triage.sln")))
        {
            dir = dir.Parent;
        }

        return RosterJson.Parse(File.ReadAllText(Path.Combine(dir.FullName, "demo", "roster.json")));
    }

    private static SeasonResult Run(int seed, IReadOnlyDictionary<string, double>? degrade = null, double peaksPerDay = 3, int maxPool = 600, double? costCap = null)
    {
        var (sites, units) = DemoRoster();
        var surface = AccuracySurface.FromDocument(CalibrationFixtures.Document(withConfusions: true));
        var settings = new SeasonSettings
        {
            Nights = 3,
            Seed = seed,
            Sky = new SkySettings { PeaksPerDay = peaksPerDay },
            LocalSearchRounds = 200,
            MaxPoolCandidates = maxPool,
            TruthDegradation = degrade ?? new Dictionary<string, double>(),
            NetworkCostCap = costCap,
        };
        return SeasonSimulator.Run(sites, units, surface, surface, settings);
    }

    [Fact]
    public void Run_SameSeed_SameSeason()
    {
        var again = Run(seed: 3);

        Assert.Equal(JsonSerializer.Serialize(Short.Value), JsonSerializer.Serialize(again));
    }

    [Fact]
    public void Run_CountsAddUp()
    {
        var season = Short.Value;

        Assert.Equal(5, season.Strategies.Count);
        Assert.True(season.Discovered > 0);
        foreach (var s in season.Strategies)
        {
            Assert.True(s.CorrectIdentifications + s.WrongIdentifications <= s.Observations, s.Name);
            Assert.Equal(s.CorrectIdentifications, s.CumulativeCorrectByNight[^1]);
            // Both are rounded to 0.001 h per entry.
            Assert.Equal(s.HoursPerUnit.Values.Sum(), s.HoursPerUnitByNight.Values.Sum(v => v.Sum()), 1);
            Assert.Equal(s.HighResolutionHours, s.HighResolutionHoursBySettledness.Sum(h => h.Hours), 2);
            Assert.True(s.HighResolutionHours <= s.HoursPerUnit.Values.Sum() + 1e-9, s.Name);
            Assert.True(s.Observations > 0, s.Name);

            // Load: one record per night; what is worth observing is part of the pool; the capacity is the
            // roster's budgets cut to the dark window (37 h of budgets, December nights of 7–10 h at these sites).
            Assert.Equal(season.Nights, s.LoadByNight.Count);
            foreach (var load in s.LoadByNight)
            {
                Assert.InRange(load.WorthObserving, 0, load.Pool);
                Assert.InRange(load.CapacityHours, 20, 37);
            }

            // Executed hours are planned hours minus weather losses.
            foreach (var (unit, hours) in s.HoursPerUnitByNight)
            {
                Assert.True(hours.Sum() <= s.PlannedHoursByNight[unit].Sum() + 0.01, unit);
            }
        }
    }

    [Fact]
    public void Run_SequentialFinalLabels_AreIdentificationsAtConfidencePlusClosedLabels()
    {
        foreach (var s in Short.Value.Strategies.Where(s => s.IdentifiedAtConfidence is not null))
        {
            var closed = s.ClosedWithBestLabel!;
            Assert.Equal(s.CorrectIdentifications, s.IdentifiedAtConfidence!.Correct + closed.Correct);
            Assert.Equal(s.WrongIdentifications, s.IdentifiedAtConfidence.Wrong + closed.Wrong);
            // At τ the top probability is at least 0.9; a closed label's is below it and at least 1/K.
            if (s.IdentifiedAtConfidence.Correct + s.IdentifiedAtConfidence.Wrong > 0)
            {
                Assert.InRange(s.IdentifiedAtConfidence.MeanProbability, 0.9 - 1e-9, 1);
            }

            if (closed.Correct + closed.Wrong > 0)
            {
                Assert.InRange(closed.MeanProbability, 1.0 / 3, 0.9);
            }
        }
    }

    [Fact]
    public void Summary_ComparesFinalLabelsAndIdentificationsAtConfidence()
    {
        var season = Short.Value;
        var summary = SeasonSummary.Of([season]);
        var escalation = season.Strategies.First(s => s.Name == "triage-with-escalation");
        var rule = season.Strategies.First(s => s.Name == "rule-brightest-first-largest-telescope");

        var final = summary.Comparisons.Single(c => c.Against == rule.Name && c.Count == SeasonSummary.FinalLabels);
        var atTau = summary.Comparisons.Single(c => c.Against == rule.Name && c.Count == SeasonSummary.AtConfidence);
        Assert.Equal(escalation.CorrectIdentifications - rule.CorrectIdentifications, final.Difference.Mean);
        Assert.Equal(escalation.IdentifiedAtConfidence!.Correct - rule.CorrectIdentifications, atTau.Difference.Mean);
    }

    [Fact]
    public void Run_BoundedPool_PlansAtMostTheCapPerNight()
    {
        // 60 peaks a day keep hundreds of candidates in the pool; with a cap of 4 no strategy takes more than
        // 4 spectra a night (one per candidate and night).
        var season = Run(seed: 5, peaksPerDay: 60, maxPool: 4);

        foreach (var s in season.Strategies)
        {
            Assert.True(s.LoadByNight.All(l => l.Pool > 4), s.Name);
            Assert.InRange(s.Observations + s.WeatherLosses, 1, 4 * season.Nights);
        }
    }

    [Fact]
    public void Run_NetworkCostCap_NoStrategyPlansMoreThanTheCapInANight()
    {
        var (_, units) = DemoRoster();
        var costPerHour = units.ToDictionary(u => u.Name, u => u.CostPerHour);
        double[] SpendByNight(StrategyResult s) => Enumerable.Range(0, s.LoadByNight.Count)
            .Select(n => s.PlannedHoursByNight.Sum(h => h.Value[n] * costPerHour[h.Key])).ToArray();
        const double cap = 400;

        var capped = Run(seed: 3, costCap: cap);

        // The premise: without the cap every strategy spends more than that on some night.
        Assert.All(Short.Value.Strategies, s => Assert.True(SpendByNight(s).Max() > cap, s.Name));
        foreach (var s in capped.Strategies)
        {
            // Planned hours are rounded to 1e-4 h per unit and night: at most 6 × 0.5e-4 h × 600 per hour = 0.18 off.
            Assert.All(SpendByNight(s), spend => Assert.InRange(spend, 0, cap + 0.2));
            Assert.True(s.Observations > 0, s.Name);
        }
    }

    [Fact]
    public void Run_NegativeNetworkCostCap_IsRefused()
    {
        var ex = Assert.Throws<ArgumentException>(() => Run(seed: 3, costCap: -1));

        Assert.Contains("NetworkCostCap", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void SurveyRate_AtTheDefaultLimit_MatchesTheHandComputation()
    {
        // d = 10^((19.5 + 19.3 − 25)/5) = 575.44 Mpc; (4π/3) d³ = 7.981e8 Mpc³; × 3.0e-5 / 365.25 = 65.557 Ia per day;
        // / 0.72 = 91.05 per day over the sky; × (sin 55° + sin 75°)/2 = 0.8925 → 81.27 per day (python3, math module).
        Assert.Equal(81.267016, SkySettings.SurveyRatePerDay(19.5), 5);
        Assert.Equal(81, new SkySettings().PeaksPerDay);
        // Euclidean counts: one magnitude deeper multiplies the rate by 10^0.6.
        Assert.Equal(Math.Pow(10, 0.6), SkySettings.SurveyRatePerDay(20.5) / SkySettings.SurveyRatePerDay(19.5), 9);
    }

    [Fact]
    public void Run_OneShotStrategies_NeverEscalate()
    {
        foreach (var s in Short.Value.Strategies.Where(s => !s.Name.StartsWith("triage-sequential", StringComparison.Ordinal) && s.Name != "triage-with-escalation"))
        {
            Assert.Equal(0, s.HighResolutionHoursOnAmbiguous);
            Assert.Empty(s.UnitAccuracy);
        }
    }

    [Fact]
    public void Run_DifferentSeed_DifferentSky()
    {
        var other = Run(seed: 4);

        Assert.NotEqual(JsonSerializer.Serialize(Short.Value.Strategies), JsonSerializer.Serialize(other.Strategies));
    }
}
