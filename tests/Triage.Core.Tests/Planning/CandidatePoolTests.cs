using Triage.Core.Planning;
using Triage.Core.Roster;
using Triage.Core.Sky;

namespace Triage.Core.Tests.Planning;

public class CandidatePoolTests
{
    private static readonly DateOnly Night = new(2030, 3, 14);
    private static readonly DateTimeOffset Noon = new(2030, 3, 14, 12, 0, 0, TimeSpan.Zero);
    private static readonly DateTimeOffset Reference = new(2030, 3, 15, 6, 0, 0, TimeSpan.Zero);
    private static readonly AccuracySurface Surface = AccuracySurface.FromDocument(CalibrationFixtures.Document());

    // A second invented site far south, so positions can be visible from one site and not the other.
    private static readonly Site South = NightProblemBuilderTests.Site with { Id = Guid.Parse("00000000-0000-0000-0000-00000000a002"), Name = "South Test", LatitudeDeg = -35, LongitudeDeg = 20 };

    private static readonly Spectrograph SouthUnit = NightProblemBuilderTests.Unit with
    {
        Id = Guid.Parse("00000000-0000-0000-0000-00000000b002"), SiteId = South.Id, Name = "South-300", ResolvingPower = 300, ApertureM = 1.0,
    };

    private static readonly Site[] Sites = [NightProblemBuilderTests.Site, South];
    private static readonly Spectrograph[] Units = [NightProblemBuilderTests.Unit, SouthUnit];

    /// <summary>Random positions over the sphere (uniform in sin δ), magnitudes 14–24 and weights 0.5–3, fixed seed.</summary>
    private static List<(LinearTargetForecast Forecast, PoolCandidate Pool)> Scatter(int count, int seed)
    {
        var rng = new Random(seed);
        var list = new List<(LinearTargetForecast, PoolCandidate)>();
        for (var i = 0; i < count; i++)
        {
            var ra = 360 * rng.NextDouble();
            var dec = Math.Asin(2 * rng.NextDouble() - 1) * 180 / Math.PI;
            var mag = 14 + 10 * rng.NextDouble();
            var weight = 0.5 + 2.5 * rng.NextDouble();
            var id = $"c{i:D4}";
            var forecast = new LinearTargetForecast(id, new SkyTarget(ra, dec), weight,
                new Dictionary<string, double> { ["Ia"] = 0.6, ["Ic"] = 0.3, ["II"] = 0.1 }, Reference, mag, 0, 0.1, Reference.AddDays(-2), 2);
            list.Add((forecast, new PoolCandidate(id, ra, dec, weight, mag)));
        }
        return list;
    }

    [Theory]
    [InlineData(PlanObjective.Accuracy)]
    [InlineData(PlanObjective.Information)]
    public void UpperBoundsPerHour_EveryOptionTheBuilderMakes_EarnsNoMorePerHour(PlanObjective objective)
    {
        // Oracle: the full problem builder (exact visibility windows, exposure at the chunk's worst
        // airmass with moonlight, value from the surface at the phase belief) against the bound.
        var scatter = Scatter(400, 11);
        var built = NightProblemBuilder.Build(Sites, Units, scatter.Select(s => (ITargetForecast)s.Forecast).ToList(), Surface, Night, Noon,
            new NightBuildSettings { Objective = objective });
        var bounds = CandidatePool.UpperBoundsPerHour(Sites, Units, Surface, Night, Noon, scatter.Select(s => s.Pool).ToList(), objective);

        var checkedLevels = 0;
        foreach (var option in built.Problem.Options)
        {
            foreach (var level in option.Levels)
            {
                var perHour = level.Value / level.DurationSeconds * 3600;
                Assert.True(perHour <= bounds[option.Candidate] * (1 + 1e-9),
                    $"{scatter[option.Candidate].Pool.Id}: {perHour} per hour above the bound {bounds[option.Candidate]}");
                checkedLevels++;
            }
        }
        Assert.True(checkedLevels > 200, $"only {checkedLevels} levels were compared");
    }

    [Fact]
    public void UpperBoundsPerHour_PositionTheBuilderFindsVisible_IsNeverCalledInvisible()
    {
        var scatter = Scatter(600, 12);
        var built = NightProblemBuilder.Build(Sites, Units, scatter.Select(s => (ITargetForecast)s.Forecast).ToList(), Surface, Night, Noon);
        var selection = CandidatePool.Select(Sites, Units, Surface, Night, Noon, scatter.Select(s => s.Pool).ToList(),
            new HashSet<string>(), PlanObjective.Accuracy, settings: new CandidatePoolSettings { MaxCandidates = 10_000 });

        var plannable = built.Problem.Candidates.Where(c => c.Standing == CandidateStanding.Plannable).Select(c => c.Id).ToHashSet();
        var neverVisible = built.Problem.Candidates.Count(c => c.Standing == CandidateStanding.NeverVisible);

        Assert.Subset(selection.Kept.ToHashSet(), plannable);
        // The closed-form test is a little generous (the slack), never stricter than the builder.
        Assert.InRange(selection.Report.NeverVisible, 1, neverVisible);
    }

    [Fact]
    public void Select_MoreThanTheCap_KeepsTheHighestBoundsAndRecordsTheCut()
    {
        var scatter = Scatter(500, 13);
        var pool = scatter.Select(s => s.Pool).ToList();
        var bounds = CandidatePool.UpperBoundsPerHour(Sites, Units, Surface, Night, Noon, pool, PlanObjective.Accuracy);

        var selection = CandidatePool.Select(Sites, Units, Surface, Night, Noon, pool, new HashSet<string>(), PlanObjective.Accuracy,
            settings: new CandidatePoolSettings { MaxCandidates = 50 });

        Assert.Equal(50, selection.Kept.Count);
        var keptBounds = selection.Kept.Select(id => bounds[pool.FindIndex(p => p.Id == id)]).ToList();
        var cut = selection.Report.CutValuePerHour!.Value;
        Assert.Equal(keptBounds.Min(), cut);
        var leftOut = pool.Select((p, i) => (p, i)).Where(t => !selection.Kept.Contains(t.p.Id)).Select(t => bounds[t.i]);
        Assert.All(leftOut, b => Assert.True(b <= cut));
        var r = selection.Report;
        Assert.Equal(500, r.Waiting);
        Assert.Equal(r.Waiting, r.Kept + r.NeverVisible + r.NoMagnitude + r.TooFaint + r.BelowCut);
        Assert.Contains("cut at", r.Reason, StringComparison.Ordinal);
    }

    [Fact]
    public void Select_CandidateOfTheLatestVersion_StaysWhateverItsBound()
    {
        var scatter = Scatter(300, 14);
        var pool = scatter.Select(s => s.Pool).ToList();
        var bounds = CandidatePool.UpperBoundsPerHour(Sites, Units, Surface, Night, Noon, pool, PlanObjective.Accuracy);
        var weakest = pool[Enumerable.Range(0, pool.Count).Where(i => bounds[i] > 0).MinBy(i => bounds[i])].Id;
        var invisible = pool[Array.IndexOf(bounds, 0.0)].Id;

        var selection = CandidatePool.Select(Sites, Units, Surface, Night, Noon, pool, new HashSet<string> { weakest, invisible }, PlanObjective.Accuracy,
            settings: new CandidatePoolSettings { MaxCandidates = 20 });

        Assert.Contains(weakest, selection.Kept);
        Assert.Contains(invisible, selection.Kept);
        Assert.Equal(20, selection.Kept.Count);
        Assert.Equal(2, selection.Report.KeptFromPreviousVersion);
    }

    [Fact]
    public void Select_NoDetection_IsLeftOutAsUnsizable()
    {
        var visible = new PoolCandidate("blank", 180, 30, 1, null);
        var selection = CandidatePool.Select(Sites, Units, Surface, Night, Noon, [visible], new HashSet<string>(), PlanObjective.Accuracy);

        Assert.Empty(selection.Kept);
        Assert.Equal(1, selection.Report.NoMagnitude);
    }

    [Fact]
    public void Select_SameInputTwice_GivesTheSamePool()
    {
        var pool = Scatter(400, 15).Select(s => s.Pool).ToList();
        var settings = new CandidatePoolSettings { MaxCandidates = 60 };
        var a = CandidatePool.Select(Sites, Units, Surface, Night, Noon, pool, new HashSet<string>(), PlanObjective.Accuracy, settings: settings);
        var b = CandidatePool.Select(Sites, Units, Surface, Night, Noon, pool.AsEnumerable().Reverse().ToList(), new HashSet<string>(), PlanObjective.Accuracy, settings: settings);

        Assert.Equal(a.Kept.Order(StringComparer.Ordinal), b.Kept.Order(StringComparer.Ordinal));
    }
}
