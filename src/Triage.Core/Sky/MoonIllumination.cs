// Illuminated fraction of the Moon's disk.
//
//   cos ψ = û☾ · û☉ (geocentric elongation),  tan i = R sin ψ / (Δ − R cos ψ),  k = (1 + cos i)/2
//   R: Sun distance, Δ: Moon distance (same unit).
//
// References
//   1. J. Meeus, Astronomical Algorithms, 2nd ed. (1998), ch. 48, eqs. 48.1–48.3, example 48.a.
namespace Triage.Core.Sky;

/// <summary>The Moon's phase at one instant.</summary>
/// <param name="IlluminatedFraction">Illuminated fraction k of the disk, 0 (new) … 1 (full).</param>
/// <param name="PhaseAngleDeg">Phase angle i (Sun–Moon–Earth), degrees, 0 (full) … 180 (new).</param>
/// <param name="ElongationDeg">Geocentric Sun–Moon elongation ψ, degrees.</param>
public readonly record struct MoonPhase(double IlluminatedFraction, double PhaseAngleDeg, double ElongationDeg)
{
    private const double KmPerAu = 149597870.7;

    /// <summary>The Moon's phase at a Julian date in TT.</summary>
    public static MoonPhase At(double jdTT) => From(SolarPosition.Compute(jdTT), LunarPosition.Compute(jdTT));

    /// <summary>The Moon's phase at a UTC instant.</summary>
    public static MoonPhase At(DateTimeOffset utc) => At(AstroTime.JulianDateTT(utc));

    internal static MoonPhase From(SunPosition sun, MoonPosition moon)
    {
        double psi = Vec3.AngleDeg(sun.Apparent.UnitVector, moon.Apparent.UnitVector) * Angles.DegToRad;
        double r = sun.DistanceAu * KmPerAu;
        double i = Math.Atan2(r * Math.Sin(psi), moon.DistanceKm - r * Math.Cos(psi));
        return new MoonPhase((1 + Math.Cos(i)) / 2, i * Angles.RadToDeg, psi * Angles.RadToDeg);
    }
}
