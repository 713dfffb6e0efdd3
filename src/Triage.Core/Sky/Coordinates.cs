namespace Triage.Core.Sky;

/// <summary>
/// A fixed target in the ICRS (J2000 mean place to better than 0.03″), degrees.
/// </summary>
/// <param name="RaDeg">Right ascension, [0, 360).</param>
/// <param name="DecDeg">Declination, [−90, 90].</param>
public readonly record struct SkyTarget(double RaDeg, double DecDeg)
{
    /// <summary>Checks the ranges and returns the target.</summary>
    /// <exception cref="ArgumentOutOfRangeException">RA outside [0, 360) or Dec outside [−90, 90] or not finite.</exception>
    public SkyTarget Validated()
    {
        if (!(RaDeg >= 0 && RaDeg < 360))
        {
            throw new ArgumentOutOfRangeException(nameof(RaDeg), RaDeg, "Right ascension must be in [0, 360) degrees.");
        }

        if (!(DecDeg >= -90 && DecDeg <= 90))
        {
            throw new ArgumentOutOfRangeException(nameof(DecDeg), DecDeg, "Declination must be in [−90, 90] degrees.");
        }

        return this;
    }

    internal Vec3 UnitVector => Vec3.FromSpherical(RaDeg * Angles.DegToRad, DecDeg * Angles.DegToRad);
}

/// <summary>Equatorial coordinates (right ascension and declination) in degrees, in a frame named by the producer.</summary>
public readonly record struct EquatorialPosition(double RaDeg, double DecDeg)
{
    internal static EquatorialPosition FromVector(Vec3 v) => new(v.LonRad * Angles.RadToDeg, v.LatRad * Angles.RadToDeg);

    internal Vec3 UnitVector => Vec3.FromSpherical(RaDeg * Angles.DegToRad, DecDeg * Angles.DegToRad);
}

/// <summary>Horizontal coordinates: altitude above the horizon and azimuth from North through East, degrees.</summary>
public readonly record struct HorizontalPosition(double AltitudeDeg, double AzimuthDeg);

/// <summary>
/// An observer on the WGS84 ellipsoid. Longitude is <b>east-positive</b>.
/// </summary>
/// <param name="LatitudeDeg">Geodetic latitude, [−90, 90].</param>
/// <param name="LongitudeDeg">Longitude east-positive, [−180, 360).</param>
/// <param name="ElevationM">Height above the ellipsoid, metres (−500 … 10,000).</param>
public readonly record struct Observer(double LatitudeDeg, double LongitudeDeg, double ElevationM)
{
    private const double EquatorialRadiusKm = 6378.137;
    private const double PolarAxisRatio = 1 - 1 / 298.257223563;

    /// <summary>The observer at a roster site.</summary>
    public static Observer FromSite(Roster.Site site) => new Observer(site.LatitudeDeg, site.LongitudeDeg, site.ElevationM).Validated();

    /// <summary>Checks the ranges and returns the observer.</summary>
    /// <exception cref="ArgumentOutOfRangeException">A coordinate is out of range or not finite.</exception>
    public Observer Validated()
    {
        if (!(LatitudeDeg >= -90 && LatitudeDeg <= 90))
        {
            throw new ArgumentOutOfRangeException(nameof(LatitudeDeg), LatitudeDeg, "Latitude must be in [−90, 90] degrees.");
        }

        if (!(LongitudeDeg >= -180 && LongitudeDeg < 360))
        {
            throw new ArgumentOutOfRangeException(nameof(LongitudeDeg), LongitudeDeg, "Longitude must be in [−180, 360) degrees, east positive.");
        }

        if (!(ElevationM >= -500 && ElevationM <= 10000))
        {
            throw new ArgumentOutOfRangeException(nameof(ElevationM), ElevationM, "Elevation must be in [−500, 10000] m.");
        }

        return this;
    }

    /// <summary>
    /// Geocentric position of the observer in km, in the true equatorial frame of date rotated by the
    /// local apparent sidereal time (Meeus ch. 11: ρ sin φ′, ρ cos φ′).
    /// </summary>
    internal Vec3 GeocentricKm(double localSiderealRad)
    {
        double phi = LatitudeDeg * Angles.DegToRad;
        double u = Math.Atan(PolarAxisRatio * Math.Tan(phi));
        double h = ElevationM / 1000.0 / EquatorialRadiusKm;
        double rhoSin = PolarAxisRatio * Math.Sin(u) + h * Math.Sin(phi);
        double rhoCos = Math.Cos(u) + h * Math.Cos(phi);
        return new Vec3(
            EquatorialRadiusKm * rhoCos * Math.Cos(localSiderealRad),
            EquatorialRadiusKm * rhoCos * Math.Sin(localSiderealRad),
            EquatorialRadiusKm * rhoSin);
    }
}
