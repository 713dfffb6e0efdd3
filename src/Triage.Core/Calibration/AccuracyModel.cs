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
/// <param name="RecallLow">Lower end of the Wilson 95% interval of the recall.</param>
/// <param name="RecallHigh">Upper end of the Wilson 95% interval of the recall.</param>
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
    int Objects);

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
    IReadOnlyList<ConfusionMatrix> Confusions);
