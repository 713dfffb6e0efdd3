// Topocentric positions of fixed targets, the Sun and the Moon for an observer at an instant.
//
//   Target: apparent place (ApparentPlace) → hour angle H = LAST − α → altitude/azimuth (Horizon).
//   Sun and Moon: geocentric apparent vector r (km) minus the observer's geocentric vector ρ(LAST)
//   (Meeus ch. 11 ρ sin φ′, ρ cos φ′) gives the topocentric direction (parallax: ≤ 1° for the Moon, 9″ for the Sun).
//   Separations are angles between topocentric apparent directions.
//
// References
//   1. J. Meeus, Astronomical Algorithms, 2nd ed. (1998), ch. 11, 13, 40 (parallax in vector form), 48.
namespace Triage.Core.Sky;

/// <summary>
/// The geometry of moonlight for one pointing, as the sky-brightness model needs it.
/// </summary>
/// <param name="PhaseAngleDeg">Moon phase angle i, degrees (0 full, 180 new).</param>
/// <param name="MoonAltitudeDeg">Topocentric altitude of the Moon, degrees.</param>
/// <param name="SeparationDeg">Topocentric angle between the target and the Moon, degrees.</param>
public readonly record struct MoonlightGeometry(double PhaseAngleDeg, double MoonAltitudeDeg, double SeparationDeg);

/// <summary>Topocentric positions and separations at a single instant (no precomputation).</summary>
/// <remarks>Alt/az are airless unless an <see cref="Atmosphere"/> is given; azimuth runs from North through East.</remarks>
public static class SkyPositions
{
    private const double KmPerAu = 149597870.7;

    /// <summary>Altitude and azimuth of a fixed target; refracted when <paramref name="refraction"/> is given.</summary>
    public static HorizontalPosition TargetHorizontal(SkyTarget target, Observer observer, DateTimeOffset utc, Atmosphere? refraction = null)
    {
        var s = Snapshot.At(observer, utc);
        var app = EquatorialPosition.FromVector(s.Stars.Apply(target.Validated().UnitVector));
        var hz = Horizon.FromHourAngle(s.LastDeg - app.RaDeg, app.DecDeg, observer.LatitudeDeg);
        return refraction is null ? hz : hz with { AltitudeDeg = hz.AltitudeDeg + Horizon.RefractionFromTrueDeg(hz.AltitudeDeg, refraction) };
    }

    /// <summary>Hour angle of a target in degrees, [−180, 180), positive west (apparent place, apparent sidereal time).</summary>
    public static double HourAngleDeg(SkyTarget target, Observer observer, DateTimeOffset utc)
    {
        var s = Snapshot.At(observer, utc);
        var app = EquatorialPosition.FromVector(s.Stars.Apply(target.Validated().UnitVector));
        return Horizon.HourAngleDeg(s.LastDeg, app.RaDeg);
    }

    /// <summary>Airless topocentric altitude and azimuth of the Sun's centre.</summary>
    public static HorizontalPosition SunHorizontal(Observer observer, DateTimeOffset utc)
    {
        var s = Snapshot.At(observer, utc);
        return s.Horizontal(s.SunTopocentric(), observer.LatitudeDeg);
    }

    /// <summary>Airless topocentric altitude and azimuth of the Moon's centre.</summary>
    public static HorizontalPosition MoonHorizontal(Observer observer, DateTimeOffset utc)
    {
        var s = Snapshot.At(observer, utc);
        return s.Horizontal(s.MoonTopocentric(), observer.LatitudeDeg);
    }

    /// <summary>Topocentric apparent right ascension and declination of the Moon.</summary>
    public static EquatorialPosition MoonTopocentric(Observer observer, DateTimeOffset utc) =>
        EquatorialPosition.FromVector(Snapshot.At(observer, utc).MoonTopocentric());

    /// <summary>Topocentric angle between a target and the Moon's centre, degrees.</summary>
    public static double MoonSeparationDeg(SkyTarget target, Observer observer, DateTimeOffset utc)
    {
        var s = Snapshot.At(observer, utc);
        return Vec3.AngleDeg(s.Stars.Apply(target.Validated().UnitVector), s.MoonTopocentric());
    }

    /// <summary>Topocentric angle between a target and the Sun's centre, degrees.</summary>
    public static double SunSeparationDeg(SkyTarget target, Observer observer, DateTimeOffset utc)
    {
        var s = Snapshot.At(observer, utc);
        return Vec3.AngleDeg(s.Stars.Apply(target.Validated().UnitVector), s.SunTopocentric());
    }

    /// <summary>Moonlight geometry (phase angle, Moon altitude, separation) for a pointing.</summary>
    public static MoonlightGeometry Moonlight(SkyTarget target, Observer observer, DateTimeOffset utc)
    {
        var s = Snapshot.At(observer, utc);
        var moonPosition = s.Moon;
        var moon = s.MoonTopocentric(moonPosition);
        return new MoonlightGeometry(
            MoonPhase.From(s.Sun, moonPosition).PhaseAngleDeg,
            s.Horizontal(moon, observer.LatitudeDeg).AltitudeDeg,
            Vec3.AngleDeg(s.Stars.Apply(target.Validated().UnitVector), moon));
    }

    /// <summary>Everything that depends only on the instant and the observer; the Sun and Moon are computed on demand.</summary>
    internal readonly struct Snapshot
    {
        public required Observer Observer { get; init; }

        public required ApparentPlace.Transform Stars { get; init; }

        public required double LastDeg { get; init; }

        public required double JulianDateTT { get; init; }

        public SunPosition Sun => SolarPosition.Compute(JulianDateTT);

        public MoonPosition Moon => LunarPosition.Compute(JulianDateTT, Stars.Nutation);

        public static Snapshot At(Observer observer, DateTimeOffset utc)
        {
            double jdTT = AstroTime.JulianDateTT(utc);
            return At(observer, AstroTime.JulianDate(utc), jdTT, ApparentPlace.Transform.At(jdTT));
        }

        /// <summary>Snapshot with a given (possibly shared) star transform and its nutation.</summary>
        public static Snapshot At(Observer observer, double jdUtc, double jdTT, ApparentPlace.Transform stars)
        {
            double last = Angles.Normalize360(SiderealTime.GreenwichMeanDeg(jdUtc)
                + stars.Nutation.EquationOfEquinoxesSeconds * 15.0 / 3600.0 + observer.LongitudeDeg);
            return new Snapshot { Observer = observer, Stars = stars, LastDeg = last, JulianDateTT = jdTT };
        }

        public Vec3 SunTopocentric() => SunTopocentric(Sun);

        public Vec3 SunTopocentric(SunPosition sun) => Topocentric(sun.Apparent.UnitVector, sun.DistanceAu * KmPerAu);

        public Vec3 MoonTopocentric() => MoonTopocentric(Moon);

        public Vec3 MoonTopocentric(MoonPosition moon) => Topocentric(moon.Apparent.UnitVector, moon.DistanceKm);

        public HorizontalPosition Horizontal(Vec3 direction, double latitudeDeg)
        {
            var eq = EquatorialPosition.FromVector(direction);
            return Horizon.FromHourAngle(LastDeg - eq.RaDeg, eq.DecDeg, latitudeDeg);
        }

        private Vec3 Topocentric(Vec3 unit, double distanceKm) =>
            (distanceKm * unit - Observer.GeocentricKm(LastDeg * Angles.DegToRad)).Normalized();
    }
}
