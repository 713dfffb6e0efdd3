// Noise for a target S/N per resolution element, counting the noise already present.
//
// Convention shared by calibration, exposure model and planner: S/N is per resolution
// element Δλ = λ/R, measured on the continuum at the reference wavelength λ_ref (6000 Å,
// observed frame), on the element's sum of P pixels: S/N = P f_ref / σ(Σ) = f_ref / σ_e, where
// σ_e is the noise of the mean flux density over one element.
// Level f_ref: median flux within λ_ref ± 5 % when that window holds ≥ 5 pixels (a median
// ignores lines narrower than the window), else the linear interpolation in ln λ between the
// two pixel centres around λ_ref (at R ≲ 25 the window is narrower than two pixels).
// Noise present in an input whose pixels (bins of width δ in ln λ) carry independent noise σ:
// a flat noise density N₀ = σ² δ per unit ln λ. After a Gaussian kernel of σ_k and averaging
// over an element of width W = 1/R, Var(mean) = N₀ ∫ (k ∗ b_W)² dx = σ² δ R · J, with
//   J = (1/W) ∫_{−W}^{W} (1 − |u|/W) g_{√2σ_k}(u) du
//     = (2Φ(W/s) − 1) − (2s/(W√(2π)))(1 − e^{−W²/2s²}),  s = √2 σ_k   (J = 1 without smoothing).
// Adding noise for a target S takes only the shortfall: σ_add,e² = (f_ref/S)² − σ_present,e²,
// i.e. σ_add,pixel = √P σ_add,e (pixels independent). S above f_ref/σ_present,e is unreachable.
// σ per input pixel comes from the error column when there is one, else from DER_SNR [1]:
//   σ = 1.482602/√6 · median |2fᵢ − fᵢ₋₂ − fᵢ₊₂|   (exact for Gaussian white noise on a signal
// linear over five pixels) over the input pixels within λ_ref ± 5 %.
// References:
//  1. Stoehr, F. et al., "DER_SNR: A simple & general spectroscopic signal-to-noise measurement algorithm",
//     ASP Conf. Ser. 394, 505 (2008), eq. 2.
//  2. Howell, S. B., "Handbook of CCD Astronomy", 2nd ed., ch. 4.4 (S/N of a summed resolution element).
//  3. Papoulis, A., "Probability, Random Variables and Stochastic Processes", 3rd ed., §9-2 (linear systems
//     with stochastic inputs: output variance = input density × ∫ h²).
//  4. Box, G. E. P. & Muller, M. E., "A note on the generation of random normal deviates", Ann. Math. Stat. 29, 610 (1958).
using System.Runtime.Intrinsics;

namespace Triage.Core.Spectra;

/// <summary>
/// Noise of an input spectrum near the reference wavelength: σ per input pixel and the pixel's width in ln λ.
/// </summary>
/// <param name="SigmaPerPixel">1σ noise of one input pixel (flux units); 0 for a noise-free input.</param>
/// <param name="PixelStepLn">Width of one input pixel in ln λ near the reference wavelength.</param>
/// <param name="Source">How it was obtained: "error column", "DER_SNR" or "noise-free".</param>
public readonly record struct InputNoise(double SigmaPerPixel, double PixelStepLn, string Source);

/// <summary>
/// The noise budget of one degraded spectrum at the reference wavelength: its continuum level and
/// the noise per element already in the flux.
/// </summary>
/// <param name="Level">Continuum level f_ref (flux density) of the degraded spectrum at the reference wavelength.</param>
/// <param name="PresentElementNoise">σ_e already present (noise of the element mean; 0 for a noise-free input).</param>
public readonly record struct NoiseBudget(double Level, double PresentElementNoise)
{
    /// <summary>Highest S/N per element reachable (f_ref/σ_e); +∞ for a noise-free input.</summary>
    public double ReachableSnr => PresentElementNoise > 0 ? Math.Abs(Level) / PresentElementNoise : double.PositiveInfinity;

    /// <summary>True when a target S/N is reachable (not above <see cref="ReachableSnr"/>, up to rounding 1e-9).</summary>
    public bool CanReach(double snrPerElement) => snrPerElement <= ReachableSnr * (1 + 1e-9);

    /// <summary>Element noise to add for a target S/N: √((f/S)² − σ_present²), 0 when unreachable.</summary>
    public double ShortfallElementNoise(double snrPerElement)
    {
        double target = Math.Abs(Level) / snrPerElement;
        return Math.Sqrt(Math.Max(0, target * target - PresentElementNoise * PresentElementNoise));
    }
}

/// <summary>The S/N convention, noise accounting and Gaussian noise for a target S/N per resolution element.</summary>
public static class SpectrumNoise
{
    /// <summary>Reference wavelength (Å, observed frame) at which S/N is quoted.</summary>
    public const double ReferenceWavelengthAngstrom = 6000;

    /// <summary>Minimum pixels in λ_ref ± 5 % for the median level; below it the level is interpolated.</summary>
    public const int MinimumWindowPixels = 5;

    /// <summary>DER_SNR's constant 1.482602/√6 (Stoehr et al. 2008, eq. 2).</summary>
    public static readonly double DerSnrConstant = 1.482602 / Math.Sqrt(6);

    /// <summary>The convention in words, as written into the calibration JSON.</summary>
    public const string Convention =
        "S/N per resolution element (Δλ = λ/R) on the element's sum, on the continuum at the reference wavelength (observed frame); " +
        "noise already in the library (error column, else DER_SNR) is counted and only the shortfall is added; " +
        "added noise is Gaussian with the wavelength shape of the error column when there is one, constant otherwise.";

    /// <summary>
    /// Continuum level at the reference wavelength: the median of finite flux within ±5 % when that
    /// holds at least <see cref="MinimumWindowPixels"/> pixels, else linear interpolation in ln λ
    /// between the pixel centres around it (nearest finite pixel at an edge). NaN if no finite flux.
    /// </summary>
    public static double ReferenceLevel(LogWavelengthGrid grid, ReadOnlySpan<double> flux, double referenceAngstrom = ReferenceWavelengthAngstrom)
    {
        var window = new List<double>();
        var (from, to) = grid.CandidateRange(0.95 * referenceAngstrom, 1.05 * referenceAngstrom);
        for (int i = from; i < to; i++)
        {
            if (double.IsNaN(flux[i])) continue;
            if (Math.Abs(grid.CentreAngstrom(i) - referenceAngstrom) <= 0.05 * referenceAngstrom) window.Add(flux[i]);
        }
        if (window.Count >= MinimumWindowPixels)
        {
            window.Sort();
            return window.Count % 2 == 1 ? window[window.Count / 2] : 0.5 * (window[window.Count / 2 - 1] + window[window.Count / 2]);
        }
        // Fractional pixel index of λ_ref: centres sit at i + 0.5 in units of the step.
        double x = Math.Log(referenceAngstrom / grid.StartAngstrom) / grid.StepLn - 0.5;
        int lo = (int)Math.Floor(x);
        int below = lo, above = lo + 1;
        while (below >= 0 && (below >= grid.Count || double.IsNaN(flux[below]))) below--;
        while (above < grid.Count && (above < 0 || double.IsNaN(flux[above]))) above++;
        if (below < 0 && above >= grid.Count) return double.NaN;
        if (below < 0) return flux[above];
        if (above >= grid.Count) return flux[below];
        double t = (x - below) / (above - below);
        return flux[below] + t * (flux[above] - flux[below]);
    }

    /// <summary>
    /// DER_SNR noise estimate per pixel (Stoehr et al. 2008, eq. 2): 1.482602/√6 · median |2fᵢ − fᵢ₋₂ − fᵢ₊₂|
    /// over the finite values; NaN with fewer than five values.
    /// </summary>
    public static double DerSnrNoise(ReadOnlySpan<double> flux)
    {
        var finite = new List<double>(flux.Length);
        foreach (double v in flux) if (double.IsFinite(v)) finite.Add(v);
        if (finite.Count < 5) return double.NaN;
        var d = new double[finite.Count - 4];
        for (int i = 2; i < finite.Count - 2; i++) d[i - 2] = Math.Abs(2 * finite[i] - finite[i - 2] - finite[i + 2]);
        Array.Sort(d);
        double median = d.Length % 2 == 1 ? d[d.Length / 2] : 0.5 * (d[d.Length / 2 - 1] + d[d.Length / 2]);
        return DerSnrConstant * median;
    }

    /// <summary>
    /// Noise per input pixel near the reference wavelength: 0 for <paramref name="noiseFree"/> input, the
    /// median error within λ_ref ± 5 % when the spectrum has an error column, else DER_SNR over those pixels
    /// (the whole spectrum when fewer than 20 pixels fall there).
    /// </summary>
    public static InputNoise MeasureInputNoise(Spectrum spectrum, bool noiseFree, double referenceAngstrom = ReferenceWavelengthAngstrom)
    {
        var w = spectrum.WavelengthAngstrom;
        int from = LowerBound(w, referenceAngstrom * 0.95), to = LowerBound(w, referenceAngstrom * 1.05);
        if (to - from < 20) { from = 0; to = w.Length; }
        double step = to - from > 1 ? Math.Log(w[to - 1] / w[from]) / (to - from - 1) : Math.Log(w[^1] / w[0]) / Math.Max(1, w.Length - 1);
        if (noiseFree) return new InputNoise(0, step, "noise-free");
        if (spectrum.FluxError is { } err)
        {
            var e = err[from..to].Where(double.IsFinite).Order().ToArray();
            return new InputNoise(e.Length == 0 ? 0 : e[e.Length / 2], step, "error column");
        }
        double der = DerSnrNoise(spectrum.Flux.AsSpan(from, to - from));
        return new InputNoise(double.IsNaN(der) ? 0 : der, step, "DER_SNR");
    }

    /// <summary>
    /// J of the header: the factor by which a Gaussian kernel of σ <paramref name="sigmaKernelLn"/> (ln λ)
    /// reduces the variance of white noise averaged over an element of width <paramref name="elementWidthLn"/> (ln λ).
    /// 1 for σ = 0, falling towards 0 as σ grows; about 0.52 for a kernel of FWHM one element.
    /// </summary>
    public static double SmoothedElementVarianceFactor(double sigmaKernelLn, double elementWidthLn)
    {
        if (!(sigmaKernelLn > 0)) return 1;
        double s = Math.Sqrt(2) * sigmaKernelLn, a = elementWidthLn / s;
        return MathNet.Numerics.SpecialFunctions.Erf(a / Math.Sqrt(2))
               - 2 / (a * Math.Sqrt(2 * Math.PI)) * (1 - Math.Exp(-0.5 * a * a));
    }

    /// <summary>
    /// σ_e, the noise of the element mean at resolving power <paramref name="resolution"/> left by input noise
    /// <paramref name="input"/> after a Gaussian kernel of σ <paramref name="sigmaKernelLn"/>: √(σ² δ R J).
    /// </summary>
    public static double PropagatedElementNoise(InputNoise input, double resolution, double sigmaKernelLn)
    {
        double elementVariance = input.SigmaPerPixel * input.SigmaPerPixel * input.PixelStepLn * resolution
                                 * SmoothedElementVarianceFactor(sigmaKernelLn, 1.0 / resolution);
        // An element narrower than an input pixel cannot average below one pixel's noise.
        return Math.Sqrt(Math.Min(elementVariance, input.SigmaPerPixel * input.SigmaPerPixel));
    }

    /// <summary>
    /// Relative noise shape on <paramref name="grid"/> from an error column: √(mean σ²Δλ over each output bin / Δλ_bin),
    /// normalised to 1 at the reference wavelength; null when <paramref name="spectrum"/> has no error column.
    /// </summary>
    public static double[]? NoiseShape(Spectrum spectrum, LogWavelengthGrid grid, double referenceAngstrom = ReferenceWavelengthAngstrom) =>
        ErrorDensity(spectrum) is { } density
            ? ShapeOf(grid, FluxRebinning.ToGrid(spectrum.WavelengthAngstrom, density, grid), InverseWidths(grid), referenceAngstrom)
            : null;

    /// <summary>
    /// <see cref="NoiseShape"/> of many spectra sampled at the wavelengths <paramref name="binning"/> was built for, binned
    /// by its shared weights (equal to the one-by-one shapes to rounding).
    /// </summary>
    /// <exception cref="ArgumentException">A spectrum of another length than the binning's wavelength array.</exception>
    public static double[]?[] NoiseShapes(IReadOnlyList<Spectrum> spectra, NoiseShapeBinning binning, double referenceAngstrom = ReferenceWavelengthAngstrom)
    {
        ArgumentNullException.ThrowIfNull(spectra);
        ArgumentNullException.ThrowIfNull(binning);
        var withError = Enumerable.Range(0, spectra.Count).Where(i => spectra[i].FluxError is not null).ToArray();
        var binned = binning.Binning.Apply(withError.Select(i => Squares(spectra[i].FluxError!)).ToArray());
        var shapes = new double[]?[spectra.Count];
        for (int t = 0; t < withError.Length; t++) shapes[withError[t]] = ShapeOf(binning.Binning.Grid, binned[t], binning.InverseWidths, referenceAngstrom);
        return shapes;
    }

    private static double[] Squares(double[] values)
    {
        var squares = new double[values.Length];
        int i = 0;
        if (Vector512.IsHardwareAccelerated)
            for (; i <= values.Length - 8; i += 8)
            {
                var v = Vector512.Create(values, i);
                (v * v).CopyTo(squares, i);
            }
        for (; i < values.Length; i++) squares[i] = values[i] * values[i];
        return squares;
    }

    // σ² per Å times the pixel's width: its running integral is the variance a bin collects.
    private static double[]? ErrorDensity(Spectrum spectrum)
    {
        if (spectrum.FluxError is not { } err) return null;
        var density = PixelWidths(spectrum.WavelengthAngstrom);
        for (int i = 0; i < density.Length; i++) density[i] *= err[i] * err[i];
        return density;
    }

    /// <summary>Width (Å) each sample stands for: half the distance to each neighbour, the outer ones their one gap.</summary>
    internal static double[] PixelWidths(double[] w)
    {
        var width = new double[w.Length];
        for (int i = 0; i < w.Length; i++) width[i] = i == 0 ? w[1] - w[0] : i == w.Length - 1 ? w[^1] - w[^2] : 0.5 * (w[i + 1] - w[i - 1]);
        return width;
    }

    internal static double[] InverseWidths(LogWavelengthGrid grid)
    {
        var edges = grid.Edges();
        var inverse = new double[grid.Count];
        for (int k = 0; k < grid.Count; k++) inverse[k] = 1 / (edges[k + 1] - edges[k]);
        return inverse;
    }

    private static double[]? ShapeOf(LogWavelengthGrid grid, double[] binned, double[] inverseWidths, double referenceAngstrom)
    {
        var shape = binned;
        for (int k = 0; k < shape.Length; k++) shape[k] = Math.Sqrt(Math.Max(0, binned[k]) * inverseWidths[k]);
        double atRef = ReferenceLevel(grid, shape, referenceAngstrom);
        if (!(atRef > 0)) return null;
        double scale = 1 / atRef;
        for (int k = 0; k < shape.Length; k++) shape[k] = double.IsNaN(shape[k]) ? 1 : shape[k] * scale;
        return shape;
    }

    /// <summary>
    /// Returns <paramref name="flux"/> plus Gaussian noise of σ_pixel = √P · <paramref name="elementNoise"/> at the
    /// reference wavelength, scaled by <paramref name="shape"/> (null: the same σ everywhere).
    /// </summary>
    /// <param name="random">Seeded generator; the caller owns the seed.</param>
    public static double[] AddElementNoise(ReadOnlySpan<double> flux, double elementNoise, double pixelsPerElement, double[]? shape, Random random)
    {
        var result = new double[flux.Length];
        AddElementNoise(flux, elementNoise, pixelsPerElement, shape, random, result);
        return result;
    }

    /// <summary>As above, writing into <paramref name="result"/> (as long as <paramref name="flux"/>; may be reused between calls).</summary>
    public static void AddElementNoise(ReadOnlySpan<double> flux, double elementNoise, double pixelsPerElement, double[]? shape, Random random,
        Span<double> result)
    {
        if (result.Length != flux.Length) throw new ArgumentException("The result must be as long as the flux.", nameof(result));
        double sigma = Math.Sqrt(pixelsPerElement) * elementNoise;
        // Box–Muller gives two independent deviates per pair of uniforms [4]; both are used.
        for (int i = 0; i < flux.Length; i += 2)
        {
            double u1 = 1.0 - random.NextDouble(), u2 = random.NextDouble();
            double radius = Math.Sqrt(-2.0 * Math.Log(u1));
            var (sin, cos) = Math.SinCos(2 * Math.PI * u2);
            result[i] = flux[i] + sigma * (shape?[i] ?? 1) * radius * cos;
            if (i + 1 < flux.Length) result[i + 1] = flux[i + 1] + sigma * (shape?[i + 1] ?? 1) * radius * sin;
        }
    }

    /// <summary>
    /// Returns <paramref name="flux"/> plus Gaussian noise giving S/N <paramref name="snrPerElement"/> per
    /// resolution element on the continuum at the reference wavelength, for an input with no noise of its own.
    /// </summary>
    /// <param name="pixelsPerElement">Pixels per resolution element of <paramref name="grid"/> (P above).</param>
    /// <param name="random">Seeded generator; the caller owns the seed.</param>
    /// <exception cref="ArgumentOutOfRangeException">S/N ≤ 0.</exception>
    public static double[] AddNoise(LogWavelengthGrid grid, ReadOnlySpan<double> flux, double snrPerElement, double pixelsPerElement,
        Random random, double referenceAngstrom = ReferenceWavelengthAngstrom)
    {
        if (!(snrPerElement > 0)) throw new ArgumentOutOfRangeException(nameof(snrPerElement), snrPerElement, "S/N must be positive.");
        double level = Math.Abs(ReferenceLevel(grid, flux, referenceAngstrom));
        return AddElementNoise(flux, level / snrPerElement, pixelsPerElement, null, random);
    }

    /// <summary>A standard normal deviate (Box–Muller).</summary>
    public static double StandardNormal(Random random)
    {
        double u1 = 1.0 - random.NextDouble();
        double u2 = random.NextDouble();
        return Math.Sqrt(-2.0 * Math.Log(u1)) * Math.Cos(2 * Math.PI * u2);
    }

    private static int LowerBound(double[] a, double x)
    {
        int i = Array.BinarySearch(a, x);
        return i >= 0 ? i : ~i;
    }
}

/// <summary>
/// The shared weights of <see cref="SpectrumNoise.NoiseShapes"/> for spectra sampled at one wavelength array and one
/// output grid: the binning of σ² with each sample's width folded in, and the bins' inverse widths.
/// </summary>
public sealed class NoiseShapeBinning
{
    private NoiseShapeBinning(GridBinning binning, double[] inverseWidths)
    {
        Binning = binning; InverseWidths = inverseWidths;
    }

    internal GridBinning Binning { get; }

    internal double[] InverseWidths { get; }

    /// <summary>The grid the shapes are on.</summary>
    public LogWavelengthGrid Grid => Binning.Grid;

    /// <summary>The weights for spectra sampled at <paramref name="wavelengthAngstrom"/> (increasing, at least two) onto <paramref name="grid"/>.</summary>
    public static NoiseShapeBinning Build(double[] wavelengthAngstrom, LogWavelengthGrid grid)
    {
        ArgumentNullException.ThrowIfNull(wavelengthAngstrom);
        return new NoiseShapeBinning(GridBinning.Build(wavelengthAngstrom, grid, SpectrumNoise.PixelWidths(wavelengthAngstrom)),
            SpectrumNoise.InverseWidths(grid));
    }
}
