using BenchmarkDotNet.Attributes;
using Triage.Core.Planning;
using Triage.Core.Roster;

namespace Triage.Bench;

/// <summary>
/// The plan job's pre-selection alone: 300,000 waiting candidates (uniform over the sky,
/// magnitudes 15–23, weights 0.5–3, fixed seed) on the demo network, ranked by the upper bound of
/// value per hour and cut to the default pool of 2,000. The database read of the light rows is
/// measured by the <c>flood</c> harness, not here.
/// </summary>
[Config(typeof(InProcessConfig))]
public class CandidatePoolBenchmarks
{
    private IReadOnlyList<Site> _sites = null!;
    private IReadOnlyList<Spectrograph> _spectrographs = null!;
    private AccuracySurface _surface = null!;
    private List<PoolCandidate> _candidates = null!;

    [Params(300_000)]
    public int Waiting { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        (_sites, _spectrographs) = DemoNight.Roster();
        _surface = AccuracySurface.FromDocument(DemoNight.Calibration().Document);
        var rng = new Random(5);
        _candidates = Enumerable.Range(0, Waiting).Select(i => new PoolCandidate(
            $"c{i:D6}", 360 * rng.NextDouble(), Math.Asin(2 * rng.NextDouble() - 1) * 180 / Math.PI, 0.5 + 2.5 * rng.NextDouble(), 15 + 8 * rng.NextDouble()))
            .ToList();
    }

    [Benchmark]
    public CandidatePoolSelection SelectPool() => CandidatePool.Select(_sites, _spectrographs, _surface, DemoNight.Night,
        DateTimeOffset.MinValue, _candidates, new HashSet<string>(), PlanObjective.Accuracy);
}
