// Geocentric position of the Moon from the main periodic terms of ELP-2000/82 (about 10″, 50 km).
//
//   λ = L′ + Σl·10⁻⁶ °,  β = Σb·10⁻⁶ °,  Δ = 385000.56 + Σr·10⁻³ km
//   Σl = Σ cᵢ Eᵏ sin(dᵢD + mᵢM + m′ᵢM′ + fᵢF) + 3958 sin A₁ + 1962 sin(L′ − F) + 318 sin A₂   (table 47.A)
//   Σr = Σ cᵢ Eᵏ cos(…)   (table 47.A),   E = 1 − 0.002516T − 0.0000074T²,  k = |mᵢ|
//   Σb = Σ cᵢ Eᵏ sin(…) − 2235 sin L′ + 382 sin A₃ + 175 sin(A₁ − F) + 175 sin(A₁ + F)
//        + 127 sin(L′ − M′) − 115 sin(L′ + M′)   (table 47.B)
//   Apparent λ adds Δψ; equatorial coordinates use the true obliquity ε.
//
// References
//   1. J. Meeus, Astronomical Algorithms, 2nd ed. (1998), ch. 47 (eqs. 47.1–47.6, tables 47.A and 47.B), example 47.a.
//   2. M. Chapront-Touzé, J. Chapront, Lunar Tables and Programs from 4000 B.C. to A.D. 8000 (1991).
namespace Triage.Core.Sky;

/// <summary>The Moon's geocentric place at one instant.</summary>
/// <param name="LongitudeDeg">Geometric ecliptic longitude (mean equinox of date), degrees.</param>
/// <param name="LatitudeDeg">Ecliptic latitude, degrees.</param>
/// <param name="DistanceKm">Earth–Moon centre distance, km.</param>
/// <param name="ApparentLongitudeDeg">Apparent longitude (nutation added), degrees.</param>
/// <param name="Apparent">Apparent geocentric right ascension and declination (true equator and equinox of date).</param>
public readonly record struct MoonPosition(
    double LongitudeDeg, double LatitudeDeg, double DistanceKm, double ApparentLongitudeDeg, EquatorialPosition Apparent)
{
    /// <summary>Equatorial horizontal parallax, degrees (asin of 6378.14 km / distance).</summary>
    public double HorizontalParallaxDeg => Math.Asin(6378.14 / DistanceKm) * Angles.RadToDeg;
}

/// <summary>Geocentric Moon positions (Meeus ch. 47).</summary>
/// <remarks>Accuracy about 10″ in longitude, 4″ in latitude and 50 km in distance over 1950–2050.</remarks>
public static class LunarPosition
{
    // D, M, M', F, Σl coefficient, Σr coefficient (table 47.A).
    private static readonly int[,] LongitudeDistanceTerms =
    {
        { 0, 0, 1, 0, 6288774, -20905355 }, { 2, 0, -1, 0, 1274027, -3699111 },
        { 2, 0, 0, 0, 658314, -2955968 }, { 0, 0, 2, 0, 213618, -569925 },
        { 0, 1, 0, 0, -185116, 48888 }, { 0, 0, 0, 2, -114332, -3149 },
        { 2, 0, -2, 0, 58793, 246158 }, { 2, -1, -1, 0, 57066, -152138 },
        { 2, 0, 1, 0, 53322, -170733 }, { 2, -1, 0, 0, 45758, -204586 },
        { 0, 1, -1, 0, -40923, -129620 }, { 1, 0, 0, 0, -34720, 108743 },
        { 0, 1, 1, 0, -30383, 104755 }, { 2, 0, 0, -2, 15327, 10321 },
        { 0, 0, 1, 2, -12528, 0 }, { 0, 0, 1, -2, 10980, 79661 },
        { 4, 0, -1, 0, 10675, -34782 }, { 0, 0, 3, 0, 10034, -23210 },
        { 4, 0, -2, 0, 8548, -21636 }, { 2, 1, -1, 0, -7888, 24208 },
        { 2, 1, 0, 0, -6766, 30824 }, { 1, 0, -1, 0, -5163, -8379 },
        { 1, 1, 0, 0, 4987, -16675 }, { 2, -1, 1, 0, 4036, -12831 },
        { 2, 0, 2, 0, 3994, -10445 }, { 4, 0, 0, 0, 3861, -11650 },
        { 2, 0, -3, 0, 3665, 14403 }, { 0, 1, -2, 0, -2689, -7003 },
        { 2, 0, -1, 2, -2602, 0 }, { 2, -1, -2, 0, 2390, 10056 },
        { 1, 0, 1, 0, -2348, 6322 }, { 2, -2, 0, 0, 2236, -9884 },
        { 0, 1, 2, 0, -2120, 5751 }, { 0, 2, 0, 0, -2069, 0 },
        { 2, -2, -1, 0, 2048, -4950 }, { 2, 0, 1, -2, -1773, 4130 },
        { 2, 0, 0, 2, -1595, 0 }, { 4, -1, -1, 0, 1215, -3958 },
        { 0, 0, 2, 2, -1110, 0 }, { 3, 0, -1, 0, -892, 3258 },
        { 2, 1, 1, 0, -810, 2616 }, { 4, -1, -2, 0, 759, -1897 },
        { 0, 2, -1, 0, -713, -2117 }, { 2, 2, -1, 0, -700, 2354 },
        { 2, 1, -2, 0, 691, 0 }, { 2, -1, 0, -2, 596, 0 },
        { 4, 0, 1, 0, 549, -1423 }, { 0, 0, 4, 0, 537, -1117 },
        { 4, -1, 0, 0, 520, -1571 }, { 1, 0, -2, 0, -487, -1739 },
        { 2, 1, 0, -2, -399, 0 }, { 0, 0, 2, -2, -381, -4421 },
        { 1, 1, 1, 0, 351, 0 }, { 3, 0, -2, 0, -340, 0 },
        { 4, 0, -3, 0, 330, 0 }, { 2, -1, 2, 0, 327, 0 },
        { 0, 2, 1, 0, -323, 1165 }, { 1, 1, -1, 0, 299, 0 },
        { 2, 0, 3, 0, 294, 0 }, { 2, 0, -1, -2, 0, 8752 },
    };

    // D, M, M', F, Σb coefficient (table 47.B).
    private static readonly int[,] LatitudeTerms =
    {
        { 0, 0, 0, 1, 5128122 }, { 0, 0, 1, 1, 280602 }, { 0, 0, 1, -1, 277693 }, { 2, 0, 0, -1, 173237 },
        { 2, 0, -1, 1, 55413 }, { 2, 0, -1, -1, 46271 }, { 2, 0, 0, 1, 32573 }, { 0, 0, 2, 1, 17198 },
        { 2, 0, 1, -1, 9266 }, { 0, 0, 2, -1, 8822 }, { 2, -1, 0, -1, 8216 }, { 2, 0, -2, -1, 4324 },
        { 2, 0, 1, 1, 4200 }, { 2, 1, 0, -1, -3359 }, { 2, -1, -1, 1, 2463 }, { 2, -1, 0, 1, 2211 },
        { 2, -1, -1, -1, 2065 }, { 0, 1, -1, -1, -1870 }, { 4, 0, -1, -1, 1828 }, { 0, 1, 0, 1, -1794 },
        { 0, 0, 0, 3, -1749 }, { 0, 1, -1, 1, -1565 }, { 1, 0, 0, 1, -1491 }, { 0, 1, 1, 1, -1475 },
        { 0, 1, 1, -1, -1410 }, { 0, 1, 0, -1, -1344 }, { 1, 0, 0, -1, -1335 }, { 0, 0, 3, 1, 1107 },
        { 4, 0, 0, -1, 1021 }, { 4, 0, -1, 1, 833 }, { 0, 0, 1, -3, 777 }, { 4, 0, -2, 1, 671 },
        { 2, 0, 0, -3, 607 }, { 2, 0, 2, -1, 596 }, { 2, -1, 1, -1, 491 }, { 2, 0, -2, 1, -451 },
        { 0, 0, 3, -1, 439 }, { 2, 0, 2, 1, 422 }, { 2, 0, -3, -1, 421 }, { 2, 1, -1, 1, -366 },
        { 2, 1, 0, 1, -351 }, { 4, 0, 0, 1, 331 }, { 2, -1, 1, 1, 315 }, { 2, -2, 0, -1, 302 },
        { 0, 0, 1, 3, -283 }, { 2, 1, 1, -1, -229 }, { 1, 1, 0, -1, 223 }, { 1, 1, 0, 1, 223 },
        { 0, 1, -2, -1, -220 }, { 2, 1, -1, -1, -220 }, { 1, 0, 1, 1, -185 }, { 2, -1, -2, -1, 181 },
        { 0, 1, 2, 1, -177 }, { 4, 0, -2, -1, 176 }, { 4, -1, -1, -1, 166 }, { 1, 0, 1, -1, -164 },
        { 4, 0, 1, -1, 132 }, { 1, 0, -1, -1, -119 }, { 4, -1, 0, -1, 115 }, { 2, -2, 0, 1, 107 },
    };

    /// <summary>The Moon's geocentric position at a Julian date in TT.</summary>
    public static MoonPosition Compute(double jdTT) => Compute(jdTT, Nutation.Compute(jdTT));

    /// <summary>The Moon's geocentric position at a UTC instant.</summary>
    public static MoonPosition Compute(DateTimeOffset utc) => Compute(AstroTime.JulianDateTT(utc));

    internal static MoonPosition Compute(double jdTT, NutationAngles nutation)
    {
        double t = AstroTime.CenturiesSinceJ2000(jdTT);
        double t2 = t * t, t3 = t2 * t, t4 = t3 * t;
        double lp = 218.3164477 + 481267.88123421 * t - 0.0015786 * t2 + t3 / 538841.0 - t4 / 65194000.0;
        double d = 297.8501921 + 445267.1114034 * t - 0.0018819 * t2 + t3 / 545868.0 - t4 / 113065000.0;
        double m = 357.5291092 + 35999.0502909 * t - 0.0001536 * t2 + t3 / 24490000.0;
        double mp = 134.9633964 + 477198.8675055 * t + 0.0087414 * t2 + t3 / 69699.0 - t4 / 14712000.0;
        double f = 93.2720950 + 483202.0175233 * t - 0.0036539 * t2 - t3 / 3526000.0 + t4 / 863310000.0;
        double a1 = (119.75 + 131.849 * t) * Angles.DegToRad;
        double a2 = (53.09 + 479264.290 * t) * Angles.DegToRad;
        double a3 = (313.45 + 481266.484 * t) * Angles.DegToRad;
        double e = 1 - 0.002516 * t - 0.0000074 * t2;

        double lpR = lp * Angles.DegToRad, dR = d * Angles.DegToRad, mR = m * Angles.DegToRad;
        double mpR = mp * Angles.DegToRad, fR = f * Angles.DegToRad;

        double sumL = 0, sumR = 0, sumB = 0;
        for (int i = 0; i < LongitudeDistanceTerms.GetLength(0); i++)
        {
            int mm = LongitudeDistanceTerms[i, 1];
            double arg = LongitudeDistanceTerms[i, 0] * dR + mm * mR + LongitudeDistanceTerms[i, 2] * mpR + LongitudeDistanceTerms[i, 3] * fR;
            double scale = EccentricityFactor(mm, e);
            sumL += LongitudeDistanceTerms[i, 4] * scale * Math.Sin(arg);
            sumR += LongitudeDistanceTerms[i, 5] * scale * Math.Cos(arg);
        }

        for (int i = 0; i < LatitudeTerms.GetLength(0); i++)
        {
            int mm = LatitudeTerms[i, 1];
            double arg = LatitudeTerms[i, 0] * dR + mm * mR + LatitudeTerms[i, 2] * mpR + LatitudeTerms[i, 3] * fR;
            sumB += LatitudeTerms[i, 4] * EccentricityFactor(mm, e) * Math.Sin(arg);
        }

        sumL += 3958 * Math.Sin(a1) + 1962 * Math.Sin(lpR - fR) + 318 * Math.Sin(a2);
        sumB += -2235 * Math.Sin(lpR) + 382 * Math.Sin(a3) + 175 * Math.Sin(a1 - fR) + 175 * Math.Sin(a1 + fR)
                + 127 * Math.Sin(lpR - mpR) - 115 * Math.Sin(lpR + mpR);

        double lon = Angles.Normalize360(lp + sumL * 1e-6);
        double lat = sumB * 1e-6;
        double dist = 385000.56 + sumR / 1000.0;
        double appLon = Angles.Normalize360(lon + nutation.DeltaPsiArcsec / 3600.0);

        var ecl = Vec3.FromSpherical(appLon * Angles.DegToRad, lat * Angles.DegToRad);
        var eq = Mat3.R1(-nutation.TrueObliquityDeg * Angles.DegToRad) * ecl;
        return new MoonPosition(lon, lat, dist, appLon, EquatorialPosition.FromVector(eq));
    }

    private static double EccentricityFactor(int mMultiplier, double e) => mMultiplier switch
    {
        0 => 1.0,
        1 or -1 => e,
        _ => e * e,
    };
}
