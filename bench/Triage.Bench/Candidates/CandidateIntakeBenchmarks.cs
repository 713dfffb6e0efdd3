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
/// operation, through binary COPY into staging tables and the ON CONFLICT merge (the path the
/// intake endpoint takes after validation). Fresh ids every iteration, so every candidate and
/// point is a real insert. Candidates per second = 5,000 / mean.
/// Database: <c>TRIAGE_BENCH_CONNECTION</c> (default: the local triage_bench database).
/// </summary>
[Config(typeof(IntakeConfig))]
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

    [IterationSetup]
    public void NewIds() => _batch = Make($"b{_round++}-{Guid.NewGuid():N}"[..14]);

    /// <summary>A batch of new candidates: every row inserted.</summary>
    [Benchmark]
    public Task<IntakeSummary> NewBatchOf5000() => _store.UpsertBatchAsync("bench-broker", _batch, DateTimeOffset.UtcNow);

    /// <summary>The same batch again (a broker's retry): nothing changes.</summary>
    [Benchmark]
    public Task<IntakeSummary> RepeatedBatchOf5000() => _store.UpsertBatchAsync("bench-broker", _repeat, DateTimeOffset.UtcNow);

    /// <summary>In-process (the generated-project build times out on a loaded 2-core machine); one batch per iteration.</summary>
    private sealed class IntakeConfig : ManualConfig
    {
        public IntakeConfig() => AddJob(Job.Default
            .WithToolchain(InProcessEmitToolchain.Instance)
            .WithWarmupCount(1).WithIterationCount(8).WithInvocationCount(1).WithUnrollFactor(1));
    }

    [GlobalCleanup]
    public void Cleanup() => _data.Dispose();

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
