using BenchmarkDotNet.Attributes;
using BenchmarkDotNet.Engines;
using Triage.Core.Calibration;
using Triage.Core.Spectra;
using Triage.Core.Spectra.Synthetic;
using Triage.Learning;

namespace Triage.Bench;

/// <summary>
/// Degradation throughput: 240 synthetic spectra of the default library (native R = 6000, ~11 600 pixels each)
/// degraded to R on one thread. Spectra per second = 240 / mean time. The independent reference
/// (bench/reference/study.py) reports the same R on the same kind of library.
/// </summary>
[MemoryDiagnoser]
public class DegradationBenchmarks
{
    private SpectralLibrary _library = null!;

    [Params(5, 50, 500, 1500, 4000)]
    public double Resolution { get; set; }

    [GlobalSetup]
    public void Setup() => _library = SyntheticLibrary.Generate(new SynthOptions { Objects = 40, MinObjectsPerSubtype = 2, Seed = 3 }).Library;

    [Benchmark(OperationsPerInvoke = 1)]
    public int Degrade240Spectra()
    {
        int n = 0;
        foreach (var s in _library.Spectra.Take(240))
            n += Degradation.Degrade(s.Spectrum, Resolution, s.SourceResolution).Flux.Length;
        return n;
    }
}

/// <summary>
/// The full default grid on the default synthetic library (400 objects, native R 6000), one cold run;
/// the split of the time is printed to the log.
/// </summary>
[SimpleJob(RunStrategy.ColdStart, launchCount: 1, warmupCount: 0, iterationCount: 1)]
public class CalibrationGridBenchmarks
{
    private SpectralLibrary _library = null!;

    [GlobalSetup]
    public void Setup() => _library = SyntheticLibrary.Generate(new SynthOptions()).Library;

    [Benchmark]
    public AccuracyModelDocument DefaultGrid()
    {
        var (doc, t) = CalibrationPipeline.RunTimed(_library, Taxonomy.Default, new CalibrationSettings(), "bench");
        Console.WriteLine($"// spectra {_library.Spectra.Count}, objects {_library.ObjectCount}: degrade {t.Degrade.TotalSeconds:0.0} s, " +
                          $"noise+features {t.Features.TotalSeconds:0.0} s, train+predict {t.Train.TotalSeconds:0.0} s, total {t.Total.TotalSeconds:0.0} s");
        return doc;
    }
}
