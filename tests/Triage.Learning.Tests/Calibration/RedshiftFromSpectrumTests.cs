using Triage.Core.Calibration;
using Triage.Core.Spectra;
using Triage.Core.Spectra.Synthetic;
using Triage.Learning;
using Xunit.Abstractions;

namespace Triage.Learning.Tests.Calibration;

/// <summary>
/// Rows without a redshift: their redshift is estimated from the degraded, noised spectrum with templates from the
/// fold's training rows (docs/calibration.md, "Redshift from the spectrum"). A library of 112 objects at native R 1500
/// with 30 % of the objects lacking a redshift.
/// </summary>
public class RedshiftFromSpectrumTests(ITestOutputHelper output)
{
    private static readonly (SpectralLibrary Library, IReadOnlyList<SyntheticObject> Truth) Generated = SyntheticLibrary.Generate(new SynthOptions
        { Objects = 112, Seed = 13, NativeResolution = 1500, NativeSnrMin = 8, NativeSnrMax = 32, WithoutRedshiftShare = 0.3 });

    private static readonly CalibrationSettings Settings = new() { Resolutions = [100, 1500], SnrLevels = [20], Folds = 4, Seed = 3 };

    [Fact]
    public void Calibrate_LibraryWrittenWithEmptyRedshifts_LoadsAndCalibratesEndToEnd()
    {
        string dir = Path.Combine(Path.GetTempPath(), "triage-zfit-" + Guid.NewGuid().ToString("N"));
        try
        {
            LibraryFiles.Write(dir, Generated.Library, ["SYNTHETIC test library"]);
            Assert.Contains(",,1500", File.ReadAllText(Path.Combine(dir, LibraryImport.ManifestFileName)));
            var loaded = LibraryFiles.Load(dir, Taxonomy.Default);
            Assert.Equal(Generated.Library.WithoutRedshiftCount, loaded.WithoutRedshiftCount);
            Assert.InRange(loaded.WithoutRedshiftCount, 1, loaded.Spectra.Count - 1);
            var recorder = new RecordingClassifier(SubtypeClassifiers.Create("linear"));
            var doc = CalibrationPipeline.RunTimed(loaded, Taxonomy.Default, Settings with { Resolutions = [300] }, "test", classifier: recorder).Document;
            // Every spectrum is scored once (rows without a redshift too); none of them is ever trained on.
            Assert.Equal(loaded.Spectra.Count, doc.Summaries.Single().Spectra);
            var splits = CalibrationPipeline.Splits(loaded, Settings);
            Assert.Equal(splits.Select(s => s.Train.Count(i => loaded.Spectra[i].Redshift is not null)).Order(),
                recorder.Calls.Select(c => c.Train).Order());
        }
        finally
        {
            if (Directory.Exists(dir)) Directory.Delete(dir, true);
        }
    }

    [Fact]
    public void RunResolution_RowsWithoutRedshift_EstimatedCloseToTruth()
    {
        var lib = Generated.Library;
        var run = CalibrationRun.Prepare(lib, Taxonomy.Default, Settings);
        var truth = Generated.Truth.ToDictionary(o => o.ObjectId, o => o.Redshift);
        for (int ri = 0; ri < run.Resolutions.Count; ri++)
        {
            var estimated = CalibrationPipeline.RunResolution(run, ri).EstimatedRedshift.Single();
            Assert.All(lib.Spectra.Select((s, i) => (s, i)), p => Assert.Equal(p.s.Redshift is null, estimated[p.i] is not null));
            var errors = lib.Spectra.Select((s, i) => (s, i)).Where(p => p.s.Redshift is null)
                .Select(p => Math.Abs(estimated[p.i]!.Value - truth[p.s.ObjectId])).Order().ToArray();
            double median = errors[errors.Length / 2], outliers = errors.Count(e => e > 0.01) / (double)errors.Length;
            output.WriteLine($"R = {run.Resolutions[ri]}: {errors.Length} spectra, median |Δz| {median:0.0000}, |Δz| > 0.01: {outliers:P0}");
            // Tolerances: measured on this library (3 Dec 2026, templates per subtype and phase bin) R 1500: median 0.0028,
            // 24 % beyond 0.01; R 100: 0.0082, 46 % (with one template per subtype: 0.0039, 29 %; 0.0078, 42 %), with margin
            // for the draw. Worse than the known-z tests at R 1500 (0.001): 40 % of the template rows carry a
            // photometric redshift (σ 0.015), and the noise rises to the blue here.
            (double medianMax, double outlierMax) = run.Resolutions[ri] >= 1500 ? (0.008, 0.45) : (0.015, 0.7);
            Assert.InRange(median, 0, medianMax);
            Assert.InRange(outliers, 0, outlierMax);
        }
    }

    [Fact]
    public void RunResolution_HeldOutFoldAltered_EstimatesOfItsRowsUnchanged()
    {
        // The estimate for a held-out row may use only the training rows of its fold. Altering every other row of the
        // same held-out fold (their spectra feed the templates of every other fold) must leave its estimate as it was.
        var lib = Generated.Library;
        var splits = CalibrationPipeline.Splits(lib, Settings);
        var test = splits[0].Test.ToHashSet();
        var altered = lib with
        {
            Spectra = lib.Spectra.Select((s, i) => test.Contains(i) && s.Redshift is not null
                ? s with { Spectrum = new Spectrum(s.Spectrum.WavelengthAngstrom,
                    s.Spectrum.Flux.Select((f, j) => f * (1 + 0.5 * Math.Sin(s.Spectrum.WavelengthAngstrom[j] / 40))).ToArray(), s.Spectrum.FluxError) }
                : s).ToArray(),
        };
        var settings = Settings with { Resolutions = [1500] };
        var before = CalibrationPipeline.RunResolution(CalibrationRun.Prepare(lib, Taxonomy.Default, settings), 0).EstimatedRedshift.Single();
        var after = CalibrationPipeline.RunResolution(CalibrationRun.Prepare(altered, Taxonomy.Default, settings), 0).EstimatedRedshift.Single();
        var heldOut = splits[0].Test.Where(i => lib.Spectra[i].Redshift is null).ToArray();
        Assert.NotEmpty(heldOut);
        Assert.All(heldOut, i => Assert.Equal(before[i], after[i]));
        // The alteration reaches the other folds' templates, so rows tested there move.
        var elsewhere = Enumerable.Range(0, lib.Spectra.Count).Where(i => !test.Contains(i) && lib.Spectra[i].Redshift is null);
        Assert.Contains(elsewhere, i => before[i] != after[i]);
    }
}
