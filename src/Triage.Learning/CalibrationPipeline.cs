using System.Diagnostics;
using Triage.Core.Calibration;
using Triage.Core.Spectra;

namespace Triage.Learning;

/// <summary>Progress of a calibration run.</summary>
/// <param name="Percent">Work done, 0–100.</param>
/// <param name="Stage">What is running, e.g. "R=150 S/N=10 fold 3/5".</param>
/// <param name="Remaining">Estimated time left (linear in work done); null before the first unit finishes.</param>
public sealed record CalibrationProgress(double Percent, string Stage, TimeSpan Elapsed, TimeSpan? Remaining);

/// <summary>
/// Where the time of a run went, for the benchmark and the docs: each stage's wall-clock time summed over the R values of
/// the grid. R values overlap in <see cref="CalibrationPipeline.Run"/>, so the stages can add up to more than <see cref="Total"/>.
/// </summary>
public sealed record CalibrationTimings(TimeSpan Degrade, TimeSpan Features, TimeSpan Train, TimeSpan Total);

/// <summary>
/// The calibration: for every R of the grid, degrade each library spectrum; for every S/N,
/// add seeded noise and extract features; cross-validate the classifier with folds grouped by
/// object; score the out-of-fold predictions into cells, confusion matrices and summaries; and
/// build the minimum-R table. The CLI calls <see cref="Run"/>; the service runs the same steps
/// split per R (<see cref="RunResolution"/> in any replica, then <see cref="Assemble"/>).
/// </summary>
public static class CalibrationPipeline
{
    /// <summary>Spectra on one wavelength array (and source R) from which the degradation goes through a shared operator.</summary>
    private const int MinSharedGrid = 8;

    /// <summary>R values of the grid computed at once by <see cref="Run"/> (their inner loops share the cores).</summary>
    private const int ResolutionsInFlight = 2;

    private static TimeSpan Sum(IEnumerable<TimeSpan> spans) => spans.Aggregate(TimeSpan.Zero, (a, b) => a + b);

    /// <summary>Runs the calibration and returns the accuracy-model document.</summary>
    /// <param name="codeVersion">Version string of the calling build, recorded in the provenance.</param>
    /// <exception cref="ArgumentException">A grid R exceeds a spectrum's source resolution, or fewer than two subtypes.</exception>
    public static AccuracyModelDocument Run(SpectralLibrary library, Taxonomy taxonomy, CalibrationSettings settings, string codeVersion,
        IProgress<CalibrationProgress>? progress = null, CancellationToken cancellationToken = default) =>
        RunTimed(library, taxonomy, settings, codeVersion, progress, cancellationToken).Document;

    /// <summary>As <see cref="Run"/>, also returning where the time went.</summary>
    /// <param name="classifier">Classifier to use instead of <see cref="CalibrationSettings.Model"/> (tests inject a recording one).</param>
    public static (AccuracyModelDocument Document, CalibrationTimings Timings) RunTimed(SpectralLibrary library, Taxonomy taxonomy,
        CalibrationSettings settings, string codeVersion, IProgress<CalibrationProgress>? progress = null,
        CancellationToken cancellationToken = default, ISubtypeClassifier? classifier = null)
    {
        var total = Stopwatch.StartNew();
        var run = CalibrationRun.Prepare(library, taxonomy, settings, classifier);
        int units = run.Resolutions.Count * settings.SnrLevels.Count * settings.Folds, done = 0;
        void Report(string stage)
        {
            double f = done / (double)units;
            progress?.Report(new CalibrationProgress(100 * f, stage, total.Elapsed,
                done == 0 ? null : TimeSpan.FromTicks((long)(total.Elapsed.Ticks * (1 - f) / f))));
        }
        Report("starting");
        var gate = new object();
        var results = new (ResolutionOutcome Outcome, CalibrationTimings Timings)[run.Resolutions.Count];
        // Two R values in flight: each R's own loops leave cores idle at their ends (the last folds of a training
        // round, the operator build, the scoring), which the other R fills. The seeds depend on the R's index, not on
        // the order, so the document is the one a sequential run gives (CalibrationPipelineTests). Highest R first:
        // its degradation is the longest, and the cheap low-R values fill the end.
        var order = Enumerable.Range(0, run.Resolutions.Count).OrderByDescending(i => run.Resolutions[i]).ToArray();
        Parallel.ForEach(order, new ParallelOptions { CancellationToken = cancellationToken, MaxDegreeOfParallelism = ResolutionsInFlight }, ri =>
            results[ri] = RunResolutionTimed(run, ri, stage => { lock (gate) { done++; Report(stage); } }, cancellationToken));
        var outcomes = results.Select(x => x.Outcome).ToList();
        var degradeTime = Sum(results.Select(x => x.Timings.Degrade));
        var featureTime = Sum(results.Select(x => x.Timings.Features));
        var trainTime = Sum(results.Select(x => x.Timings.Train));
        var document = Assemble(run, outcomes, codeVersion);
        Report("done");
        return (document, new CalibrationTimings(degradeTime, featureTime, trainTime, total.Elapsed));
    }

    /// <summary>
    /// One R of the grid (index <paramref name="resolutionIndex"/> into <see cref="CalibrationRun.Resolutions"/>): degrade,
    /// add noise per S/N level, extract features, cross-validate, score. Its noise and training seeds depend on the
    /// index, so the R values of one grid can run in any order, in any process, and <see cref="Assemble"/> gives the
    /// document <see cref="Run"/> gives.
    /// </summary>
    /// <param name="unitDone">Called (under a lock) after each (S/N, fold) training with a stage text such as "R=150 S/N=10 fold 3/5".</param>
    public static ResolutionOutcome RunResolution(CalibrationRun run, int resolutionIndex, Action<string>? unitDone = null,
        CancellationToken cancellationToken = default) =>
        RunResolutionTimed(run, resolutionIndex, unitDone, cancellationToken).Outcome;

    private static (ResolutionOutcome Outcome, CalibrationTimings Timings) RunResolutionTimed(CalibrationRun run, int ri, Action<string>? unitDone,
        CancellationToken cancellationToken)
    {
        var total = Stopwatch.StartNew();
        var settings = run.Settings;
        var spectra = run.Library.Spectra;
        var subtypes = run.Subtypes;
        var taxonomy = run.Taxonomy;
        var splits = run.Splits;
        var classifier = run.Classifier;
        var parallel = new ParallelOptions { CancellationToken = cancellationToken, MaxDegreeOfParallelism = Environment.ProcessorCount };
        var gate = new object();
        double r = run.Resolutions[ri];
        var sw = Stopwatch.StartNew();
        var degraded = new (LogWavelengthGrid Grid, double[] W, double[] F, DegradedNoise Noise)[spectra.Count];
        var degradeOptions = new DegradeOptions { PixelsPerElement = settings.PixelsPerElement };
        // One operator per (wavelength array, source R) serves all of its spectra, in blocks the operator interleaves;
        // a spectrum with few others on its grid is degraded step by step (building an operator costs a few degradations).
        var alone = run.GridGroups.Where(g => g.Members.Length < MinSharedGrid).SelectMany(g => g.Members).ToArray();
        Parallel.For(0, alone.Length, parallel, t =>
        {
            int i = alone[t];
            var s = spectra[i];
            var (grid, flux) = Degradation.Degrade(s.Spectrum, run.Bins[i], r, s.SourceResolution, degradeOptions);
            degraded[i] = (grid, grid.Centres(), flux, DegradedNoise.Account(s.Spectrum, run.InputNoise[i], s.SourceResolution, grid, flux, r));
        });
        foreach (var group in run.GridGroups.Where(g => g.Members.Length >= MinSharedGrid))
        {
            var first = spectra[group.Members[0]];
            var op = DegradationOperator.Build(first.Spectrum.WavelengthAngstrom, run.Bins[group.Members[0]], r, first.SourceResolution, degradeOptions);
            var centres = op.Grid.Centres();
            var shapeBinning = NoiseShapeBinning.Build(first.Spectrum.WavelengthAngstrom, op.Grid);
            const int chunk = 64;
            Parallel.For(0, (group.Members.Length + chunk - 1) / chunk, parallel, c =>
            {
                var members = group.Members.AsSpan(c * chunk, Math.Min(chunk, group.Members.Length - c * chunk)).ToArray();
                var fluxes = op.Apply(members.Select(i => spectra[i].Spectrum.Flux).ToArray());
                var shapes = SpectrumNoise.NoiseShapes(members.Select(i => spectra[i].Spectrum).ToArray(), shapeBinning);
                for (int t = 0; t < members.Length; t++)
                {
                    int i = members[t];
                    degraded[i] = (op.Grid, centres, fluxes[t],
                        DegradedNoise.Account(run.InputNoise[i], spectra[i].SourceResolution, op.Grid, fluxes[t], r, shapes[t]));
                }
            });
        }
        var degradeTime = sw.Elapsed;
        // Rows without a redshift get one estimated from their own degraded, noised spectrum, by cross-correlation
        // with templates (per subtype and phase bin) built from the spectra of known redshift that train the fold testing them (never from
        // the held-out objects), at this R (docs/calibration.md, "Redshift from the spectrum").
        RedshiftTemplates?[]? templates = null;
        if (run.WithoutRedshift > 0)
        {
            templates = new RedshiftTemplates?[settings.Folds];
            Parallel.For(0, settings.Folds, parallel, k =>
            {
                var train = splits[k].Train;
                if (train.Length > 0)
                    templates[k] = RedshiftTemplates.Build(train.Select(i => (TemplateLabel(spectra[i], settings.PhaseBins), degraded[i].W, degraded[i].F, spectra[i].Redshift!.Value)), r);
            });
        }
        sw.Restart();
        // Noise and features for every S/N level of this R, then every (S/N, fold) training in one
        // parallel loop: 5 folds on 2 cores would leave one core idle for a fifth of each S/N level.
        int levels = settings.SnrLevels.Count;
        var features = new float[levels][][];
        var snrs = new SpectrumSnr[levels][];
        var estimated = new double?[levels][];
        for (int si = 0; si < levels; si++)
        {
            features[si] = new float[spectra.Count][]; snrs[si] = new SpectrumSnr[spectra.Count]; estimated[si] = new double?[spectra.Count];
        }
        // The noised flux only lives until its features are taken: one buffer per worker, not one array per spectrum and level.
        Parallel.For(0, levels * spectra.Count, parallel, () => Array.Empty<double>(), (j, _, buffer) =>
        {
            int si = j / spectra.Count, i = j % spectra.Count;
            var (_, w, f, noise) = degraded[i];
            if (buffer.Length != f.Length) buffer = new double[f.Length];
            // Only the shortfall over the noise already present is added (docs/calibration.md, "The S/N convention").
            var noised = noise.Apply(f, settings.SnrLevels[si], settings.PixelsPerElement, new Random(DerivedSeed(settings.Seed, i, ri, si)), buffer);
            snrs[si][i] = new SpectrumSnr(noised.RealisedSnr ?? double.PositiveInfinity, noised.ReachableSnr);
            double z = spectra[i].Redshift ?? (estimated[si][i] = EstimateRedshift(templates![run.TestFold[i]], w, noised.Flux, run)).Value;
            features[si][i] = Preprocessing.Features(w, noised.Flux, z, r, settings.Preprocess);
            return buffer;
        }, _ => { });
        var featureTime = sw.Elapsed;
        sw.Restart();
        var predicted = new int[levels][];
        for (int si = 0; si < levels; si++) predicted[si] = new int[spectra.Count];
        Parallel.For(0, levels * settings.Folds, parallel, j =>
        {
            int si = j / settings.Folds, k = j % settings.Folds;
            var (train, test) = splits[k];
            if (test.Length == 0) return;
            var x = features[si];
            var p = classifier.TrainAndPredict(train.Select(i => x[i]).ToArray(), run.TrainLabels[k], run.TrainWeights[k],
                test.Select(i => x[i]).ToArray(), subtypes.Count, DerivedSeed(settings.Seed, k, ri, si));
            for (int t = 0; t < test.Length; t++) predicted[si][test[t]] = p[t];
            lock (gate)
            {
                double? snr = settings.SnrLevels[si];
                unitDone?.Invoke(string.Create(System.Globalization.CultureInfo.InvariantCulture,
                    $"R={r:0.#} S/N={(snr is double v ? v.ToString(System.Globalization.CultureInfo.InvariantCulture) : "native")} fold {k + 1}/{settings.Folds}"));
            }
        });
        var trainTime = sw.Elapsed;
        var cells = new List<CalibrationCell>();
        var confusions = new List<ConfusionMatrix>();
        var summaries = new List<AccuracySummary>();
        var correct = new bool[levels][];
        for (int si = 0; si < levels; si++)
        {
            var pr = predicted[si];
            correct[si] = spectra.Select((s, i) => subtypes[pr[i]] == s.Subtype).ToArray();
            var predictions = spectra.Select((s, i) => new Prediction(s.ObjectId, s.Subtype, subtypes[pr[i]], s.PhaseDays)).ToArray();
            var score = RealisedSnr.Annotate(
                CalibrationScoring.Score(predictions, subtypes, taxonomy, settings.PhaseBins, r, settings.SnrLevels[si]),
                predictions, snrs[si], settings.PhaseBins, settings.SnrLevels[si]);
            cells.AddRange(score.Cells);
            confusions.AddRange(score.Confusions);
            summaries.Add(score.Summary);
        }
        return (new ResolutionOutcome(r, cells, confusions, summaries, correct) { EstimatedRedshift = estimated }, new CalibrationTimings(degradeTime, featureTime, trainTime, total.Elapsed));
    }

    // One redshift template per subtype and phase bin: features and velocities change with phase, and a template
    // mixing phases is smeared (measured in docs/calibration.md, "Redshift from the spectrum").
    private static string TemplateLabel(LibrarySpectrum s, IReadOnlyList<PhaseBin> bins) =>
        s.Subtype + " " + (bins.FirstOrDefault(b => s.PhaseDays >= b.FromDays && s.PhaseDays < b.ToDays)?.Name ?? "other");

    // The fold's templates' estimate, or their prior when the fold has none (every training row lacks a redshift).
    private static double EstimateRedshift(RedshiftTemplates? templates, double[] w, double[] flux, CalibrationRun run) =>
        templates is null ? run.PriorRedshift : RedshiftEstimation.Estimate(w, flux, templates).Redshift;

    /// <summary>
    /// The accuracy-model document from the outcomes of every R of <paramref name="run"/>'s grid (one each, in any
    /// order): cells, confusions and summaries in grid order, the equal-exposure view, baselines and the paired
    /// minimum-R table, which needs every R's per-spectrum outcomes at once.
    /// </summary>
    /// <exception cref="ArgumentException">An R of the grid has no outcome, or an outcome is for an R off the grid.</exception>
    public static AccuracyModelDocument Assemble(CalibrationRun run, IReadOnlyList<ResolutionOutcome> outcomes, string codeVersion)
    {
        var settings = run.Settings;
        var spectra = run.Library.Spectra;
        var resolutions = run.Resolutions.ToArray();
        var byR = new ResolutionOutcome[resolutions.Length];
        foreach (var o in outcomes)
        {
            int ri = Array.IndexOf(resolutions, o.Resolution);
            if (ri < 0) throw new ArgumentException($"An outcome is for R = {o.Resolution}, which is not on the grid.", nameof(outcomes));
            if (o.Correct.Count != settings.SnrLevels.Count || o.Correct.Any(c => c.Length != spectra.Count))
                throw new ArgumentException($"The outcome for R = {o.Resolution} does not match the library and S/N levels.", nameof(outcomes));
            byR[ri] = o;
        }
        if (Array.IndexOf(byR, null) is var missing and >= 0)
            throw new ArgumentException($"R = {resolutions[missing]} has no outcome.", nameof(outcomes));
        var subtypes = run.Subtypes;
        var taxonomy = run.Taxonomy;
        var summaries = byR.SelectMany(o => o.Summaries).ToList();
        var provenance = new CalibrationProvenance(run.Library.Fingerprint(), spectra.Count, run.Library.ObjectCount, run.Library.Synthetic, codeVersion,
            settings with { Resolutions = resolutions }, run.Classifier.Name);
        return new AccuracyModelDocument(SpectrumNoise.Convention, SpectrumNoise.ReferenceWavelengthAngstrom, subtypes, resolutions,
            settings.SnrLevels, settings.PhaseBins, byR.SelectMany(o => o.Cells).ToList(), byR.SelectMany(o => o.Confusions).ToList())
        {
            BroadClasses = taxonomy.Classes.Select(c => new BroadClass(c.Name, c.Subtypes.Where(subtypes.Contains).ToArray()))
                .Where(c => c.Subtypes.Count > 0).ToArray(),
            Summaries = summaries,
            EqualExposure = EqualExposureView.Build(summaries),
            Baselines = CalibrationScoring.Baselines(spectra.Select(s => s.Subtype).ToArray(), subtypes, taxonomy),
            MinimumResolution = MinimumResolutionTable.Build(
                settings.SnrLevels.SelectMany((snr, si) => CalibrationScoring.Paired(spectra.Select(s => (s.ObjectId, s.Subtype)).ToArray(),
                    resolutions, snr, byR.Select(o => o.Correct[si]).ToArray(), subtypes)).ToArray(),
                subtypes.Count, settings.MinimumResolutionTolerance, settings.Seed),
            Provenance = provenance,
            Synthetic = run.Library.Synthetic,
        };
    }

    /// <summary>
    /// The cross-validation splits the calibration uses: fold k tests the spectra that
    /// <see cref="GroupedFolds.Assign"/> put in fold k and trains on all others.
    /// </summary>
    public static IReadOnlyList<(int[] Train, int[] Test)> Splits(SpectralLibrary library, CalibrationSettings settings)
    {
        var spectra = library.Spectra;
        int[] fold = GroupedFolds.Assign(spectra.Select(s => (s.ObjectId, s.Subtype)).ToArray(), settings.Folds, settings.Seed);
        return Enumerable.Range(0, settings.Folds)
            .Select(k => (Enumerable.Range(0, spectra.Count).Where(i => fold[i] != k).ToArray(),
                          Enumerable.Range(0, spectra.Count).Where(i => fold[i] == k).ToArray()))
            .ToArray();
    }

    /// <summary>
    /// A seed derived from the run's seed and the indices of a draw (FNV-1a over the four values, then
    /// the SplitMix64 finaliser). Unlike <see cref="HashCode.Combine{T1, T2, T3, T4}"/>, whose seed is
    /// random per process, it is the same in every run, so a calibration is reproducible.
    /// </summary>
    public static int DerivedSeed(int seed, int a, int b, int c)
    {
        ulong h = 14695981039346656037UL;
        foreach (int v in (ReadOnlySpan<int>)[seed, a, b, c]) h = unchecked((h ^ (uint)v) * 1099511628211UL);
        h = unchecked((h ^ (h >> 30)) * 0xBF58476D1CE4E5B9UL);
        h = unchecked((h ^ (h >> 27)) * 0x94D049BB133111EBUL);
        return (int)((h ^ (h >> 31)) & int.MaxValue);
    }

    /// <summary>Per-class training weights: N/(K·n_c) when balanced (classes absent from the fold get 0), else 1.</summary>
    public static float[] ClassWeights(int[] labels, int classCount, bool balanced)
    {
        var w = new float[classCount];
        if (!balanced) { Array.Fill(w, 1f); return w; }
        var n = new int[classCount];
        foreach (int l in labels) n[l]++;
        int present = n.Count(c => c > 0);
        for (int c = 0; c < classCount; c++) w[c] = n[c] == 0 ? 0 : (float)(labels.Length / (double)(present * n[c]));
        return w;
    }
}

/// <summary>
/// The outcome of one R of a calibration grid: its cells, confusion matrices and one summary per S/N level (in level
/// order), and per S/N level whether each library spectrum (in library order) was classified correctly out of fold.
/// </summary>
/// <param name="Resolution">The R (a value of the grid).</param>
/// <param name="Correct">Correct[si][i]: spectrum i right at S/N level si (the paired outcomes of the minimum-R table).</param>
public sealed record ResolutionOutcome(
    double Resolution,
    IReadOnlyList<CalibrationCell> Cells,
    IReadOnlyList<ConfusionMatrix> Confusions,
    IReadOnlyList<AccuracySummary> Summaries,
    IReadOnlyList<bool[]> Correct)
{
    /// <summary>
    /// EstimatedRedshift[si][i]: the redshift estimated from spectrum i at S/N level si (null for rows with a given
    /// redshift, which is used as it is). Empty when not recorded.
    /// </summary>
    public IReadOnlyList<double?[]> EstimatedRedshift { get; init; } = [];
}

/// <summary>
/// What every R of one calibration shares: the library, subtypes present, the sorted grid, the grouped folds with their
/// labels and class weights, and the classifier. Preparing it twice from the same inputs gives the same run.
/// </summary>
public sealed class CalibrationRun
{
    private CalibrationRun(SpectralLibrary library, Taxonomy taxonomy, CalibrationSettings settings, string[] subtypes, double[] resolutions,
        IReadOnlyList<(int[] Train, int[] Test)> splits, int[][] trainLabels, float[][] trainWeights, ISubtypeClassifier classifier)
    {
        Library = library; Taxonomy = taxonomy; Settings = settings; Subtypes = subtypes; Resolutions = resolutions;
        Splits = splits; TrainLabels = trainLabels; TrainWeights = trainWeights; Classifier = classifier;
        // What does not depend on R is computed once per spectrum: its pixel bins and the noise it carries.
        var spectra = library.Spectra;
        WithoutRedshift = library.WithoutRedshiftCount;
        TestFold = new int[spectra.Count];
        for (int k = 0; k < splits.Count; k++)
            foreach (int i in splits[k].Test) TestFold[i] = k;
        var known = spectra.Where(s => s.Redshift is not null).Select(s => s.Redshift!.Value).Order().ToArray();
        PriorRedshift = known.Length == 0 ? 0 : known[known.Length / 2];
        Bins = new PixelBins[spectra.Count];
        InputNoise = new InputNoiseSources[spectra.Count];
        // Spectra sampled at the same wavelengths with the same source R share their bins and, per R, one degradation operator.
        var groups = new Dictionary<(double[] Wavelengths, double? Source), List<int>>(new GridKeyComparer());
        for (int i = 0; i < spectra.Count; i++)
        {
            var key = (spectra[i].Spectrum.WavelengthAngstrom, spectra[i].SourceResolution);
            if (!groups.TryGetValue(key, out var members)) groups[key] = members = [];
            members.Add(i);
        }
        GridGroups = groups.Values.Select(m => new GridGroup(m.ToArray())).ToArray();
        var groupOf = new int[spectra.Count];
        for (int gi = 0; gi < GridGroups.Count; gi++) foreach (int i in GridGroups[gi].Members) groupOf[i] = gi;
        var groupBins = new PixelBins[GridGroups.Count];
        Parallel.For(0, GridGroups.Count, gi => groupBins[gi] = PixelBins.Of(spectra[GridGroups[gi].Members[0]].Spectrum.WavelengthAngstrom));
        Parallel.For(0, spectra.Count, i =>
        {
            Bins[i] = groupBins[groupOf[i]];
            InputNoise[i] = InputNoiseSources.Of(spectra[i].Spectrum, spectra[i].NoiseFree);
        });
    }

    /// <summary>Spectra of the library (indices) sampled at one wavelength array with one source resolution.</summary>
    internal sealed record GridGroup(int[] Members);

    /// <summary>The spectra grouped by wavelength array and source resolution, each group in library order.</summary>
    internal IReadOnlyList<GridGroup> GridGroups { get; }

    private sealed class GridKeyComparer : IEqualityComparer<(double[] Wavelengths, double? Source)>
    {
        public bool Equals((double[] Wavelengths, double? Source) a, (double[] Wavelengths, double? Source) b) =>
            Nullable.Equals(a.Source, b.Source) && (ReferenceEquals(a.Wavelengths, b.Wavelengths) || a.Wavelengths.AsSpan().SequenceEqual(b.Wavelengths));

        public int GetHashCode((double[] Wavelengths, double? Source) k)
        {
            var w = k.Wavelengths;
            return HashCode.Combine(w.Length, w.Length > 0 ? w[0] : 0, w.Length > 0 ? w[^1] : 0, w.Length > 1 ? w[w.Length / 2] : 0, k.Source);
        }
    }

    /// <summary>The spectral library.</summary>
    public SpectralLibrary Library { get; }

    /// <summary>The taxonomy (subtypes and broad classes).</summary>
    public Taxonomy Taxonomy { get; }

    /// <summary>The settings as given (their <see cref="CalibrationSettings.Resolutions"/> may be null).</summary>
    public CalibrationSettings Settings { get; }

    /// <summary>The taxonomy's subtypes present in the library, in taxonomy order.</summary>
    public IReadOnlyList<string> Subtypes { get; }

    /// <summary>The grid, ascending (the settings' values, or the default grid up to the library's lowest source R).</summary>
    public IReadOnlyList<double> Resolutions { get; }

    internal IReadOnlyList<(int[] Train, int[] Test)> Splits { get; }

    internal int[][] TrainLabels { get; }

    internal float[][] TrainWeights { get; }

    internal ISubtypeClassifier Classifier { get; }

    internal PixelBins[] Bins { get; }

    /// <summary>Spectra of the library without a given redshift (estimated from the spectrum at every R and S/N).</summary>
    public int WithoutRedshift { get; }

    // TestFold[i]: the fold that tests spectrum i; PriorRedshift: the median given redshift, for a fold without templates.
    internal int[] TestFold { get; }

    internal double PriorRedshift { get; }

    internal InputNoiseSources[] InputNoise { get; }

    /// <summary>Checks the library and grid and prepares the folds.</summary>
    /// <exception cref="ArgumentException">A grid R exceeds a spectrum's source resolution or is below
    /// <see cref="CalibrationSettings.MinimumResolution"/>, no resolution is known, or fewer than two subtypes.</exception>
    public static CalibrationRun Prepare(SpectralLibrary library, Taxonomy taxonomy, CalibrationSettings settings, ISubtypeClassifier? classifier = null)
    {
        var spectra = library.Spectra;
        var subtypes = taxonomy.Subtypes.Where(s => spectra.Any(x => x.Subtype == s)).ToArray();
        if (subtypes.Length < 2) throw new ArgumentException("The library needs at least two subtypes to calibrate.", nameof(library));
        double? maxR = library.MinSourceResolution;
        var resolutions = (settings.Resolutions ?? CalibrationSettings.DefaultResolutions(maxR ?? throw new ArgumentException(
            "No spectrum declares source_resolution; give the resolutions explicitly.", nameof(library)))).OrderBy(r => r).ToArray();
        if (maxR is double top && resolutions.Any(r => r > top * (1 + 1e-9)))
            throw new ArgumentException($"The grid asks for R = {resolutions.Max()} but the library's lowest source resolution is {top}.", nameof(settings));
        if (resolutions.Length == 0 || resolutions[0] < CalibrationSettings.MinimumResolution)
            throw new ArgumentException($"The grid needs R values of at least {CalibrationSettings.MinimumResolution}.", nameof(settings));
        var labelIndex = subtypes.Select((s, i) => (s, i)).ToDictionary(p => p.s, p => p.i, StringComparer.Ordinal);
        int[] labels = spectra.Select(s => labelIndex[s.Subtype]).ToArray();
        // Rows without a redshift are tested (with an estimated one) but never trained on: their features would
        // depend on templates, and templates must not see the held-out fold.
        var splits = CalibrationPipeline.Splits(library, settings)
            .Select(sp => (Train: sp.Train.Where(i => spectra[i].Redshift is not null).ToArray(), sp.Test)).ToArray();
        var trainLabels = splits.Select(sp => sp.Train.Select(i => labels[i]).ToArray()).ToArray();
        var trainWeights = trainLabels.Select(l =>
        {
            var w = CalibrationPipeline.ClassWeights(l, subtypes.Length, settings.BalancedClassWeights);
            return l.Select(c => w[c]).ToArray();
        }).ToArray();
        return new CalibrationRun(library, taxonomy, settings, subtypes, resolutions, splits, trainLabels, trainWeights,
            classifier ?? SubtypeClassifiers.Create(settings.Model, settings.ClassifierPasses));
    }
}
