using BenchmarkDotNet.Attributes;
using BenchmarkDotNet.Configs;
using BenchmarkDotNet.Jobs;
using BenchmarkDotNet.Toolchains.InProcess.Emit;
using Npgsql;
using Triage.Core.Candidates;
using Triage.Storage;
using Triage.Storage.Candidates;
using Triage.Storage.Migrations;

namespace Triage.Bench.Candidates;

/// <summary>
/// Batch intake into PostgreSQL: 5,000 candidates with ten photometry points each per
/// operation, through binary COPY into a staging table and the ON CONFLICT merge (the path the
/// intake endpoint takes after validation). Fresh ids every iteration, so every candidate and
/// point is a real insert; a third benchmark posts the next snapshot of a stored batch (every
/// candidate updated, one more point each). Candidates per second = 5,000 / mean.
/// Database: <c>TRIAGE_BENCH_CONNECTION</c> (default: the local triage_bench database).
/// </summary>
[Config(typeof(IntakeConfig))]
[MinColumn, MaxColumn]
public class CandidateIntakeBenchmarks
{
    private const int BatchSize = 5000;
    private NpgsqlDataSource _data = null!;
    private CandidateStore _store = null!;
    private List<CandidateIntake> _batch = null!;
    private List<CandidateIntake> _repeat = null!;
    private int _round;

    public static string ConnectionString =>
        Environment.GetEnvironmentVariable("TRIAGE_BENCH_CONNECTION")
        ?? "Host=127.0.0.1;Port=5432;Username=triage;Password=triage;Database=triage_bench";

    [GlobalSetup]
    public void Setup()
    {
        _data = TriageDataSource.Create(ConnectionString);
        MigrationRunner.ApplyAsync(_data, TimeProvider.System).GetAwaiter().GetResult();
        _store = new CandidateStore(_data);
        _repeat = Make($"rep-{Guid.NewGuid():N}"[..12]);
        _store.UpsertBatchAsync("bench-broker", _repeat, DateTimeOffset.UtcNow).GetAwaiter().GetResult();
    }

    [IterationSetup(Targets = [nameof(NewBatchOf5000), nameof(RepeatedBatchOf5000)])]
    public void NewIds() => _batch = Make($"b{_round++}-{Guid.NewGuid():N}"[..14]);

    /// <summary>Stores a batch (not timed) and prepares its next snapshot: every candidate with one more point.</summary>
    [IterationSetup(Target = nameof(UpdatedBatchOf5000))]
    public void StoredThenExtended()
    {
        var stored = Make($"u{_round++}-{Guid.NewGuid():N}"[..14]);
        _store.UpsertBatchAsync("bench-broker", stored, DateTimeOffset.UtcNow).GetAwaiter().GetResult();
        _batch = Extend(stored);
    }

    /// <summary>A batch of new candidates: every row inserted.</summary>
    [Benchmark]
    public Task<IntakeSummary> NewBatchOf5000() => _store.UpsertBatchAsync("bench-broker", _batch, DateTimeOffset.UtcNow);

    /// <summary>The same batch again (a broker's retry): nothing changes.</summary>
    [Benchmark]
    public Task<IntakeSummary> RepeatedBatchOf5000() => _store.UpsertBatchAsync("bench-broker", _repeat, DateTimeOffset.UtcNow);

    /// <summary>
    /// The next snapshot of 5,000 stored candidates (each with an 11th point): every candidate
    /// updated and its light curve merged with the stored one.
    /// </summary>
    [Benchmark]
    public Task<IntakeSummary> UpdatedBatchOf5000() => _store.UpsertBatchAsync("bench-broker", _batch, DateTimeOffset.UtcNow);

    /// <summary>In-process (the generated-project build times out on a loaded 2-core machine); one batch per iteration.</summary>
    private sealed class IntakeConfig : ManualConfig
    {
        public IntakeConfig() => AddJob(Job.Default
            .WithToolchain(InProcessEmitToolchain.Instance)
            .WithWarmupCount(1).WithIterationCount(8).WithInvocationCount(1).WithUnrollFactor(1));
    }

    [GlobalCleanup]
    public void Cleanup() => _data.Dispose();

    /// <summary>Each candidate of <paramref name="stored"/> with one more detection three days after its last point (a new content hash).</summary>
    internal static List<CandidateIntake> Extend(List<CandidateIntake> stored) =>
        stored.Select(s =>
        {
            var last = s.Candidate.Photometry[^1];
            var t = last.TimeUtc.AddDays(3);
            var next = new PhotometryPoint(t, Core.LightCurves.ModifiedJulianDate.FromUtc(t), last.Band, last.FluxMicroJy * 0.9, 5, false);
            var hash = (byte[])s.ContentHash.Clone();
            hash[0] ^= 0xFF;
            return new CandidateIntake(s.Candidate with { Photometry = [.. s.Candidate.Photometry, next] }, hash);
        }).ToList();

    internal static List<CandidateIntake> Make(string prefix)
    {
        var rng = new Random(prefix.GetHashCode());
        var list = new List<CandidateIntake>(BatchSize);
        var bands = new[] { PhotometricBands.Get("g"), PhotometricBands.Get("r") };
        var start = new DateTimeOffset(2026, 11, 1, 0, 0, 0, TimeSpan.Zero);
        for (int i = 0; i < BatchSize; i++)
        {
            var points = new PhotometryPoint[10];
            for (int j = 0; j < 10; j++)
            {
                var t = start.AddDays(3 * j + rng.NextDouble());
                double flux = 50 + 200 * rng.NextDouble();
                points[j] = new PhotometryPoint(t, Core.LightCurves.ModifiedJulianDate.FromUtc(t), bands[j % 2], flux, 5, false);
            }
            var c = new Candidate($"{prefix}-{i}", 360 * rng.NextDouble(), 180 * rng.NextDouble() - 90, start, null, null, points, null, 1, null, null);
            var hash = new byte[32];
            rng.NextBytes(hash);
            list.Add(new CandidateIntake(c, hash));
        }
        return list;
    }
}
