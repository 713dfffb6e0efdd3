using BenchmarkDotNet.Running;

// `latency ...` runs the open-loop HTTP harness; everything else goes to BenchmarkDotNet.
if (args.Length > 0 && args[0] == "latency")
{
    return await Triage.Bench.Harness.SinglePostLatency.RunAsync(args);
}
BenchmarkSwitcher.FromAssembly(typeof(Program).Assembly).Run(args);
return 0;
