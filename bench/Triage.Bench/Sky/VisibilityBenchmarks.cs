using BenchmarkDotNet.Attributes;
using Triage.Core.Roster;
using Triage.Core.Sky;

namespace Triage.Bench.Sky;

/// <summary>Visibility windows of 10,000 targets over one night at a 5-minute grid, one site, one thread.</summary>
[MemoryDiagnoser]
public class VisibilityBenchmarks
{
    private readonly Site _site = new(
        Guid.Empty, "bench site (invented)", -30.5, -70.8, 2400, 30, 45, 30, 1.0, 21.5, 5500, 0.15, SiteStatus.Open);

    private SkyTarget[] _targets = [];
    private NightModel _night = null!;

    [GlobalSetup]
    public void Setup()
    {
        var rng = new Random(1234);
        _targets = Enumerable.Range(0, 10_000)
            .Select(_ => new SkyTarget(rng.NextDouble() * 360, Math.Asin(2 * rng.NextDouble() - 1) * 180 / Math.PI))
            .ToArray();
        _night = NightModel.For(_site, new DateOnly(2026, 5, 12));
    }

    /// <summary>Building the night's Sun/Moon/sidereal tables (done once per site and night).</summary>
    [Benchmark]
    public NightModel BuildNight() => NightModel.For(_site, new DateOnly(2026, 5, 12));

    /// <summary>Windows of 10,000 targets on a prebuilt night.</summary>
    [Benchmark]
    public int Windows10k() => CountWindows(_night);

    /// <summary>The whole job: build the night and compute the windows of 10,000 targets.</summary>
    [Benchmark]
    public int BuildAndWindows10k() => CountWindows(NightModel.For(_site, new DateOnly(2026, 5, 12)));

    private int CountWindows(NightModel night)
    {
        int windows = 0;
        foreach (var t in _targets)
        {
            windows += night.VisibilityWindows(t, 2.0).Windows.Count;
        }

        return windows;
    }
}
