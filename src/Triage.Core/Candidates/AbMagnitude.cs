namespace Triage.Core.Candidates;

/// <summary>
/// AB magnitude ↔ flux density in µJy.
/// </summary>
/// <remarks>
/// m_AB = −2.5 log₁₀ f_ν − 48.60 (cgs) with zero point 3631 Jy, so
/// m = 23.9 − 2.5 log₁₀(f/µJy) (2.5 log₁₀ 3.631×10⁹ = 23.9001).
/// References: 1. Oke &amp; Gunn (1983), ApJ 266, 713 (AB system). 2. check-values §4a.
/// An error propagates as σ_m = (2.5/ln 10) σ_f / f ≈ 1.0857 σ_f / f (first order).
/// </remarks>
public static class AbMagnitude
{
    /// <summary>AB magnitude of 1 µJy.</summary>
    public const double MicroJanskyZeroPoint = 23.9;

    /// <summary>2.5 / ln 10: the factor between relative flux error and magnitude error.</summary>
    public const double Pogson = 1.0857362047581294;

    /// <summary>Flux density in µJy of an AB magnitude.</summary>
    public static double ToMicroJansky(double magAb) => Math.Pow(10.0, 0.4 * (MicroJanskyZeroPoint - magAb));

    /// <summary>AB magnitude of a positive flux density in µJy; NaN for f ≤ 0.</summary>
    public static double FromMicroJansky(double fluxMicroJy) =>
        fluxMicroJy > 0 ? MicroJanskyZeroPoint - 2.5 * Math.Log10(fluxMicroJy) : double.NaN;

    /// <summary>Flux error from a magnitude error at flux <paramref name="fluxMicroJy"/> (first order).</summary>
    public static double FluxErrorFromMagError(double fluxMicroJy, double magError) => fluxMicroJy * magError / Pogson;

    /// <summary>Magnitude error from a flux error (first order).</summary>
    public static double MagErrorFromFluxError(double fluxMicroJy, double fluxError) => Pogson * fluxError / fluxMicroJy;
}
