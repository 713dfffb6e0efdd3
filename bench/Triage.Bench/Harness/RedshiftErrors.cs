using System.Globalization;
using Triage.Core.Calibration;
using Triage.Core.Spectra;
using Triage.Core.Spectra.Synthetic;
using Triage.Learning;

namespace Triage.Bench.Harness;

/// <summary>
/// `redshift-errors [--objects N] [--seed S] [--share F] [--native-r R] [--resolutions a,b,...]`: generates a synthetic
/// library with a share of objects lacking a redshift, runs the calibration's degradation, noise and redshift estimate
/// (templates from each fold's training rows; no classifier is trained) and prints, per R and S/N, the median |Δz| of
/// the estimates against the true redshift, and the share with |Δz| > 0.01, beside the same figures for the given (broker-like) redshifts of the other rows. Figures: docs/calibration.md.
/// </summary>
internal static class RedshiftErrors
{
    public static int Run(string[] args)
    {
        string Arg(string name, string fallback) => HarnessArgs.Value(args, name, fallback);
        int objects = int.Parse(Arg("--objects", "400"), CultureInfo.InvariantCulture);
        int seed = int.Parse(Arg("--seed", "1"), CultureInfo.InvariantCulture);
        double share = double.Parse(Arg("--share", "0.2"), CultureInfo.InvariantCulture);
        double nativeR = double.Parse(Arg("--native-r", "6000"), CultureInfo.InvariantCulture);
        var resolutions = Arg("--resolutions", "14,50,150,500,1500,4000").Split(',').Select(v => double.Parse(v, CultureInfo.InvariantCulture)).ToArray();
        var (library, truth) = SyntheticLibrary.Generate(new SynthOptions
            { Objects = objects, Seed = seed, WithoutRedshiftShare = share, NativeResolution = nativeR });
        var z = truth.ToDictionary(o => o.ObjectId, o => o.Redshift);
        var settings = new CalibrationSettings { Resolutions = resolutions, SnrLevels = [5, 10, 20, null], Seed = 1 };
        var run = CalibrationRun.Prepare(library, Taxonomy.Default, settings, new NoClassifier());
        var spectra = library.Spectra;
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"{spectra.Count} spectra of {library.ObjectCount} objects, {library.WithoutRedshiftCount} spectra without a redshift (seed {seed}, native R {nativeR})"));
        var given = spectra.Where(s => s.Redshift is not null).Select(s => Math.Abs(s.Redshift!.Value - z[s.ObjectId])).Order().ToArray();
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"given redshifts: median |Δz| {given[given.Length / 2]:0.0000}, |Δz| > 0.01: {given.Count(e => e > 0.01) / (double)given.Length:P0}"));
        Console.WriteLine("R | S/N | median |Δz| | |Δz| > 0.01");
        for (int ri = 0; ri < run.Resolutions.Count; ri++)
        {
            var outcome = CalibrationPipeline.RunResolution(run, ri);
            for (int si = 0; si < settings.SnrLevels.Count; si++)
            {
                var est = outcome.EstimatedRedshift[si];
                var errors = spectra.Select((s, i) => (s, i)).Where(p => est[p.i] is not null)
                    .Select(p => Math.Abs(est[p.i]!.Value - z[p.s.ObjectId])).Order().ToArray();
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                    $"{run.Resolutions[ri]:0.#} | {(settings.SnrLevels[si] is double v ? v.ToString(CultureInfo.InvariantCulture) : "native")} | {errors[errors.Length / 2]:0.0000} | {errors.Count(e => e > 0.01) / (double)errors.Length:P0}"));
            }
        }
        return 0;
    }

    private sealed class NoClassifier : ISubtypeClassifier
    {
        public string Name => "none";

        public int[] TrainAndPredict(float[][] trainFeatures, int[] trainLabels, float[] trainWeights, float[][] testFeatures, int classCount, int seed) =>
            new int[testFeatures.Length];
    }
}
