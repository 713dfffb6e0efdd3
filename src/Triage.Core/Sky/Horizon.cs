// Equatorial → horizontal coordinates, hour angle and atmospheric refraction.
//
//   H = LAST − α,   sin h = sin φ sin δ + cos φ cos δ cos H
//   A (from North through East) = atan2(−cos δ sin H, sin δ cos φ − cos δ sin φ cos H)
//   Refraction of a true altitude h (Sæmundsson): R′ = 1.02 / tan(h + 10.3/(h + 5.11)) arcmin,
//   Bennett for an apparent altitude h₀:          R′ = 1 / tan(h₀ + 7.31/(h₀ + 4.4)) arcmin,
//   both scaled by (P/1010 hPa)·(283 K/(273 K + T)).
//
// References
//   1. J. Meeus, Astronomical Algorithms, 2nd ed. (1998), ch. 13 (eqs. 13.5–13.6), ch. 16 (eqs. 16.3–16.4).
//   2. G. G. Bennett, "The calculation of astronomical refraction in marine navigation", J. Navigation 35 (1982) 255.
//   3. Þ. Sæmundsson, Sky and Telescope 72 (1986) 70.
namespace Triage.Core.Sky;

/// <summary>Weather used for refraction. Defaults: 1010 hPa and 10 °C (the formulas' reference atmosphere).</summary>
public sealed record Atmosphere
{
    /// <summary>Air pressure at the site, hPa (0 gives no refraction). Default 1010.</summary>
    public double PressureHpa { get; init; } = 1010;

    /// <summary>Air temperature, °C. Default 10.</summary>
    public double TemperatureC { get; init; } = 10;

    /// <summary>Pressure/temperature factor (P/1010)(283/(273 + T)).</summary>
    public double Factor => PressureHpa / 1010.0 * (283.0 / (273.0 + TemperatureC));
}

/// <summary>Horizontal coordinates, hour angle and refraction.</summary>
public static class Horizon
{
    /// <summary>
    /// Altitude and azimuth (from North through East) of a body with hour angle
    /// <paramref name="hourAngleDeg"/> and declination <paramref name="decDeg"/> at geodetic latitude
    /// <paramref name="latitudeDeg"/>; all degrees. Airless (no refraction).
    /// </summary>
    public static HorizontalPosition FromHourAngle(double hourAngleDeg, double decDeg, double latitudeDeg)
    {
        double h = hourAngleDeg * Angles.DegToRad, d = decDeg * Angles.DegToRad, f = latitudeDeg * Angles.DegToRad;
        double sinAlt = Math.Sin(f) * Math.Sin(d) + Math.Cos(f) * Math.Cos(d) * Math.Cos(h);
        double az = Math.Atan2(-Math.Cos(d) * Math.Sin(h), Math.Sin(d) * Math.Cos(f) - Math.Cos(d) * Math.Sin(f) * Math.Cos(h));
        return new HorizontalPosition(Math.Asin(Math.Clamp(sinAlt, -1, 1)) * Angles.RadToDeg, Angles.Normalize360(az * Angles.RadToDeg));
    }

    /// <summary>Hour angle in degrees, [−180, 180): positive west of the meridian.</summary>
    public static double HourAngleDeg(double localSiderealDeg, double raDeg) => Angles.Normalize180(localSiderealDeg - raDeg);

    /// <summary>
    /// Refraction in degrees to add to a true (airless) altitude to get the apparent one (Sæmundsson).
    /// Returns 0 below −1° where the formula is meaningless.
    /// </summary>
    /// <remarks>Agrees with Bennett's inverse to about 4″; accurate to about 0.1′ above 15° for standard weather.</remarks>
    public static double RefractionFromTrueDeg(double trueAltitudeDeg, Atmosphere? atmosphere = null)
    {
        if (trueAltitudeDeg < -1)
        {
            return 0;
        }

        double arcmin = 1.02 / Math.Tan((trueAltitudeDeg + 10.3 / (trueAltitudeDeg + 5.11)) * Angles.DegToRad);
        return Math.Max(0, arcmin) / 60.0 * (atmosphere ?? new Atmosphere()).Factor;
    }

    /// <summary>
    /// Refraction in degrees to subtract from an apparent altitude to get the true one (Bennett).
    /// Returns 0 below −1°.
    /// </summary>
    public static double RefractionFromApparentDeg(double apparentAltitudeDeg, Atmosphere? atmosphere = null)
    {
        if (apparentAltitudeDeg < -1)
        {
            return 0;
        }

        double arcmin = 1.0 / Math.Tan((apparentAltitudeDeg + 7.31 / (apparentAltitudeDeg + 4.4)) * Angles.DegToRad);
        return Math.Max(0, arcmin) / 60.0 * (atmosphere ?? new Atmosphere()).Factor;
    }
}

/// <summary>Airmass from altitude.</summary>
/// <remarks>
/// Kasten &amp; Young (1989), Applied Optics 28(22), 4735–4738:
/// X = 1 / [sin γ + 0.50572 (γ + 6.07995°)^−1.6364], γ the altitude in degrees. It is used unclamped,
/// so X(zenith) = 0.999712. The altitude passed is the airless (true) one, as in the reference tables.
/// </remarks>
public static class Airmass
{
    /// <summary>Kasten &amp; Young (1989) airmass at an altitude in degrees; null below the horizon (altitude &lt; 0).</summary>
    public static double? KastenYoung(double altitudeDeg) =>
        altitudeDeg < 0 || double.IsNaN(altitudeDeg) ? null : KastenYoungUnchecked(altitudeDeg);

    /// <summary>Plane-parallel airmass sec z at an altitude in degrees; null at or below the horizon.</summary>
    public static double? PlaneParallel(double altitudeDeg) =>
        altitudeDeg <= 0 || double.IsNaN(altitudeDeg) ? null : 1.0 / Math.Sin(altitudeDeg * Angles.DegToRad);

    /// <summary>
    /// Lowest altitude (degrees) at which the Kasten &amp; Young airmass is at most <paramref name="maxAirmass"/>.
    /// </summary>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="maxAirmass"/> is below 1 or not finite.</exception>
    public static double AltitudeForAirmassDeg(double maxAirmass)
    {
        if (!(maxAirmass >= 1) || double.IsInfinity(maxAirmass))
        {
            throw new ArgumentOutOfRangeException(nameof(maxAirmass), maxAirmass, "The airmass limit must be a finite number ≥ 1.");
        }

        if (maxAirmass >= KastenYoungUnchecked(0))
        {
            return 0;
        }

        double lo = 0, hi = 90;
        for (int i = 0; i < 60; i++)
        {
            double mid = 0.5 * (lo + hi);
            if (KastenYoungUnchecked(mid) > maxAirmass)
            {
                lo = mid;
            }
            else
            {
                hi = mid;
            }
        }

        return hi;
    }

    internal static double KastenYoungUnchecked(double altitudeDeg) =>
        1.0 / (Math.Sin(altitudeDeg * Angles.DegToRad) + 0.50572 * Math.Pow(altitudeDeg + 6.07995, -1.6364));
}
