// Noise accounting of one degraded library spectrum (see SpectrumNoise for the maths).
//
// present σ_e: the noise already in the flux, propagated from the input (error column or DER_SNR)
//              through the kernel to one element at R; 0 for a noise-free model spectrum.
// native  σ_e: the noise a native observation has at R: the present noise, or for a noise-free
//              model the noise its error column states, propagated the same way.
// Level S:  add √((f/S)² − present²) per element if S ≤ f/present, else nothing (unreachable).
// Native:   add √(native² − present²) per element.
// Realised S/N = f / √(present² + added²) per element.
// References:
//  1. Stoehr, F. et al., ASP Conf. Ser. 394, 505 (2008) (DER_SNR).
//  2. Papoulis, A., "Probability, Random Variables and Stochastic Processes", 3rd ed., §9-2.
namespace Triage.Core.Spectra;

/// <summary>The noise of one degraded spectrum and the noise to add for an S/N level.</summary>
/// <param name="Budget">Level and noise already present per element at the reference wavelength.</param>
/// <param name="NativeElementNoise">σ_e of a native observation at this R (equals the present noise unless the input is a noise-free model).</param>
/// <param name="Shape">Relative noise σ per output pixel (1 at the reference wavelength), from the error column; null: flat.</param>
public sealed record DegradedNoise(NoiseBudget Budget, double NativeElementNoise, double[]? Shape)
{
    /// <summary>Accounts the noise of <paramref name="spectrum"/> degraded to <paramref name="resolution"/> as <paramref name="flux"/> on <paramref name="grid"/>.</summary>
    public static DegradedNoise Account(LibrarySpectrum spectrum, LogWavelengthGrid grid, ReadOnlySpan<double> flux, double resolution) =>
        Account(spectrum.Spectrum, spectrum.NoiseFree, spectrum.SourceResolution, grid, flux, resolution);

    /// <summary>As above, for a bare spectrum with a known (or unknown: null) source resolution.</summary>
    public static DegradedNoise Account(Spectrum spectrum, bool noiseFree, double? sourceResolution, LogWavelengthGrid grid,
        ReadOnlySpan<double> flux, double resolution) =>
        Account(spectrum, InputNoiseSources.Of(spectrum, noiseFree), sourceResolution, grid, flux, resolution);

    /// <summary>As above with the input's noise measured once by <see cref="InputNoiseSources.Of"/> (it does not depend on R).</summary>
    public static DegradedNoise Account(Spectrum spectrum, InputNoiseSources input, double? sourceResolution, LogWavelengthGrid grid,
        ReadOnlySpan<double> flux, double resolution) =>
        Account(input, sourceResolution, grid, flux, resolution, SpectrumNoise.NoiseShape(spectrum, grid));

    /// <summary>As above with the noise shape on <paramref name="grid"/> already found (see <see cref="SpectrumNoise.NoiseShapes"/>).</summary>
    /// <param name="shape">The spectrum's <see cref="SpectrumNoise.NoiseShape"/> on <paramref name="grid"/>.</param>
    public static DegradedNoise Account(InputNoiseSources input, double? sourceResolution, LogWavelengthGrid grid,
        ReadOnlySpan<double> flux, double resolution, double[]? shape)
    {
        double sigmaK = Degradation.KernelSigmaLn(resolution, sourceResolution);
        double level = SpectrumNoise.ReferenceLevel(grid, flux);
        double present = SpectrumNoise.PropagatedElementNoise(input.Present, resolution, sigmaK);
        double native = SpectrumNoise.PropagatedElementNoise(input.Native, resolution, sigmaK);
        return new DegradedNoise(new NoiseBudget(level, present), native, shape);
    }

    /// <summary>Realised S/N per element with <paramref name="addedElementNoise"/> added; null when it is infinite (no noise at all).</summary>
    public double? RealisedSnr(double addedElementNoise)
    {
        double total = Math.Sqrt(Budget.PresentElementNoise * Budget.PresentElementNoise + addedElementNoise * addedElementNoise);
        return total > 0 ? Math.Abs(Budget.Level) / total : null;
    }

    /// <summary>
    /// Noise for S/N level <paramref name="snrPerElement"/> (null: native): the noised flux, the realised S/N
    /// (null: infinite) and whether the level was reached (always true for native).
    /// </summary>
    public NoisedSpectrum Apply(ReadOnlySpan<double> flux, double? snrPerElement, double pixelsPerElement, Random random) =>
        Apply(flux, snrPerElement, pixelsPerElement, random, new double[flux.Length]);

    /// <summary>As above, writing the noised flux into <paramref name="destination"/> (as long as <paramref name="flux"/>), which the result's flux then is.</summary>
    public NoisedSpectrum Apply(ReadOnlySpan<double> flux, double? snrPerElement, double pixelsPerElement, Random random, double[] destination)
    {
        double added;
        bool reached = true;
        if (snrPerElement is double target)
        {
            if (!(target > 0)) throw new ArgumentOutOfRangeException(nameof(snrPerElement), target, "S/N must be positive.");
            reached = Budget.CanReach(target);
            added = reached ? Budget.ShortfallElementNoise(target) : 0;
        }
        else
        {
            double p = Budget.PresentElementNoise;
            added = Math.Sqrt(Math.Max(0, NativeElementNoise * NativeElementNoise - p * p));
        }
        ArgumentNullException.ThrowIfNull(destination);
        if (added > 0) SpectrumNoise.AddElementNoise(flux, added, pixelsPerElement, Shape, random, destination);
        else flux.CopyTo(destination);
        return new NoisedSpectrum(destination, RealisedSnr(added), reached, Budget.ReachableSnr);
    }
}

/// <summary>The noise of an input spectrum per pixel near the reference wavelength, measured once for every R.</summary>
/// <param name="Present">Noise already in the flux (0 for a noise-free model).</param>
/// <param name="Native">Noise of a native observation: the present noise, or for a noise-free model the noise its error column states.</param>
public readonly record struct InputNoiseSources(InputNoise Present, InputNoise Native)
{
    /// <summary>Measures the noise of <paramref name="spectrum"/> (see <see cref="SpectrumNoise.MeasureInputNoise"/>).</summary>
    public static InputNoiseSources Of(Spectrum spectrum, bool noiseFree)
    {
        ArgumentNullException.ThrowIfNull(spectrum);
        var present = SpectrumNoise.MeasureInputNoise(spectrum, noiseFree);
        return new InputNoiseSources(present,
            noiseFree && spectrum.FluxError is not null ? SpectrumNoise.MeasureInputNoise(spectrum, false) : present);
    }
}

/// <summary>A spectrum after noising for an S/N level.</summary>
/// <param name="Flux">Noised flux on the degraded grid.</param>
/// <param name="RealisedSnr">S/N per element at the reference wavelength (null: infinite).</param>
/// <param name="Reached">False when the level's S/N was above <paramref name="ReachableSnr"/> (then nothing was added).</param>
/// <param name="ReachableSnr">Highest S/N reachable for this spectrum at this R (+∞ for a noise-free input).</param>
public sealed record NoisedSpectrum(double[] Flux, double? RealisedSnr, bool Reached, double ReachableSnr);
