// Nutation in longitude and obliquity, and the obliquity of the ecliptic (IAU 1980 theory, truncated).
//
//   Δψ = Σ (Sᵢ + Sᵢ′T) sin(Aᵢ),  Δε = Σ (Cᵢ + Cᵢ′T) cos(Aᵢ),  Aᵢ = dᵢD + mᵢM + m′ᵢM′ + fᵢF + ωᵢΩ   (0.0001″)
//   ε₀ = 23°26′21.448″ − 46.8150″T − 0.00059″T² + 0.001813″T³,   ε = ε₀ + Δε
//   T in Julian centuries of TT from J2000.0. The 31 largest of the 63 terms are kept: the omitted
//   terms are each ≤ 0.0013″, together well below 0.05″ (0.003 s of sidereal time).
//
// References
//   1. J. Meeus, Astronomical Algorithms, 2nd ed. (1998), ch. 22, table 22.A, eqs. 22.2–22.3.
//   2. P. K. Seidelmann, "1980 IAU theory of nutation", Celestial Mechanics 27 (1982) 79–106.
namespace Triage.Core.Sky;

/// <summary>Nutation angles and obliquity at one instant.</summary>
/// <param name="DeltaPsiArcsec">Nutation in longitude Δψ, arcsec.</param>
/// <param name="DeltaEpsilonArcsec">Nutation in obliquity Δε, arcsec.</param>
/// <param name="MeanObliquityDeg">Mean obliquity of the ecliptic ε₀, degrees.</param>
public readonly record struct NutationAngles(double DeltaPsiArcsec, double DeltaEpsilonArcsec, double MeanObliquityDeg)
{
    /// <summary>True obliquity ε = ε₀ + Δε, degrees.</summary>
    public double TrueObliquityDeg => MeanObliquityDeg + DeltaEpsilonArcsec / 3600.0;

    /// <summary>Equation of the equinoxes Δψ cos ε, in seconds of time.</summary>
    public double EquationOfEquinoxesSeconds => DeltaPsiArcsec * Math.Cos(TrueObliquityDeg * Angles.DegToRad) / 15.0;
}

/// <summary>IAU 1980 nutation (largest 31 terms) and obliquity of the ecliptic.</summary>
/// <remarks>Accuracy about 0.05″ in Δψ and Δε against the full series.</remarks>
public static class Nutation
{
    // D, M, M', F, Ω multipliers; Δψ sin coefficient and its T rate; Δε cos coefficient and its T rate (0.0001″).
    private static readonly double[,] Terms =
    {
        { 0, 0, 0, 0, 1, -171996, -174.2, 92025, 8.9 },
        { -2, 0, 0, 2, 2, -13187, -1.6, 5736, -3.1 },
        { 0, 0, 0, 2, 2, -2274, -0.2, 977, -0.5 },
        { 0, 0, 0, 0, 2, 2062, 0.2, -895, 0.5 },
        { 0, 1, 0, 0, 0, 1426, -3.4, 54, -0.1 },
        { 0, 0, 1, 0, 0, 712, 0.1, -7, 0 },
        { -2, 1, 0, 2, 2, -517, 1.2, 224, -0.6 },
        { 0, 0, 0, 2, 1, -386, -0.4, 200, 0 },
        { 0, 0, 1, 2, 2, -301, 0, 129, -0.1 },
        { -2, -1, 0, 2, 2, 217, -0.5, -95, 0.3 },
        { -2, 0, 1, 0, 0, -158, 0, 0, 0 },
        { -2, 0, 0, 2, 1, 129, 0.1, -70, 0 },
        { 0, 0, -1, 2, 2, 123, 0, -53, 0 },
        { 2, 0, 0, 0, 0, 63, 0, 0, 0 },
        { 0, 0, 1, 0, 1, 63, 0.1, -33, 0 },
        { 2, 0, -1, 2, 2, -59, 0, 26, 0 },
        { 0, 0, -1, 0, 1, -58, -0.1, 32, 0 },
        { 0, 0, 1, 2, 1, -51, 0, 27, 0 },
        { -2, 0, 2, 0, 0, 48, 0, 0, 0 },
        { 0, 0, -2, 2, 1, 46, 0, -24, 0 },
        { 2, 0, 0, 2, 2, -38, 0, 16, 0 },
        { 0, 0, 2, 2, 2, -31, 0, 13, 0 },
        { 0, 0, 2, 0, 0, 29, 0, 0, 0 },
        { -2, 0, 1, 2, 2, 29, 0, -12, 0 },
        { 0, 0, 0, 2, 0, 26, 0, 0, 0 },
        { -2, 0, 0, 2, 0, -22, 0, 0, 0 },
        { 0, 0, -1, 2, 1, 21, 0, -10, 0 },
        { 0, 2, 0, 0, 0, 17, -0.1, 0, 0 },
        { 2, 0, -1, 0, 1, 16, 0, -8, 0 },
        { -2, 2, 0, 2, 2, -16, 0.1, 7, 0 },
        { 0, 1, 0, 0, 1, -15, 0, 9, 0 },
    };

    /// <summary>Nutation angles and obliquity at a Julian date in TT.</summary>
    public static NutationAngles Compute(double jdTT)
    {
        double t = AstroTime.CenturiesSinceJ2000(jdTT);
        double t2 = t * t, t3 = t2 * t;
        double d = (297.85036 + 445267.111480 * t - 0.0019142 * t2 + t3 / 189474.0) * Angles.DegToRad;
        double m = (357.52772 + 35999.050340 * t - 0.0001603 * t2 - t3 / 300000.0) * Angles.DegToRad;
        double mp = (134.96298 + 477198.867398 * t + 0.0086972 * t2 + t3 / 56250.0) * Angles.DegToRad;
        double f = (93.27191 + 483202.017538 * t - 0.0036825 * t2 + t3 / 327270.0) * Angles.DegToRad;
        double om = (125.04452 - 1934.136261 * t + 0.0020708 * t2 + t3 / 450000.0) * Angles.DegToRad;

        double dpsi = 0, deps = 0;
        for (int i = 0; i < Terms.GetLength(0); i++)
        {
            double arg = Terms[i, 0] * d + Terms[i, 1] * m + Terms[i, 2] * mp + Terms[i, 3] * f + Terms[i, 4] * om;
            dpsi += (Terms[i, 5] + Terms[i, 6] * t) * Math.Sin(arg);
            deps += (Terms[i, 7] + Terms[i, 8] * t) * Math.Cos(arg);
        }

        return new NutationAngles(dpsi * 1e-4, deps * 1e-4, MeanObliquityDeg(jdTT));
    }

    /// <summary>Mean obliquity of the ecliptic ε₀ in degrees (Meeus eq. 22.2, IAU 1976).</summary>
    public static double MeanObliquityDeg(double jdTT)
    {
        double t = AstroTime.CenturiesSinceJ2000(jdTT);
        return 23.0 + 26.0 / 60.0 + (21.448 - 46.8150 * t - 0.00059 * t * t + 0.001813 * t * t * t) / 3600.0;
    }
}
