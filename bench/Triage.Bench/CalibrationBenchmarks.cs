using BenchmarkDotNet.Attributes;
using BenchmarkDotNet.Engines;
using Triage.Core.Calibration;
using Triage.Core.Spectra;
using Triage.Core.Spectra.Synthetic;
using Triage.Learning;

namespace Triage.Bench;

/// <summary>
/// Degradation throughput: 240 synthetic spectra of the default library (native R = 6000, 11 596 pixels each, one
/// wavelength array) degraded to R on one thread. <see cref="Operator240Spectra"/> is what the calibration does: build
/// the operator for the array and R (inside the timing) and apply it to all 240 in interleaved blocks of eight;
/// <see cref="StepByStep240Spectra"/> degrades each spectrum step by step (pixel bins computed once, outside the timing).
/// Spectra per second = 240 / mean time. The independent reference (bench/reference/study.py --skip-study) reports the
/// same R on the default library, also on one thread.
/// </summary>
[MemoryDiagnoser]
public class DegradationBenchmarks
{
    private LibrarySpectrum[] _spectra = [];
    private PixelBins[] _bins = [];
    private double[][] _fluxes = [];

    [Params(5, 10, 50, 300, 1500, 4000)]
    public double Resolution { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        _spectra = SyntheticLibrary.Generate(new SynthOptions { Objects = 41, MinObjectsPerSubtype = 2, Seed = 3 }).Library.Spectra.Take(240).ToArray();
        if (_spectra.Length != 240) throw new InvalidOperationException($"The benchmark library has {_spectra.Length} spectra, not 240.");
        _bins = _spectra.Select(s => PixelBins.Of(s.Spectrum.WavelengthAngstrom)).ToArray();
        _fluxes = _spectra.Select(s => s.Spectrum.Flux).ToArray();
        _built = DegradationOperator.Build(_spectra[0].Spectrum.WavelengthAngstrom, _bins[0], Resolution, _spectra[0].SourceResolution);
    }

    private DegradationOperator _built = null!;

    [Benchmark(OperationsPerInvoke = 1)]
    public int Operator240Spectra()
    {
        var op = DegradationOperator.Build(_spectra[0].Spectrum.WavelengthAngstrom, _bins[0], Resolution, _spectra[0].SourceResolution);
        return op.Apply(_fluxes).Sum(f => f.Length);
    }

    /// <summary>The build alone (the calibration builds one operator per R for the whole library).</summary>
    [Benchmark(OperationsPerInvoke = 1)]
    public int OperatorBuild() =>
        DegradationOperator.Build(_spectra[0].Spectrum.WavelengthAngstrom, _bins[0], Resolution, _spectra[0].SourceResolution).Grid.Count;

    /// <summary>Applying a built operator to the 240 spectra: with <see cref="OperatorBuild"/>, the time of any library size.</summary>
    [Benchmark(OperationsPerInvoke = 1)]
    public int OperatorApply240Spectra() => _built.Apply(_fluxes).Sum(f => f.Length);

    [Benchmark(OperationsPerInvoke = 1)]
    public int StepByStep240Spectra()
    {
        int n = 0;
        for (int i = 0; i < _spectra.Length; i++)
            n += Degradation.Degrade(_spectra[i].Spectrum, _bins[i], Resolution, _spectra[i].SourceResolution).Flux.Length;
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

/// <summary>
/// The calibration's noise and feature stage at one R for 240 spectra of the default library (degraded once in the
/// set-up): <see cref="Noise240Spectra"/> adds the shortfall noise for S/N 10 per element with a seeded generator per
/// spectrum, <see cref="Features240Spectra"/> extracts the feature vectors of the noised spectra. At high R this stage
/// is the largest part of the study after training (docs/calibration.md, "The whole study").
/// </summary>
[MemoryDiagnoser]
public class NoiseAndFeatureBenchmarks
{
    private double[][] _fluxes = [];
    private double[][] _noised = [];
    private double[] _centres = [];
    private double[] _redshifts = [];
    private DegradedNoise[] _noise = [];
    private readonly PreprocessOptions _preprocess = new CalibrationSettings().Preprocess;

    [Params(1500, 4000)]
    public double Resolution { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        var spectra = SyntheticLibrary.Generate(new SynthOptions { Objects = 41, MinObjectsPerSubtype = 2, Seed = 3 }).Library.Spectra.Take(240).ToArray();
        var first = spectra[0];
        var op = DegradationOperator.Build(first.Spectrum.WavelengthAngstrom, PixelBins.Of(first.Spectrum.WavelengthAngstrom), Resolution, first.SourceResolution);
        _fluxes = op.Apply(spectra.Select(s => s.Spectrum.Flux).ToArray());
        _centres = op.Grid.Centres();
        var shapes = SpectrumNoise.NoiseShapes(spectra.Select(s => s.Spectrum).ToArray(), NoiseShapeBinning.Build(first.Spectrum.WavelengthAngstrom, op.Grid));
        _noise = spectra.Select((s, i) => DegradedNoise.Account(InputNoiseSources.Of(s.Spectrum, s.NoiseFree), s.SourceResolution, op.Grid, _fluxes[i], Resolution, shapes[i])).ToArray();
        _redshifts = spectra.Select(s => s.Redshift ?? 0).ToArray();
        _noised = Enumerable.Range(0, 240).Select(i => _noise[i].Apply(_fluxes[i], 10, 2, new Random(i)).Flux).ToArray();
    }

    [Benchmark]
    public double Noise240Spectra()
    {
        double sum = 0;
        for (int i = 0; i < _fluxes.Length; i++) sum += _noise[i].Apply(_fluxes[i], 10, 2, new Random(i)).Flux[0];
        return sum;
    }

    [Benchmark]
    public double Features240Spectra()
    {
        double sum = 0;
        for (int i = 0; i < _noised.Length; i++) sum += Preprocessing.Features(_centres, _noised[i], _redshifts[i], Resolution, _preprocess)[0];
        return sum;
    }
}
