// Greenwich and local sidereal time.
//
//   GMST = 280.46061837° + 360.98564736629° (JD − 2451545.0) + 0.000387933° T² − T³/38710000   (Meeus eq. 12.4)
//   GAST = GMST + Δψ cos ε   (equation of the equinoxes),   LMST/LAST = GMST/GAST + λ_east
//   JD is UT1 (taken as UTC here), T = (JD − 2451545.0)/36525.
//
// References
//   1. J. Meeus, Astronomical Algorithms, 2nd ed. (1998), ch. 12, eq. 12.4, examples 12.a and 12.b.
//   2. S. Aoki et al., "The new definition of universal time", A&A 105 (1982) 359 (IAU 1982 GMST).
namespace Triage.Core.Sky;

/// <summary>Greenwich and local, mean and apparent sidereal time, in degrees [0, 360).</summary>
/// <remarks>IAU 1982 GMST (Meeus eq. 12.4): it differs from the IAU 2006 model by about 4 ms in 2026–27.
/// UT1 is taken equal to UTC, which shifts every value by at most 0.9 s × 1.0027.</remarks>
public static class SiderealTime
{
    /// <summary>Greenwich mean sidereal time in degrees for a Julian date in UT1.</summary>
    public static double GreenwichMeanDeg(double jdUt1)
    {
        double d = jdUt1 - AstroTime.J2000;
        double t = d / AstroTime.DaysPerJulianCentury;
        return Angles.Normalize360(280.46061837 + 360.98564736629 * d + 0.000387933 * t * t - t * t * t / 38710000.0);
    }

    /// <summary>Greenwich apparent sidereal time in degrees; nutation is evaluated at <paramref name="jdTT"/>.</summary>
    public static double GreenwichApparentDeg(double jdUt1, double jdTT) =>
        Angles.Normalize360(GreenwichMeanDeg(jdUt1) + Nutation.Compute(jdTT).EquationOfEquinoxesSeconds * 15.0 / 3600.0);

    /// <summary>Greenwich mean sidereal time in degrees at a UTC instant.</summary>
    public static double GreenwichMeanDeg(DateTimeOffset utc) => GreenwichMeanDeg(AstroTime.JulianDate(utc));

    /// <summary>Greenwich apparent sidereal time in degrees at a UTC instant.</summary>
    public static double GreenwichApparentDeg(DateTimeOffset utc) =>
        GreenwichApparentDeg(AstroTime.JulianDate(utc), AstroTime.JulianDateTT(utc));

    /// <summary>Local mean sidereal time in degrees; longitude east-positive, degrees.</summary>
    public static double LocalMeanDeg(DateTimeOffset utc, double longitudeDeg) =>
        Angles.Normalize360(GreenwichMeanDeg(utc) + longitudeDeg);

    /// <summary>Local apparent sidereal time in degrees; longitude east-positive, degrees.</summary>
    public static double LocalApparentDeg(DateTimeOffset utc, double longitudeDeg) =>
        Angles.Normalize360(GreenwichApparentDeg(utc) + longitudeDeg);
}
