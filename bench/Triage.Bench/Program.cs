using BenchmarkDotNet.Configs;
using BenchmarkDotNet.Running;

// Every benchmark class in this assembly is listed; pick with --filter, e.g. `--filter *Visibility* --job short`.
// The build timeout is raised because the shared build machine can be slow to compile the generated project.
var config = ManualConfig.Create(DefaultConfig.Instance);
config.BuildTimeout = TimeSpan.FromMinutes(10);
BenchmarkSwitcher.FromAssembly(typeof(Program).Assembly).Run(args, config);
