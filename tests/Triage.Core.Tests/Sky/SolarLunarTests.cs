using Triage.Core.Sky;

namespace Triage.Core.Tests.Sky;

public class SolarLunarTests
{
    private const double Arcsec = 1.0 / 3600.0;

    [Fact]
    public void SolarPositionCompute_1992Oct13_MatchesMeeusExample25a()
    {
        // Meeus 2nd ed. example 25.a (check-values §1, S1/S3): α = 198.38083°, δ = −7.78507°, R = 0.99766 AU, JDE 2448908.5.
        // Same algorithm: tolerance 0.0001° (the book's rounding) and 1e-5 AU.
        var sun = SolarPosition.Compute(2448908.5);
        Assert.InRange(sun.Apparent.RaDeg - 198.38083, -1e-4, 1e-4);
        Assert.InRange(sun.Apparent.DecDeg - -7.78507, -1e-4, 1e-4);
        Assert.InRange(sun.DistanceAu - 0.99766, -1e-5, 1e-5);
    }

    [Fact]
    public void SolarPositionCompute_1992Oct13_WithinLowAccuracyBoundOfErfa()
    {
        // astropy builtin (erfa.epv00) TETE, check-values §1 row 25.a: α = 198.378137°, δ = −7.783812°.
        // Tolerance 15″ as check-values suggests for the low-accuracy method (measured error 9.6″ / 4.5″).
        var sun = SolarPosition.Compute(2448908.5);
        double dRa = (sun.Apparent.RaDeg - 198.378137) * Math.Cos(-7.78 * Math.PI / 180);
        Assert.InRange(dRa, -15 * Arcsec, 15 * Arcsec);
        Assert.InRange(sun.Apparent.DecDeg - -7.783812, -15 * Arcsec, 15 * Arcsec);
    }

    [Fact]
    public void LunarPositionCompute_1992Apr12_MatchesMeeusExample47a()
    {
        // Meeus 2nd ed. example 47.a (check-values §1, S1): λ = 133.162655°, β = −3.229126°, Δ = 368409.7 km,
        // π = 0.991990°, apparent λ = 133.167265°. Same series: tolerance 1e-6° (book rounding) and 0.1 km.
        var moon = LunarPosition.Compute(2448724.5);
        Assert.InRange(moon.LongitudeDeg - 133.162655, -1e-6, 1e-6);
        Assert.InRange(moon.LatitudeDeg - -3.229126, -1e-6, 1e-6);
        Assert.InRange(moon.DistanceKm - 368409.7, -0.1, 0.1);
        Assert.InRange(moon.HorizontalParallaxDeg - 0.991990, -1e-6, 1e-6);
        // Apparent λ adds our truncated nutation (≤ 0.05″): tolerance 0.1″.
        Assert.InRange(moon.ApparentLongitudeDeg - 133.167265, -0.1 * Arcsec, 0.1 * Arcsec);
    }

    [Fact]
    public void LunarPositionCompute_1992Apr12_ApparentRaDecMatchMeeusAndErfa()
    {
        // Meeus 47.a α = 134.688470°, δ = 13.768368° (check-values §1: from memory, corroborated by S1/S4 and by
        // astropy TETE 134.688477°/13.768370°). Tolerance 0.5″: truncated nutation and rounding.
        var moon = LunarPosition.Compute(2448724.5);
        Assert.InRange((moon.Apparent.RaDeg - 134.688470) * Math.Cos(13.77 * Math.PI / 180), -0.5 * Arcsec, 0.5 * Arcsec);
        Assert.InRange(moon.Apparent.DecDeg - 13.768368, -0.5 * Arcsec, 0.5 * Arcsec);
    }

    [Fact]
    public void MoonPhaseAt_1992Apr12_MatchesMeeusExample48a()
    {
        // Meeus 2nd ed. example 48.a (check-values §1; S4 k = 0.6785589): k = 0.6786, i = 69.0756°, ψ = 110.7929°.
        // Tolerance: k ±1e-4 (book rounding); angles ±0.01° (low-accuracy Sun, ~10″).
        var phase = MoonPhase.At(2448724.5);
        Assert.InRange(phase.IlluminatedFraction - 0.6786, -1e-4, 1e-4);
        Assert.InRange(phase.PhaseAngleDeg - 69.0756, -0.01, 0.01);
        Assert.InRange(phase.ElongationDeg - 110.7929, -0.01, 0.01);
    }
}
