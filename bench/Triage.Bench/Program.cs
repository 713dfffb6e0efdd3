using BenchmarkDotNet.Configs;
using BenchmarkDotNet.Running;

// `latency ...` runs the open-loop HTTP harness; everything else goes to BenchmarkDotNet.
// Every benchmark class in this assembly is listed; pick with --filter, e.g. `--filter *Visibility* --job short`.
if (args.Length > 0 && args[0] == "latency")
{
    return await Triage.Bench.Harness.SinglePostLatency.RunAsync(args);
}
// `flood ...` posts a flood of candidates to a running service and measures one plan over them.
if (args.Length > 0 && args[0] == "flood")
{
    return await Triage.Bench.Harness.FloodPlan.RunAsync(args);
}
// `redshift-errors ...` measures the redshift estimated from the spectrum on a synthetic library (docs/calibration.md).
if (args.Length > 0 && args[0] == "redshift-errors")
{
    return Triage.Bench.Harness.RedshiftErrors.Run(args);
}
// `plan-objectives ...` times the plan job's build and solve with the accuracy and the identification objective back to back.
if (args.Length > 0 && args[0] == "plan-objectives")
{
    return Triage.Bench.Harness.ObjectiveTiming.Run(args);
}
// `demo-night` prints the demo night's plan figures (the setup of PlanQualityBenchmarks) without timing anything.
if (args.Length > 0 && args[0] == "demo-night")
{
    new Triage.Bench.PlanQualityBenchmarks().Setup();
    return 0;
}
// The build timeout is raised because the shared build machine can be slow to compile the generated project.
var config = ManualConfig.Create(DefaultConfig.Instance);
config.BuildTimeout = TimeSpan.FromMinutes(10);
BenchmarkSwitcher.FromAssembly(typeof(Program).Assembly).Run(args, config);
return 0;
