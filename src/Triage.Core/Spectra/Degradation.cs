// Degradation of a spectrum to a lower resolving power R.
//
// A line-spread function of FWHM λ/R is a Gaussian of constant width in x = ln λ:
//   σ_x(R) = 1 / (R · 2√(2 ln 2)),  FWHM = 2√(2 ln 2) σ.
// Input pixels are bins (edges at the geometric midpoints between samples); a bin's value is the
// mean flux density over it, so binning onto any grid uses the running integral of a piecewise-
// constant density. Boxcars add variance δ²/12 like any kernel, and Gaussians add variances, so
// with source resolution R₀ (pixel width δ₀ in ln λ), working grid step δ_w and output pixels
// (a detector's own boxcar, kept) the kernel applied on the working grid is
//   σ_k² = σ(R)² − σ(R₀)² − δ₀²/12 − δ_w²/12 − max(0, δ_w² − δ₀²)/12
// (source pixel, only when R₀ is known; the working grid's bins as they are read back; the
// coarsening of the input onto the working grid). The working grid is never finer than the input:
// δ_w = max(δ₀, σ(R)/4); when the input is uniform in ln λ at that step it is used as it is. The
// convolution acts on g = f λ (flux per unit ln λ), which conserves ∫ f dλ, with a Gaussian
// sampled at the working pixels (σ ≥ 0.7 px: its variance is σ² to 1e-4) or, for σ < 0.7 px, the
// three-tap kernel [a, 1 − 2a, a] with a = σ²/2 (the same variance). When R equals R₀ and the input
// is already on the output grid, the spectrum is returned as it is.
// References:
//  1. Robertson, J. G., "Quantifying resolving power in astronomical spectra", PASA 30, e048 (2013), §2.
//  2. Bracewell, R. N., "The Fourier Transform and Its Applications", 3rd ed., ch. 8 (variances add under convolution).
//  3. Carnall, A. C., "SpectRes: a fast spectral resampling tool in Python", arXiv:1705.05165 (2017), §2 (pixels as bins).
namespace Triage.Core.Spectra;

/// <summary>Options of <see cref="Degradation.Degrade(Spectrum, double, double?, DegradeOptions?)"/>.</summary>
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
    /// <param name="sourceResolution">Resolving power of the input, when known (then R must not exceed it, and the input's pixels are taken as integrated bins).</param>
    /// <returns>The degraded spectrum (no noise added) and its grid.</returns>
    /// <exception cref="ArgumentOutOfRangeException">R ≤ 0, or R above the source resolution.</exception>
    public static (LogWavelengthGrid Grid, double[] Flux) Degrade(Spectrum spectrum, double resolution, double? sourceResolution,
        DegradeOptions? options = null) =>
        Degrade(spectrum, PixelBins.Of(spectrum.WavelengthAngstrom), resolution, sourceResolution, options);

    /// <summary>
    /// As <see cref="Degrade(Spectrum, double, double?, DegradeOptions?)"/> with the input's pixel bins computed once by
    /// <see cref="PixelBins.Of"/> (a calibration degrades every spectrum to many R).
    /// </summary>
    /// <param name="input">The bins of <paramref name="spectrum"/>'s wavelengths.</param>
    public static (LogWavelengthGrid Grid, double[] Flux) Degrade(Spectrum spectrum, PixelBins input, double resolution, double? sourceResolution,
        DegradeOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(input);
        options ??= new DegradeOptions();
        var w = spectrum.WavelengthAngstrom;
        if (input.Edges.Length != w.Length + 1) throw new ArgumentException("The bins belong to another wavelength array.", nameof(input));
        var plan = Plan(w[0], w[^1], input, resolution, sourceResolution, options);
        return (plan.Output, Apply(plan, input, spectrum.Flux));
    }

    /// <summary>
    /// The steps of one degradation, decided once from the wavelengths and R: the output grid, whether the input is
    /// returned as it is, the working grid (the input's own when it is uniform and fine enough) and the kernel σ in
    /// working pixels (0: none). <see cref="Degrade(Spectrum, PixelBins, double, double?, DegradeOptions?)"/> and
    /// <see cref="DegradationOperator"/> both follow it, so they cannot drift apart.
    /// </summary>
    internal static DegradePlan Plan(double firstAngstrom, double lastAngstrom, PixelBins input, double resolution, double? sourceResolution,
        DegradeOptions options)
    {
        if (!(resolution > 0) || double.IsInfinity(resolution))
            throw new ArgumentOutOfRangeException(nameof(resolution), resolution, "R must be positive and finite.");
        if (sourceResolution is double r0 && resolution > r0 * (1 + 1e-9))
            throw new ArgumentOutOfRangeException(nameof(resolution), resolution,
                $"Cannot degrade to R = {resolution} above the source resolution R = {r0}.");
        var outGrid = LogWavelengthGrid.ForResolution(firstAngstrom, lastAngstrom, resolution, options.PixelsPerElement);

        // Same R and the input already on the output grid: nothing to do.
        if (sourceResolution is double rs && Math.Abs(resolution / rs - 1) < 1e-9 && input.Uniform is { } same
            && Math.Abs(same.StepLn / outGrid.StepLn - 1) < 1e-6)
            return new DegradePlan(same, true, same, true, 0, options.KernelHalfWidthSigma);

        double sigmaT = SigmaLn(resolution);
        double sourcePixel = sourceResolution is null ? 0 : input.StepLn;
        double sigmaS = sourceResolution is double rk ? SigmaLn(rk) : 0;
        double stepW = Math.Max(input.StepLn, sigmaT / 4);
        LogWavelengthGrid work;
        bool workIsInput;
        if (input.Uniform is { } uniform && stepW <= input.StepLn * (1 + 1e-6))
        {
            work = uniform;
            workIsInput = true;
        }
        else
        {
            work = LogWavelengthGrid.WithCount(input.FirstEdge, input.LastEdge, Math.Max(2, (int)Math.Floor(Math.Log(input.LastEdge / input.FirstEdge) / stepW)));
            workIsInput = false;
        }
        stepW = work.StepLn;
        double sigmaK2 = sigmaT * sigmaT - sigmaS * sigmaS - sourcePixel * sourcePixel / 12 - stepW * stepW / 12
                         - Math.Max(0, stepW * stepW - input.StepLn * input.StepLn) / 12;
        return new DegradePlan(outGrid, false, work, workIsInput, sigmaK2 > 0 ? Math.Sqrt(sigmaK2) / stepW : 0, options.KernelHalfWidthSigma);
    }

    /// <summary>The degradation of <paramref name="flux"/> (on the bins <paramref name="input"/>) step by step as <paramref name="plan"/> says.</summary>
    internal static double[] Apply(DegradePlan plan, PixelBins input, double[] flux)
    {
        if (plan.Identity) return (double[])flux.Clone();
        var work = plan.Work;
        double[] g = plan.WorkIsInput ? (double[])flux.Clone() : FluxRebinning.BinsToGrid(input.Edges, flux, work);
        if (plan.KernelSigmaPixels > 0)
        {
            var centres = work.Centres();
            for (int i = 0; i < g.Length; i++) g[i] *= centres[i];
            g = Convolve(g, plan.KernelSigmaPixels, plan.KernelHalfWidthSigma);
            for (int i = 0; i < g.Length; i++) g[i] /= centres[i];
        }
        return FluxRebinning.BinsToGrid(work, g, plan.Output);
    }

    /// <summary>
    /// The discrete kernel of <see cref="Convolve"/>: a Gaussian of σ = <paramref name="sigmaPixels"/> pixels sampled and
    /// truncated at ± <paramref name="halfWidthSigma"/> σ, normalised to unit sum, for σ ≥ 0.7; the variance-matched
    /// three-tap kernel [a, 1 − 2a, a], a = σ²/2, below. Its length is odd; the middle tap is the centre.
    /// </summary>
    public static double[] Kernel(double sigmaPixels, double halfWidthSigma = 5)
    {
        if (sigmaPixels < 0.7)
        {
            double a = sigmaPixels * sigmaPixels / 2;
            return [a, 1 - 2 * a, a];
        }
        int h = Math.Max(1, (int)Math.Ceiling(halfWidthSigma * sigmaPixels));
        var kernel = new double[2 * h + 1];
        double sum = 0;
        for (int j = -h; j <= h; j++) sum += kernel[j + h] = Math.Exp(-0.5 * j * j / (sigmaPixels * sigmaPixels));
        for (int j = 0; j < kernel.Length; j++) kernel[j] /= sum;
        return kernel;
    }

    /// <summary>
    /// Discrete convolution with a Gaussian of σ = <paramref name="sigmaPixels"/> pixels: sampled and
    /// truncated at ± <paramref name="halfWidthSigma"/> σ for σ ≥ 0.7, the variance-matched three-tap
    /// kernel below; normalised to unit sum; near the ends the weights are renormalised over the
    /// pixels that exist; NaN values are skipped.
    /// </summary>
    public static double[] Convolve(double[] values, double sigmaPixels, double halfWidthSigma = 5)
    {
        var kernel = Kernel(sigmaPixels, halfWidthSigma);
        int half = kernel.Length / 2, n = values.Length;
        var result = new double[n];
        bool anyNaN = Array.Exists(values, double.IsNaN);
        // Interior without NaN: a plain dot product the JIT vectorises; edges and NaN take the careful path.
        var kSpan = kernel.AsSpan();
        for (int i = 0; i < n; i++)
        {
            if (!anyNaN && i >= half && i < n - half)
            {
                result[i] = Dot(values.AsSpan(i - half, kernel.Length), kSpan);
                continue;
            }
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

    private static double Dot(ReadOnlySpan<double> a, ReadOnlySpan<double> b)
    {
        int width = System.Numerics.Vector<double>.Count, i = 0;
        var acc = System.Numerics.Vector<double>.Zero;
        for (; i <= a.Length - width; i += width)
            acc += new System.Numerics.Vector<double>(a[i..]) * new System.Numerics.Vector<double>(b[i..]);
        double s = System.Numerics.Vector.Sum(acc);
        for (; i < a.Length; i++) s += a[i] * b[i];
        return s;
    }

}

/// <summary>The steps of one degradation (see <see cref="Degradation.Plan"/>).</summary>
/// <param name="Output">The output grid.</param>
/// <param name="Identity">True when the input is returned as it is (same R, already on the output grid).</param>
/// <param name="Work">The working grid the kernel acts on.</param>
/// <param name="WorkIsInput">True when the working grid is the input's own (no binning onto it).</param>
/// <param name="KernelSigmaPixels">σ of the kernel in working pixels; 0: no convolution.</param>
/// <param name="KernelHalfWidthSigma">Truncation of the kernel in units of σ.</param>
internal readonly record struct DegradePlan(LogWavelengthGrid Output, bool Identity, LogWavelengthGrid Work, bool WorkIsInput,
    double KernelSigmaPixels, double KernelHalfWidthSigma);

/// <summary>
/// Pixel bins of a sampled spectrum: edges at the geometric midpoints between samples (the outer edges mirror the
/// next one), the mean width in ln λ, and the log grid itself when the samples are uniform in ln λ.
/// </summary>
/// <param name="Edges">Bin edges (Å), one more than the samples.</param>
/// <param name="StepLn">Mean bin width in ln λ.</param>
/// <param name="Uniform">The grid of the bins when the samples are uniform in ln λ to 1e-4 of a step; else null.</param>
public sealed record PixelBins(double[] Edges, double StepLn, LogWavelengthGrid? Uniform)
{
    /// <summary>Lower edge of the first bin (Å).</summary>
    public double FirstEdge => Edges[0];

    /// <summary>Upper edge of the last bin (Å).</summary>
    public double LastEdge => Edges[^1];

    /// <summary>The bins of samples at <paramref name="w"/> (Å, increasing, at least two).</summary>
    public static PixelBins Of(double[] w)
    {
        ArgumentNullException.ThrowIfNull(w);
        int n = w.Length;
        var edges = new double[n + 1];
        for (int i = 1; i < n; i++) edges[i] = Math.Sqrt(w[i - 1] * w[i]);
        edges[0] = w[0] * w[0] / edges[1];
        edges[n] = w[n - 1] * w[n - 1] / edges[n - 1];
        double step = Math.Log(edges[n] / edges[0]) / n;
        // Uniform in ln λ to 1e-4 of a step (wavelengths written to 0.001 Å are).
        bool uniform = true;
        for (int i = 1; i < n && uniform; i++)
            uniform = Math.Abs(Math.Log(w[i] / w[i - 1]) - step) < 1e-4 * step + 2e-3 / w[i];
        return new PixelBins(edges, step, uniform ? new LogWavelengthGrid(edges[0], step, n) : null);
    }
}
