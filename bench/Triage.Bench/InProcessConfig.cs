using BenchmarkDotNet.Configs;
using BenchmarkDotNet.Engines;
using BenchmarkDotNet.Jobs;
using BenchmarkDotNet.Toolchains.InProcess.Emit;

namespace Triage.Bench;

/// <summary>
/// Seconds-long planner runs: a few monitored iterations in process (building a separate
/// benchmark executable takes minutes on the shared 2-core machine).
/// </summary>
public sealed class InProcessConfig : ManualConfig
{
    public InProcessConfig()
    {
        AddJob(Job.Default
            .WithStrategy(RunStrategy.Monitoring)
            .WithLaunchCount(1)
            .WithWarmupCount(1)
            .WithIterationCount(3)
            .WithToolchain(InProcessEmitToolchain.Instance));
    }
}
