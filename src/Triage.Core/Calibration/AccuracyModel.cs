namespace Triage.Core.Calibration;

/// <summary>
/// A phase bin of the calibration grid: spectra whose phase (rest-frame days from peak)
/// lies in [<paramref name="FromDays"/>, <paramref name="ToDays"/>).
/// </summary>
public sealed record PhaseBin(string Name, double FromDays, double ToDays);

/// <summary>
/// One cell of the accuracy model: how well <paramref name="Subtype"/> is recognised at
/// resolving power <paramref name="Resolution"/>, S/N per resolution element
/// <paramref name="Snr"/> (null: the library's native S/N, no noise added) and phase bin.
/// </summary>
/// <param name="Recall">Fraction of the subtype's spectra classified as that subtype (the expected accuracy).</param>
/// <param name="RecallLow">Lower end of the object-level 95 % interval of the recall (<see cref="ClusteredProportion"/>).</param>
/// <param name="RecallHigh">Upper end of the object-level 95 % interval of the recall.</param>
/// <param name="Precision">Fraction of spectra labelled <paramref name="Subtype"/> that truly are.</param>
/// <param name="Spectra">Number of test spectra of the subtype in the cell.</param>
/// <param name="Objects">Number of distinct objects behind those spectra.</param>
public sealed record CalibrationCell(
    string Subtype,
    double Resolution,
    double? Snr,
    string PhaseBin,
    double Recall,
    double RecallLow,
    double RecallHigh,
    double Precision,
    int Spectra,
    int Objects)
{
    /// <summary>
    /// n/deff: the number of independent spectra the cell's sample is worth, between <see cref="Objects"/> and
    /// <see cref="Spectra"/> (null in documents written before object-level intervals).
    /// </summary>
    public double? EffectiveSpectra { get; init; }

    /// <summary>Design effect deff ≥ 1 of the recall (within-object correlation), null in older documents.</summary>
    public double? DesignEffect { get; init; }
}

/// <summary>
/// Confusion counts at one grid point: <c>Counts[i][j]</c> spectra of true label
/// <c>Labels[i]</c> were classified as <c>Labels[j]</c>. Phase bin "all" pools every phase.
/// </summary>
public sealed record ConfusionMatrix(
    double Resolution,
    double? Snr,
    string PhaseBin,
    IReadOnlyList<string> Labels,
    IReadOnlyList<IReadOnlyList<int>> Counts);

/// <summary>
/// The whole accuracy model as the calibration writes it and the planner reads it (the
/// calibration JSON). S/N is per resolution element at <see cref="SnrReferenceWavelengthAngstrom"/>
/// on the continuum: the convention shared by calibration, exposure model and planner.
/// Producers may add members; consumers rely on these.
/// </summary>
public sealed record AccuracyModelDocument(
    string SnrConvention,
    double SnrReferenceWavelengthAngstrom,
    IReadOnlyList<string> Subtypes,
    IReadOnlyList<double> Resolutions,
    IReadOnlyList<double?> SnrLevels,
    IReadOnlyList<PhaseBin> PhaseBins,
    IReadOnlyList<CalibrationCell> Cells,
    IReadOnlyList<ConfusionMatrix> Confusions)
{
    /// <summary>Broad classes (name and member subtypes) used for broad-class accuracy.</summary>
    public IReadOnlyList<Triage.Core.Spectra.BroadClass> BroadClasses { get; init; } = [];

    /// <summary>Overall and broad-class accuracy per (R, S/N), all phases pooled.</summary>
    public IReadOnlyList<AccuracySummary> Summaries { get; init; } = [];

    /// <summary>Chance and majority baselines of the library.</summary>
    public CalibrationBaselines? Baselines { get; init; }

    /// <summary>Per subtype and S/N: the lowest R keeping recall near its best, and the R below which it is chance.</summary>
    public IReadOnlyList<MinimumResolutionRow> MinimumResolution { get; init; } = [];

    /// <summary>Where the numbers came from: library fingerprint, settings, code version.</summary>
    public CalibrationProvenance? Provenance { get; init; }

    /// <summary>
    /// The equal-exposure view: accuracy along curves of fixed photons per Å (S/N per element ∝ √(R_ref/R)), see
    /// <see cref="EqualExposureView"/>. Empty in documents written before it existed.
    /// </summary>
    public IReadOnlyList<EqualExposurePoint> EqualExposure { get; init; } = [];

    /// <summary>True when computed from a synthetic (demo) library.</summary>
    public bool Synthetic { get; init; }
}

/// <summary>
/// Accuracy over all phases at one (R, S/N): the fraction of spectra whose subtype (and
/// broad class) was predicted correctly, with object-level 95 % intervals, and the mean per-subtype recall.
/// </summary>
public sealed record AccuracySummary(
    double Resolution,
    double? Snr,
    double Accuracy,
    double AccuracyLow,
    double AccuracyHigh,
    double BroadAccuracy,
    double BroadAccuracyLow,
    double BroadAccuracyHigh,
    double BalancedAccuracy,
    int Spectra);

/// <summary>
/// Baselines: a uniform guess over K subtypes scores 1/K; always answering the commonest subtype
/// scores its share of the spectra. The same for broad classes.
/// </summary>
public sealed record CalibrationBaselines(
    double UniformGuess,
    double MajorityClass,
    string MajoritySubtype,
    double UniformGuessBroad,
    double MajorityClassBroad,
    string MajorityBroadClass);

/// <summary>
/// The minimum-R data product for one subtype at one S/N (phases pooled).
/// </summary>
/// <param name="BestRecall">Best recall over the R grid corrected for choosing the maximum of many noisy points: the recall at the R
/// chosen by one half of the objects, measured on the other half (cross-fitted, 100 splits); the raw maximum is
/// <see cref="MinimumResolutionRow.BestRecallObserved"/>.</param>
/// <param name="BestResolution">Grid R of the highest observed recall.</param>
/// <param name="MinimumResolution">Lowest grid R whose recall is within the tolerance of the (corrected) best, with no higher grid R
/// significantly (paired object-level bootstrap, 95 %) beyond the tolerance.</param>
/// <param name="MinimumResolutionBracketLow">The next lower grid R (the true threshold lies between; null at the grid's bottom).</param>
/// <param name="RecallAtMinimum">Recall at <paramref name="MinimumResolution"/>, with its object-level interval.</param>
/// <param name="ChanceRecall">Recall of a uniform guess, 1/K.</param>
/// <param name="DistinguishableFromResolution">Lowest grid R from which the recall's object-level lower bound exceeds chance at every higher R; null if never.</param>
/// <param name="ChanceBelowResolution">The grid R just below it, where recall is not distinguishable from chance (null: distinguishable over the whole grid).</param>
public sealed record MinimumResolutionRow(
    string Subtype,
    double? Snr,
    double Tolerance,
    double BestRecall,
    double BestResolution,
    double MinimumResolution,
    double? MinimumResolutionBracketLow,
    double RecallAtMinimum,
    double RecallAtMinimumLow,
    double RecallAtMinimumHigh,
    double ChanceRecall,
    double? DistinguishableFromResolution,
    double? ChanceBelowResolution,
    double? RecallAtChanceBelow,
    double? RecallAtChanceBelowHigh)
{
    /// <summary>The raw maximum of the recall over the grid (biased upward; kept for comparison). Null in older documents.</summary>
    public double? BestRecallObserved { get; init; }
}

/// <summary>Provenance of a calibration: what library, which settings, which code.</summary>
public sealed record CalibrationProvenance(
    string LibraryFingerprint,
    int LibrarySpectra,
    int LibraryObjects,
    bool SyntheticLibrary,
    string CodeVersion,
    CalibrationSettings Settings,
    string Classifier);
