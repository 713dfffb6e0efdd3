// Night-sky surface brightness with moonlight (V band), as a magnitude offset from the dark zenith sky.
//
//   B[nL] = 34.08 exp(20.7233 − 0.92104 V)                          (mag/arcsec² ↔ nanolamberts)
//   X(Z) = (1 − 0.96 sin² Z)^(−1/2)                                  (airmass of the scattering layer)
//   B₀(Z) = B_zen 10^(−0.4 k (X(Z) − 1)) X(Z)                        (dark sky away from the zenith)
//   I* = 10^(−0.4 (3.84 + 0.026 |α| + 4·10⁻⁹ α⁴))                     (Moon's illuminance, phase angle α in °)
//   f(ρ) = 10^5.36 (1.06 + cos² ρ) + 10^(6.15 − ρ/40)                 (Rayleigh + Mie scattering, ρ in °)
//   B_moon = f(ρ) I* 10^(−0.4 k X(Z_moon)) [1 − 10^(−0.4 k X(Z))]      (zero when the Moon is below the horizon)
//   ΔV = −2.5 log₁₀[(B₀(Z) + B_moon) / B_zen]
//
// References
//   1. K. Krisciunas, B. E. Schaefer, "A model of the brightness of moonlight", PASP 103 (1991) 1033–1039, eqs. 1–3, 15, 20, 21.
namespace Triage.Core.Exposure;

/// <summary>Sky brightening by airmass and moonlight (Krisciunas &amp; Schaefer 1991).</summary>
/// <remarks>
/// The model is calibrated in V. Triage applies the V-band offset ΔV to the site's dark-sky brightness
/// at its own reference wavelength, so the bluer colour of moonlight is ignored (moonlit skies are
/// underestimated in the blue and overestimated in the red). K&amp;S quote 8–23 % rms; the scattering
/// function is not meant for ρ &lt; 10°, so ρ is clamped to 10°.
/// </remarks>
public static class MoonlitSky
{
    /// <summary>Nanolamberts of a V surface brightness in mag/arcsec² (K&amp;S eq. 1).</summary>
    public static double NanolambertsFromMag(double magArcsec2) => 34.08 * Math.Exp(20.7233 - 0.92104 * magArcsec2);

    /// <summary>V surface brightness in mag/arcsec² of a brightness in nanolamberts (inverse of K&amp;S eq. 1).</summary>
    public static double MagFromNanolamberts(double nanolamberts) => (20.7233 - Math.Log(nanolamberts / 34.08)) / 0.92104;

    /// <summary>
    /// Sky brightness at the pointing in mag/arcsec²: the dark zenith sky <paramref name="darkZenithMagArcsec2"/>
    /// brightened by the airmass of the pointing and by moonlight.
    /// </summary>
    /// <param name="darkZenithMagArcsec2">Dark-sky zenith surface brightness, mag/arcsec² (treated as V for the moonlight ratio).</param>
    /// <param name="extinctionMagPerAirmass">Extinction coefficient k, mag per airmass, ≥ 0.</param>
    /// <param name="targetZenithDeg">Zenith distance of the pointing, 0–90°.</param>
    /// <param name="moon">Moon geometry, or null for no Moon. A Moon below the horizon adds nothing.</param>
    public static double SkyMagArcsec2(double darkZenithMagArcsec2, double extinctionMagPerAirmass, double targetZenithDeg, Sky.MoonlightGeometry? moon)
    {
        double k = extinctionMagPerAirmass;
        double x = ScatteringAirmass(targetZenithDeg);
        double dark = NanolambertsFromMag(darkZenithMagArcsec2) * Math.Pow(10, -0.4 * k * (x - 1)) * x;
        return MagFromNanolamberts(dark + MoonlightNanolamberts(k, targetZenithDeg, moon));
    }

    /// <summary>Moonlight scattered into the pointing, nanolamberts (K&amp;S eq. 15); 0 without a Moon above the horizon.</summary>
    public static double MoonlightNanolamberts(double extinctionMagPerAirmass, double targetZenithDeg, Sky.MoonlightGeometry? moon)
    {
        if (moon is not { } m || !(m.MoonAltitudeDeg > 0))
        {
            return 0;
        }

        double k = extinctionMagPerAirmass;
        double alpha = Math.Min(180, Math.Abs(m.PhaseAngleDeg));
        double illuminance = Math.Pow(10, -0.4 * (3.84 + 0.026 * alpha + 4e-9 * Math.Pow(alpha, 4)));
        double rhoDeg = Math.Max(10, m.SeparationDeg);
        double cosRho = Math.Cos(rhoDeg * Math.PI / 180);
        double scattering = Math.Pow(10, 5.36) * (1.06 + cosRho * cosRho) + Math.Pow(10, 6.15 - rhoDeg / 40);
        return scattering * illuminance * Math.Pow(10, -0.4 * k * ScatteringAirmass(90 - m.MoonAltitudeDeg))
               * (1 - Math.Pow(10, -0.4 * k * ScatteringAirmass(targetZenithDeg)));
    }

    /// <summary>K&amp;S eq. 3 airmass of the scattering layer at zenith distance <paramref name="zenithDeg"/> (clamped to 0–90°).</summary>
    public static double ScatteringAirmass(double zenithDeg)
    {
        double s = Math.Sin(Math.Clamp(zenithDeg, 0, 90) * Math.PI / 180);
        return 1 / Math.Sqrt(1 - 0.96 * s * s);
    }
}
