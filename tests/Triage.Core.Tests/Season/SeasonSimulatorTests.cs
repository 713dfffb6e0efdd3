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

    private static (IReadOnlyList<Site>, IReadOnlyList<Spectrograph>) DemoRoster()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (!File.Exists(Path.Combine(dir!.FullName, "Triage.sln")))
        {
            dir = dir.Parent;
        }

        return RosterJson.Parse(File.ReadAllText(Path.Combine(dir.FullName, "demo", "roster.json")));
    }

    private static SeasonResult Run(int seed, IReadOnlyDictionary<string, double>? degrade = null)
    {
        var (sites, units) = DemoRoster();
        var surface = AccuracySurface.FromDocument(CalibrationFixtures.Document(withConfusions: true));
        var settings = new SeasonSettings
        {
            Nights = 3,
            Seed = seed,
            Sky = new SkySettings { PeaksPerDay = 3 },
            LocalSearchRounds = 200,
            TruthDegradation = degrade ?? new Dictionary<string, double>(),
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
        }
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
