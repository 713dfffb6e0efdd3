// ICRS → apparent place (true equator and equinox of date) of a fixed target.
//
//   u_date = N · (P · u + v/c),  normalised;   P = R3(−z) R2(θ) R3(−ζ),   N = R1(−ε) R3(−Δψ) R1(ε₀)
//   ζ, z, θ: IAU 1976 precession angles from J2000 (Meeus eq. 21.3); Δψ, ε: nutation (Meeus ch. 22).
//   v/c: annual aberration, κ = 20.49552″, Earth velocity from the Sun's true longitude ☉ and the
//   eccentricity term e, ϖ of Meeus eq. 23.2:  v/c = κ (sin ☉ − e sin ϖ, −cos ☉ + e cos ϖ, 0) in the ecliptic.
//   The ICRS is treated as the J2000 mean equator (frame bias 0.02″ is ignored); light deflection,
//   diurnal aberration (≤ 0.3″) and polar motion are ignored.
//
// References
//   1. J. Meeus, Astronomical Algorithms, 2nd ed. (1998), ch. 21 (eq. 21.3), ch. 22, ch. 23 (eq. 23.2).
//   2. J. H. Lieske et al., "Expressions for the precession quantities", A&A 58 (1977) 1–16.
//   3. Explanatory Supplement to the Astronomical Almanac (1992), §3.21 (rotation-matrix form).
namespace Triage.Core.Sky;

/// <summary>Apparent places (true equator and equinox of date) of fixed ICRS targets.</summary>
/// <remarks>Agrees with ERFA/astropy TETE to better than 1″ for 1950–2050.</remarks>
public static class ApparentPlace
{
    private const double AberrationConstantArcsec = 20.49552;

    /// <summary>Apparent right ascension and declination (true equator and equinox of date) at a TT Julian date.</summary>
    public static EquatorialPosition Of(SkyTarget target, double jdTT) =>
        EquatorialPosition.FromVector(Transform.At(jdTT).Apply(target.Validated().UnitVector));

    /// <summary>Apparent place at a UTC instant.</summary>
    public static EquatorialPosition Of(SkyTarget target, DateTimeOffset utc) => Of(target, AstroTime.JulianDateTT(utc));

    /// <summary>IAU 1976 precession matrix from the J2000 mean equator to the mean equator of date.</summary>
    internal static Mat3 PrecessionMatrix(double jdTT)
    {
        double t = AstroTime.CenturiesSinceJ2000(jdTT);
        double t2 = t * t, t3 = t2 * t;
        double zeta = (2306.2181 * t + 0.30188 * t2 + 0.017998 * t3) * Angles.ArcsecToRad;
        double z = (2306.2181 * t + 1.09468 * t2 + 0.018203 * t3) * Angles.ArcsecToRad;
        double theta = (2004.3109 * t - 0.42665 * t2 - 0.041833 * t3) * Angles.ArcsecToRad;
        return Mat3.R3(-z) * Mat3.R2(theta) * Mat3.R3(-zeta);
    }

    /// <summary>Nutation matrix from the mean to the true equator of date.</summary>
    internal static Mat3 NutationMatrix(NutationAngles n)
    {
        double eps0 = n.MeanObliquityDeg * Angles.DegToRad;
        double eps = n.TrueObliquityDeg * Angles.DegToRad;
        return Mat3.R1(-eps) * Mat3.R3(-n.DeltaPsiArcsec * Angles.ArcsecToRad) * Mat3.R1(eps0);
    }

    /// <summary>Earth's velocity over c (annual aberration) in the mean equatorial frame of date.</summary>
    internal static Vec3 AberrationVector(double jdTT, double meanObliquityDeg)
    {
        double t = AstroTime.CenturiesSinceJ2000(jdTT);
        double sunLon = SolarPosition.TrueLongitudeDeg(jdTT) * Angles.DegToRad;
        double e = 0.016708634 - 0.000042037 * t - 0.0000001267 * t * t;
        double perihelion = (102.93735 + 1.71946 * t + 0.00046 * t * t) * Angles.DegToRad;
        double k = AberrationConstantArcsec * Angles.ArcsecToRad;
        double vx = k * (Math.Sin(sunLon) - e * Math.Sin(perihelion));
        double vy = k * (-Math.Cos(sunLon) + e * Math.Cos(perihelion));
        double eps = meanObliquityDeg * Angles.DegToRad;
        return new Vec3(vx, vy * Math.Cos(eps), vy * Math.Sin(eps));
    }

    /// <summary>The whole ICRS → apparent-place transformation frozen at one instant.</summary>
    internal readonly struct Transform
    {
        private readonly Mat3 _precession;
        private readonly Mat3 _nutation;
        private readonly Vec3 _aberration;

        private Transform(Mat3 precession, Mat3 nutation, Vec3 aberration, NutationAngles angles)
        {
            _precession = precession;
            _nutation = nutation;
            _aberration = aberration;
            Nutation = angles;
        }

        public NutationAngles Nutation { get; }

        public static Transform At(double jdTT)
        {
            var n = Sky.Nutation.Compute(jdTT);
            return new Transform(PrecessionMatrix(jdTT), NutationMatrix(n), AberrationVector(jdTT, n.MeanObliquityDeg), n);
        }

        public Vec3 Apply(Vec3 icrsUnit) => _nutation * (_precession * icrsUnit + _aberration).Normalized();
    }
}
