// Preprocessing of a degraded spectrum into a classifier feature vector.
//
// 1. Rest frame: λ_rest = λ_obs / (1 + z), then flux-conserving binning onto a common grid
//    uniform in ln λ over [λ_a, λ_b] with P pixels per element λ/R (at most MaxBins bins).
// 2. Normalisation: divide by the mean flux (distance and exposure carry no class information).
// 3. Continuum: a least-squares polynomial c(t) of low degree in t = scaled ln λ ∈ [−1, 1];
//    features are f/c − 1 (line strengths), and optionally log(c(t_k)/c̄) at a few t_k (the
//    colour, a low-frequency component that dividing would otherwise throw away); or ln(f) per bin
//    (LogFlux: dust and calibration tilts become additive). The choice may differ below a resolving power
//    (PreprocessOptions.LowResolutionBelow), measured per R band in docs/calibration.md.
// Bins outside the spectrum's coverage take the nearest covered value.
// References:
//  1. Blondin, S. & Tonry, J. L., "Determining the type, redshift, and age of a supernova spectrum",
//     ApJ 666, 1024 (2007), §2 (log-λ binning, continuum removal by a smooth fit).
//  2. Tonry, J. & Davis, M., "A survey of galaxy redshifts. I.", AJ 84, 1511 (1979), §III (log-λ grids).
namespace Triage.Core.Spectra;

/// <summary>How the continuum is treated.</summary>
public enum ContinuumHandling
{
    /// <summary>Keep the normalised flux as is (shape and lines together).</summary>
    Keep,

    /// <summary>Divide by a smooth polynomial continuum (lines only).</summary>
    Divide,

    /// <summary>Divide, and append the continuum's colour at a few wavelengths (default).</summary>
    DivideKeepColour,

    /// <summary>
    /// ln of the mean-normalised flux per bin (all colours at once): dust and flux-calibration tilts become additive
    /// and smooth, which a linear model can discount; measured per R band in docs/calibration.md.
    /// </summary>
    LogFlux,
}

/// <summary>Options of <see cref="Preprocessing"/>; defaults are the measured choices in docs/calibration.md.</summary>
public sealed record PreprocessOptions
{
    /// <summary>Blue edge of the common rest-frame grid (Å). Default 3600.</summary>
    public double RestFromAngstrom { get; init; } = 3600;

    /// <summary>Red edge of the common rest-frame grid (Å). Default 8600 (covered up to z ≈ 0.07 by a 9200 Å red limit).</summary>
    public double RestToAngstrom { get; init; } = 8600;

    /// <summary>Pixels per resolution element of the feature grid. Default 2.</summary>
    public double PixelsPerElement { get; init; } = 2;

    /// <summary>
    /// Upper bound on the number of flux bins; beyond it bins merge (2 pixels per element up to R ≈ 58). Default 100:
    /// measured against 150 and 200 in docs/calibration.md ("Feature grid size"): finer bins add features the training
    /// folds cannot support (lower mean recall on both test libraries).
    /// </summary>
    public int MaxBins { get; init; } = 100;

    /// <summary>Continuum treatment. Default <see cref="ContinuumHandling.DivideKeepColour"/>.</summary>
    public ContinuumHandling Continuum { get; init; } = ContinuumHandling.DivideKeepColour;

    /// <summary>Degree of the continuum polynomial in scaled ln λ. Default 3.</summary>
    public int ContinuumDegree { get; init; } = 3;

    /// <summary>Colour points appended with <see cref="ContinuumHandling.DivideKeepColour"/>. Default 6.</summary>
    public int ColourPoints { get; init; } = 6;

    /// <summary>
    /// Lower bound on the number of flux bins: below R ≈ 23 the grid is oversampled (2 pixels per element would leave
    /// only 9 bins at R = 5). Default 40, measured in docs/calibration.md ("Low R").
    /// </summary>
    public int MinBins { get; init; } = 40;

    /// <summary>
    /// Below this resolving power <see cref="LowResolution"/> replaces these options (a feature choice per R band).
    /// Default 0: one choice for every R.
    /// </summary>
    public double LowResolutionBelow { get; init; }

    /// <summary>Options used below <see cref="LowResolutionBelow"/> (their own band settings are ignored); null: none.</summary>
    public PreprocessOptions? LowResolution { get; init; }

    /// <summary>The options in force at resolving power <paramref name="resolution"/>.</summary>
    public PreprocessOptions At(double resolution) =>
        LowResolution is { } low && resolution < LowResolutionBelow ? low with { LowResolutionBelow = 0, LowResolution = null } : this;
}

/// <summary>Turns degraded spectra into fixed-length feature vectors.</summary>
public static class Preprocessing
{
    /// <summary>Number of flux bins of the common rest-frame grid at resolving power R.</summary>
    public static int BinCount(double resolution, PreprocessOptions o)
    {
        o = o.At(resolution);
        return Math.Clamp((int)Math.Round(resolution * o.PixelsPerElement * Math.Log(o.RestToAngstrom / o.RestFromAngstrom)),
            Math.Min(Math.Max(4, o.MinBins), o.MaxBins), o.MaxBins);
    }

    /// <summary>Length of the feature vector at resolving power R.</summary>
    public static int FeatureLength(double resolution, PreprocessOptions o) =>
        BinCount(resolution, o) + (o.At(resolution).Continuum == ContinuumHandling.DivideKeepColour ? o.At(resolution).ColourPoints : 0);

    /// <summary>
    /// Feature vector of a spectrum sampled at <paramref name="wavelengthAngstrom"/> (observed frame).
    /// </summary>
    /// <exception cref="ArgumentException">The spectrum does not overlap the common rest-frame grid.</exception>
    public static float[] Features(ReadOnlySpan<double> wavelengthAngstrom, ReadOnlySpan<double> flux, double redshift,
        double resolution, PreprocessOptions o)
    {
        o = o.At(resolution);
        int bins = BinCount(resolution, o);
        var grid = LogWavelengthGrid.WithCount(o.RestFromAngstrom, o.RestToAngstrom, bins);
        double[] rest;
        if (AllFinite(wavelengthAngstrom, flux))
        {
            rest = FluxRebinning.ToGrid(wavelengthAngstrom, flux, grid, 1.0 / (1.0 + redshift));
        }
        else
        {
            var (w, f) = Finite(wavelengthAngstrom, flux);
            rest = FluxRebinning.ToGrid(w, f, grid, 1.0 / (1.0 + redshift));
        }
        FillGaps(rest);

        double mean = rest.Average();
        if (!(Math.Abs(mean) > 0)) mean = 1;
        for (int i = 0; i < bins; i++) rest[i] /= mean;

        int colours = o.Continuum == ContinuumHandling.DivideKeepColour ? o.ColourPoints : 0;
        var features = new float[bins + colours];
        if (o.Continuum == ContinuumHandling.Keep)
        {
            for (int i = 0; i < bins; i++) features[i] = (float)rest[i];
            return features;
        }
        if (o.Continuum == ContinuumHandling.LogFlux)
        {
            for (int i = 0; i < bins; i++) features[i] = (float)Math.Log(Math.Max(LogFloor, rest[i]));
            return features;
        }
        var t = ScaledAxis(bins);
        int degree = Math.Min(o.ContinuumDegree, bins - 1);
        var coeffs = ContinuumCoefficients(rest, degree);
        double floor = 0.05;
        for (int i = 0; i < bins; i++)
            features[i] = (float)(rest[i] / Math.Max(floor, Poly(coeffs, t[i])) - 1.0);
        for (int k = 0; k < colours; k++)
        {
            double tk = colours == 1 ? 0 : -1 + 2.0 * k / (colours - 1);
            features[bins + k] = (float)Math.Log(Math.Max(floor, Poly(coeffs, tk)));
        }
        return features;
    }

    /// <summary>
    /// Least-squares coefficients c₀…c_d (constant first) of the polynomial of degree <paramref name="degree"/> through
    /// <paramref name="values"/> at t uniformly spaced on [−1, 1] (t = 0 for one value): the result of MathNet's
    /// <c>Fit.Polynomial</c> (Householder QR of the Vandermonde matrix) bit for bit, with the factorisation kept per
    /// (length, degree) on each thread, since every spectrum at one R shares the axis.
    /// </summary>
    /// <exception cref="ArgumentException">Fewer values than coefficients.</exception>
    public static double[] ContinuumCoefficients(double[] values, int degree)
    {
        ArgumentNullException.ThrowIfNull(values);
        if (degree < 0 || values.Length < degree + 1) throw new ArgumentException($"{values.Length} values cannot fit degree {degree}.", nameof(values));
        var fits = _continuumFits ??= [];
        if (!fits.TryGetValue((values.Length, degree), out var qr))
        {
            var t = ScaledAxis(values.Length);
            fits[(values.Length, degree)] = qr = MathNet.Numerics.LinearAlgebra.Matrix<double>.Build.Dense(values.Length, degree + 1, (i, j) => Math.Pow(t[i], j)).QR();
        }
        return qr.Solve(MathNet.Numerics.LinearAlgebra.Vector<double>.Build.Dense(values)).ToArray();
    }

    // The factorisations are immutable once made; one table per thread keeps them free of locks.
    [ThreadStatic]
    private static Dictionary<(int Length, int Degree), MathNet.Numerics.LinearAlgebra.Factorization.QR<double>>? _continuumFits;

    private static double[] ScaledAxis(int bins)
    {
        var t = new double[bins];
        for (int i = 0; i < bins; i++) t[i] = bins == 1 ? 0 : -1 + 2.0 * i / (bins - 1);
        return t;
    }

    // Flux below 1 % of the mean (noise at a blue edge) is clipped before the logarithm.
    private const double LogFloor = 0.01;

    private static double Poly(double[] c, double t)
    {
        double v = 0;
        for (int i = c.Length - 1; i >= 0; i--) v = v * t + c[i];
        return v;
    }

    internal static (double[] W, double[] F) Finite(ReadOnlySpan<double> w, ReadOnlySpan<double> f)
    {
        int count = 0;
        for (int i = 0; i < w.Length; i++)
            if (double.IsFinite(w[i]) && double.IsFinite(f[i])) count++;
        if (count < 2) throw new ArgumentException("The spectrum has fewer than two finite samples.", nameof(f));
        var ww = new double[count];
        var ff = new double[count];
        for (int i = 0, j = 0; i < w.Length; i++)
            if (double.IsFinite(w[i]) && double.IsFinite(f[i])) { ww[j] = w[i]; ff[j++] = f[i]; }
        return (ww, ff);
    }

    private static bool AllFinite(ReadOnlySpan<double> w, ReadOnlySpan<double> f)
    {
        if (w.Length < 2) return false;
        for (int i = 0; i < w.Length; i++)
            if (!double.IsFinite(w[i]) || !double.IsFinite(f[i])) return false;
        return true;
    }

    private static void FillGaps(double[] v)
    {
        int first = Array.FindIndex(v, x => !double.IsNaN(x));
        if (first < 0) throw new ArgumentException("The spectrum does not overlap the common rest-frame grid.");
        for (int i = 0; i < first; i++) v[i] = v[first];
        for (int i = first + 1; i < v.Length; i++)
            if (double.IsNaN(v[i])) v[i] = v[i - 1];
    }
}
