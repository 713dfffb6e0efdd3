using BenchmarkDotNet.Attributes;
using Triage.Core.Candidates;

namespace Triage.Bench;

/// <summary>
/// The plan job's grouping of several brokers' posts of one transient, before the pool: 300,000 waiting posts uniform
/// over the sky plus 10 % reposts 0.3–0.9″ from an original (fixed seed), and a crowded field: the same count in a
/// 10° × 10° square (about 0.2 posts per square arcminute).
/// </summary>
[Config(typeof(InProcessConfig))]
public class SameTransientBenchmarks
{
    private List<TransientPost> _posts = null!;

    [Params(300_000)]
    public int Waiting { get; set; }

    [Params(false, true)]
    public bool Crowded { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        var rng = new Random(11);
        var night = new DateTimeOffset(2026, 12, 3, 0, 0, 0, TimeSpan.Zero);
        var originals = Waiting * 10 / 11;
        _posts = new List<TransientPost>(Waiting);
        for (var i = 0; i < originals; i++)
        {
            var (ra, dec) = Crowded
                ? (150 + 10 * rng.NextDouble(), 10 * rng.NextDouble())
                : (360 * rng.NextDouble(), Math.Asin(2 * rng.NextDouble() - 1) * 180 / Math.PI);
            _posts.Add(new TransientPost($"c{i:D6}", ra, dec, night.AddDays(-30 * rng.NextDouble()), PostStanding.Waiting, 1, 19));
        }
        for (var i = originals; i < Waiting; i++)
        {
            var o = _posts[rng.Next(originals)];
            var separation = (0.3 + 0.6 * rng.NextDouble()) / 3600;
            var angle = 2 * Math.PI * rng.NextDouble();
            _posts.Add(o with
            {
                Id = $"r{i:D6}",
                RaDeg = (o.RaDeg + separation * Math.Sin(angle) / Math.Cos(o.DecDeg * Math.PI / 180) + 360) % 360,
                DecDeg = Math.Clamp(o.DecDeg + separation * Math.Cos(angle), -90, 90),
            });
        }
    }

    [Benchmark]
    public SameTransientSelection Group() => SameTransient.Select(_posts, new HashSet<string>());
}
