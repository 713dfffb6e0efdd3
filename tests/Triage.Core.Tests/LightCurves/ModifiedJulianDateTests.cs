using Triage.Core.LightCurves;

namespace Triage.Core.Tests.LightCurves;

public class ModifiedJulianDateTests
{
    [Fact]
    public void FromUtc_J2000Noon_Is51544Point5()
    {
        // J2000.0 = JD 2451545.0 (definition, check-values §1); MJD = JD − 2400000.5 (definition).
        // Tolerance 1e-9 d: arithmetic only (J2000 is defined in TT; here the UTC instant 2000-01-01T12:00Z is used).
        Assert.Equal(51544.5, ModifiedJulianDate.FromUtc(new DateTimeOffset(2000, 1, 1, 12, 0, 0, TimeSpan.Zero)), 9);
    }

    [Fact]
    public void FromUtc_Meeus7a_MatchesJulianDay()
    {
        // Meeus, Astronomical Algorithms 2nd ed., example 7.a: 1957 Oct 4.81 → JD 2436116.31 (check-values §1).
        var t = new DateTimeOffset(1957, 10, 4, 0, 0, 0, TimeSpan.Zero).AddDays(0.81);
        Assert.Equal(2436116.31 - 2400000.5, ModifiedJulianDate.FromUtc(t), 6);
    }

    [Fact]
    public void ToUtc_RoundTripsFromUtc()
    {
        var t = new DateTimeOffset(2026, 12, 3, 4, 5, 6, TimeSpan.Zero);
        Assert.Equal(t, ModifiedJulianDate.ToUtc(ModifiedJulianDate.FromUtc(t)));
    }
}
