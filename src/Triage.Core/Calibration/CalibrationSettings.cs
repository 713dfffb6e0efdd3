using Triage.Core.Spectra;

namespace Triage.Core.Calibration;

/// <summary>
/// Settings of a calibration run (recorded in the calibration JSON). Defaults are the choices
/// measured in docs/calibration.md.
/// </summary>
public sealed record CalibrationSettings
{
    /// <summary>
    /// The lowest resolving power a calibration grid may hold: 5, the floor of <see cref="DefaultResolutions"/> and the
    /// lowest R the low-R feature grid is built and measured for (docs/calibration.md, "Low R"). Below it a 3500–9200 Å
    /// spectrum spans fewer than about five resolution elements.
    /// </summary>
    public const double MinimumResolution = 5;

    /// <summary>Resolving powers of the grid (each ≥ <see cref="MinimumResolution"/>); null: <see cref="DefaultResolutions"/> for the library's resolution.</summary>
    public IReadOnlyList<double>? Resolutions { get; init; }

    /// <summary>
    /// S/N per resolution element levels; null in the list means native (no noise added beyond the library's own). Default
    /// 5, 10, 20: numeric levels only, because the planner reads numeric cells only and the native column of a noise-free
    /// model library has no S/N to place it at.
    /// </summary>
    public IReadOnlyList<double?> SnrLevels { get; init; } = DefaultSnrLevels;

    /// <summary>The default S/N levels: 5, 10, 20 per resolution element.</summary>
    public static IReadOnlyList<double?> DefaultSnrLevels { get; } = [5, 10, 20];

    /// <summary>Phase bins. Default <see cref="DefaultPhaseBins"/>.</summary>
    public IReadOnlyList<PhaseBin> PhaseBins { get; init; } = DefaultPhaseBins;

    /// <summary>Folds of the grouped cross-validation. Default 5.</summary>
    public int Folds { get; init; } = 5;

    /// <summary>Seed of folds and noise. Default 1.</summary>
    public int Seed { get; init; } = 1;

    /// <summary>Pixels per resolution element of degraded spectra. Default 2.</summary>
    public double PixelsPerElement { get; init; } = 2;

    /// <summary>Feature extraction. Default <see cref="PreprocessOptions"/> defaults.</summary>
    public PreprocessOptions Preprocess { get; init; } = new();

    /// <summary>Classifier name (see Triage.Learning). Default "linear".</summary>
    public string Model { get; init; } = "linear";

    /// <summary>
    /// Passes over the training fold for the "linear" and "lbfgs" classifiers; null: the classifier's default (30 SDCA passes
    /// for "linear", docs/calibration.md "Classifier passes").
    /// </summary>
    public int? ClassifierPasses { get; init; }

    /// <summary>Weight each class by N/(K·n_class) in training (favours per-subtype recall). Default true.</summary>
    public bool BalancedClassWeights { get; init; } = true;

    /// <summary>Recall tolerance of the minimum-R table (fraction). Default 0.05 (5 points).</summary>
    public double MinimumResolutionTolerance { get; init; } = 0.05;

    /// <summary>
    /// Default phase bins (rest-frame days from peak): before peak [−100, −3), around peak
    /// [−3, +5), early decline [+5, +25), late [+25, +1000).
    /// </summary>
    public static IReadOnlyList<PhaseBin> DefaultPhaseBins { get; } =
    [
        new("before-peak", -100, -3),
        new("around-peak", -3, 5),
        new("early-decline", 5, 25),
        new("late", 25, 1000),
    ];

    /// <summary>The name of the pooled phase bin.</summary>
    public const string AllPhases = "all";

    /// <summary>
    /// Top of the default grid when the library reaches it: R = 4000, the highest resolving power the default grid
    /// calibrates exactly (a spectrograph above it is read at 4000, the surface's edge).
    /// </summary>
    public const double DefaultTopResolution = 4000;

    /// <summary>
    /// Twelve resolving powers log-spaced from 5 to min(<paramref name="maxResolution"/>, <see cref="DefaultTopResolution"/>),
    /// rounded to two significant digits below 100 and three above; the first is exactly 5 and the last exactly the top.
    /// </summary>
    /// <param name="maxResolution">The library's lowest source resolution (the grid may not exceed it).</param>
    /// <param name="count">Number of grid points (≥ 2).</param>
    /// <param name="minResolution">Lowest R of the grid.</param>
    public static IReadOnlyList<double> DefaultResolutions(double maxResolution, int count = 12, double minResolution = MinimumResolution)
    {
        double top = Math.Min(maxResolution, DefaultTopResolution);
        var r = new double[count];
        for (int i = 0; i < count; i++)
        {
            double v = minResolution * Math.Pow(top / minResolution, i / (double)(count - 1));
            r[i] = i == count - 1 ? top : i == 0 ? minResolution : RoundSignificant(v, v < 100 ? 2 : 3);
        }
        return r;
    }

    private static double RoundSignificant(double v, int digits)
    {
        int decimals = digits - 1 - (int)Math.Floor(Math.Log10(v));
        // Math.Round to decimal places gives the nearest double to the short decimal (9.2, not 9.200000000000001).
        if (decimals >= 0) return Math.Round(v, decimals);
        double scale = Math.Pow(10, -decimals);
        return Math.Round(v / scale) * scale;
    }
}
