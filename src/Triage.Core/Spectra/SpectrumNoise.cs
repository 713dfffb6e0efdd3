// Noise for a target S/N per resolution element.
//
// Convention shared by calibration, exposure model and planner: S/N is per resolution
// element Δλ = λ/R, measured on the continuum at the reference wavelength λ_ref (6000 Å,
// observed frame). With P pixels per element and a pixel noise σ_pix, the element's signal
// is P f and its noise √P σ_pix, so S/N_elem = √P f / σ_pix, i.e. σ_pix = √P f_ref / (S/N).
// Noise model: Gaussian, the same σ_pix at every wavelength (background- and read-noise-
// limited, the regime of faint transients), from a seeded generator. f_ref is the median
// flux in λ_ref ± 5 % (a median ignores lines narrower than the window).
// References:
//  1. Howell, S. B., "Handbook of CCD Astronomy", 2nd ed., ch. 4.4 (the CCD equation, S/N of a summed resolution element).
//  2. Box, G. E. P. & Muller, M. E., "A note on the generation of random normal deviates", Ann. Math. Stat. 29, 610 (1958).
namespace Triage.Core.Spectra;

/// <summary>The S/N convention and Gaussian noise for a target S/N per resolution element.</summary>
public static class SpectrumNoise
{
    /// <summary>Reference wavelength (Å, observed frame) at which S/N is quoted.</summary>
    public const double ReferenceWavelengthAngstrom = 6000;

    /// <summary>The convention in words, as written into the calibration JSON.</summary>
    public const string Convention =
        "S/N per resolution element (Δλ = λ/R), on the continuum at the reference wavelength (observed frame); " +
        "Gaussian noise of constant variance across the spectrum (background-limited).";

    /// <summary>Continuum level at the reference wavelength: median of finite flux within ±5 %; the whole spectrum's median if the window is empty.</summary>
    public static double ReferenceLevel(LogWavelengthGrid grid, ReadOnlySpan<double> flux, double referenceAngstrom = ReferenceWavelengthAngstrom)
    {
        var window = new List<double>();
        var all = new List<double>();
        for (int i = 0; i < grid.Count; i++)
        {
            if (double.IsNaN(flux[i])) continue;
            all.Add(flux[i]);
            double c = grid.CentreAngstrom(i);
            if (Math.Abs(c - referenceAngstrom) <= 0.05 * referenceAngstrom) window.Add(flux[i]);
        }
        var use = window.Count >= 3 ? window : all;
        if (use.Count == 0) return double.NaN;
        use.Sort();
        return use[use.Count / 2];
    }

    /// <summary>
    /// Returns <paramref name="flux"/> plus Gaussian noise giving S/N <paramref name="snrPerElement"/> per
    /// resolution element on the continuum at the reference wavelength.
    /// </summary>
    /// <param name="pixelsPerElement">Pixels per resolution element of <paramref name="grid"/> (P above).</param>
    /// <param name="random">Seeded generator; the caller owns the seed.</param>
    /// <exception cref="ArgumentOutOfRangeException">S/N ≤ 0.</exception>
    public static double[] AddNoise(LogWavelengthGrid grid, ReadOnlySpan<double> flux, double snrPerElement, double pixelsPerElement,
        Random random, double referenceAngstrom = ReferenceWavelengthAngstrom)
    {
        if (!(snrPerElement > 0)) throw new ArgumentOutOfRangeException(nameof(snrPerElement), snrPerElement, "S/N must be positive.");
        double level = Math.Abs(ReferenceLevel(grid, flux, referenceAngstrom));
        double sigma = Math.Sqrt(pixelsPerElement) * level / snrPerElement;
        var result = new double[flux.Length];
        for (int i = 0; i < flux.Length; i++)
            result[i] = flux[i] + sigma * StandardNormal(random);
        return result;
    }

    /// <summary>A standard normal deviate (Box–Muller).</summary>
    public static double StandardNormal(Random random)
    {
        double u1 = 1.0 - random.NextDouble();
        double u2 = random.NextDouble();
        return Math.Sqrt(-2.0 * Math.Log(u1)) * Math.Cos(2 * Math.PI * u2);
    }
}
