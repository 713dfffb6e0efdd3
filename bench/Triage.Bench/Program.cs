using BenchmarkDotNet.Running;

// Every benchmark class in this assembly is listed; pick with --filter, e.g. `--filter *Visibility* --job short`.
BenchmarkSwitcher.FromAssembly(typeof(Program).Assembly).Run(args);
