// Degradation of a spectrum to a lower resolving power R.
//
// A line-spread function of FWHM λ/R is a Gaussian of constant width in x = ln λ:
//   σ_x(R) = 1 / (R · 2√(2 ln 2)),  FWHM = 2√(2 ln 2) σ.
// Gaussians convolve by adding variances, so a source of resolving power R₀ reaches R < R₀
// with a kernel σ_k² = σ_x(R)² − σ_x(R₀)² (R₀ unknown: σ_x(R₀) = 0). The convolution acts on
// g = f λ (flux per unit ln λ), which conserves ∫ f dλ; the working grid has step
// δ ≤ σ_k/4, and the boxcar of width δ introduced by binning onto it (variance δ²/12) is
// subtracted from σ_k². The result is binned flux-conservingly at P pixels per element λ/R.
// References:
//  1. Robertson, J. G., "Quantifying resolving power in astronomical spectra", PASA 30, e048 (2013), §2.
//  2. Bracewell, R. N., "The Fourier Transform and Its Applications", 3rd ed., ch. 8 (variances add under convolution).
namespace Triage.Core.Spectra;

/// <summary>Options of <see cref="Degradation.Degrade"/>.</summary>
public sealed record DegradeOptions
{
    /// <summary>Pixels per resolution element λ/R of the output grid. Default 2 (Nyquist sampling).</summary>
    public double PixelsPerElement { get; init; } = 2;

    /// <summary>Kernel half-width in units of σ. Default 5 (the truncated tail holds 6e-7 of the weight).</summary>
    public double KernelHalfWidthSigma { get; init; } = 5;
}

/// <summary>Gaussian degradation to a target resolving power.</summary>
public static class Degradation
{
    /// <summary>2√(2 ln 2): FWHM over σ of a Gaussian.</summary>
    public static readonly double FwhmPerSigma = 2 * Math.Sqrt(2 * Math.Log(2));

    /// <summary>σ in ln λ of a line-spread function of FWHM λ/R.</summary>
    public static double SigmaLn(double resolution) => 1.0 / (resolution * FwhmPerSigma);

    /// <summary>σ (ln λ) of the Gaussian kernel taking a source of R₀ (null: unknown, treated as infinite) to R: √(σ(R)² − σ(R₀)²).</summary>
    public static double KernelSigmaLn(double resolution, double? sourceResolution)
    {
        double t = SigmaLn(resolution), s = sourceResolution is double r0 ? SigmaLn(r0) : 0;
        return Math.Sqrt(Math.Max(0, t * t - s * s));
    }

    /// <summary>
    /// Degrades <paramref name="spectrum"/> to resolving power <paramref name="resolution"/> and bins
    /// it onto a log grid with <see cref="DegradeOptions.PixelsPerElement"/> pixels per element.
    /// </summary>
    /// <param name="sourceResolution">Resolving power of the input, when known (then R must not exceed it).</param>
    /// <returns>The degraded spectrum (no noise added) and its grid.</returns>
    /// <exception cref="ArgumentOutOfRangeException">R ≤ 0, or R above the source resolution.</exception>
    public static (LogWavelengthGrid Grid, double[] Flux) Degrade(Spectrum spectrum, double resolution, double? sourceResolution,
        DegradeOptions? options = null)
    {
        options ??= new DegradeOptions();
        if (!(resolution > 0) || double.IsInfinity(resolution))
            throw new ArgumentOutOfRangeException(nameof(resolution), resolution, "R must be positive and finite.");
        if (sourceResolution is double r0 && resolution > r0 * (1 + 1e-9))
            throw new ArgumentOutOfRangeException(nameof(resolution), resolution,
                $"Cannot degrade to R = {resolution} above the source resolution R = {r0}.");
        double sigmaT = SigmaLn(resolution);
        double sigmaS = sourceResolution is double rs ? SigmaLn(rs) : 0;
        double sigmaK = Math.Sqrt(Math.Max(0, sigmaT * sigmaT - sigmaS * sigmaS));

        var w = spectrum.WavelengthAngstrom;
        double lnMin = Math.Log(w[0]), lnMax = Math.Log(w[^1]);
        double nativeStep = (lnMax - lnMin) / (w.Length - 1);
        double outStep = 1.0 / (resolution * options.PixelsPerElement);
        // The working grid may be coarser than the input: its boxcar (δ²/12) is subtracted below.
        double step = outStep / 2;
        if (sigmaK > 0) step = Math.Min(step, sigmaK / 4);
        var work = LogWavelengthGrid.WithCount(w[0], w[^1], Math.Max(2, (int)Math.Ceiling((lnMax - lnMin) / step)));
        double[] g = FluxRebinning.ToGrid(w, spectrum.Flux, work);

        double sigmaConv2 = sigmaK * sigmaK - (work.StepLn > nativeStep ? work.StepLn * work.StepLn / 12 : 0);
        if (sigmaConv2 > 0)
        {
            var centres = work.Centres();
            for (int i = 0; i < g.Length; i++) g[i] *= centres[i];
            g = Convolve(g, Math.Sqrt(sigmaConv2) / work.StepLn, options.KernelHalfWidthSigma);
            for (int i = 0; i < g.Length; i++) g[i] /= centres[i];
        }
        var outGrid = LogWavelengthGrid.ForResolution(w[0], w[^1], resolution, options.PixelsPerElement);
        var centresWork = work.Centres();
        var outFlux = FluxRebinning.ToGrid(centresWork, g, outGrid);
        return (outGrid, outFlux);
    }

    /// <summary>
    /// Discrete convolution with a sampled Gaussian of σ = <paramref name="sigmaPixels"/> pixels,
    /// truncated at ± <paramref name="halfWidthSigma"/> σ and normalised to unit sum; near the
    /// ends the weights are renormalised over the pixels that exist.
    /// </summary>
    public static double[] Convolve(double[] values, double sigmaPixels, double halfWidthSigma = 5)
    {
        int half = Math.Max(1, (int)Math.Ceiling(halfWidthSigma * sigmaPixels));
        var kernel = new double[2 * half + 1];
        double sum = 0;
        for (int j = -half; j <= half; j++)
        {
            // Point-sampled: σ ≥ 4 working pixels here, so the sampled kernel's variance is σ² to < 1e-6.
            kernel[j + half] = Math.Exp(-0.5 * j * j / (sigmaPixels * sigmaPixels));
            sum += kernel[j + half];
        }
        for (int j = 0; j < kernel.Length; j++) kernel[j] /= sum;
        int n = values.Length;
        var result = new double[n];
        for (int i = 0; i < n; i++)
        {
            int jFrom = Math.Max(-half, -i), jTo = Math.Min(half, n - 1 - i);
            double acc = 0, wsum = 0;
            for (int j = jFrom; j <= jTo; j++)
            {
                double v = values[i + j];
                if (double.IsNaN(v)) continue;
                double k = kernel[j + half];
                acc += k * v;
                wsum += k;
            }
            result[i] = wsum > 0 ? acc / wsum : double.NaN;
        }
        return result;
    }
}
