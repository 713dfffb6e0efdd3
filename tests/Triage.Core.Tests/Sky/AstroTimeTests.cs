using Triage.Core.Sky;

namespace Triage.Core.Tests.Sky;

public class AstroTimeTests
{
    [Fact]
    public void JulianDateFromGregorian_SputnikLaunch_MatchesMeeusExample7a()
    {
        // Meeus, Astronomical Algorithms 2nd ed., example 7.a (via PyMeeus, check-values §1): 1957 Oct 4.81 → JD 2436116.31.
        // Tolerance 1e-9 d: exact arithmetic.
        Assert.Equal(2436116.31, AstroTime.JulianDateFromGregorian(1957, 10, 4.81), 9);
    }

    [Fact]
    public void JulianDateFromGregorian_Year333_IsProlepticGregorianLikeErfa()
    {
        // check-values §1 row 7.b: ERFA cal2jd(333,1,27)+0.5 = 1842712.0 (proleptic Gregorian);
        // Meeus's Julian-calendar value 1842713.0 differs by one day by design of our calendar rule.
        Assert.Equal(1842712.0, AstroTime.JulianDateFromGregorian(333, 1, 27.5), 9);
    }

    [Fact]
    public void JulianDate_J2000Noon_Is2451545()
    {
        // Definition of J2000.0 (check-values §1); here applied to the UTC-based JD of 2000-01-01T12:00Z. Exact.
        Assert.Equal(2451545.0, AstroTime.JulianDate(new DateTimeOffset(2000, 1, 1, 12, 0, 0, TimeSpan.Zero)), 9);
    }

    [Theory]
    // JD(UTC) from astropy Time(...).jd, check-values §2b (cases C1, C2, C4, C9). Tolerance 1e-6 d (0.09 s): table rounding.
    [InlineData("2026-01-16T03:00:00Z", 2461056.625000)]
    [InlineData("2026-03-21T02:30:00Z", 2461120.604167)]
    [InlineData("2026-05-13T09:30:00Z", 2461173.895833)]
    [InlineData("2027-07-19T06:00:00Z", 2461605.750000)]
    public void JulianDate_ReferenceInstants_MatchAstropy(string iso, double expected)
    {
        Assert.Equal(expected, AstroTime.JulianDate(DateTimeOffset.Parse(iso)), 6);
    }

    [Fact]
    public void FromJulianDate_RoundTrip_RecoversInstantWithinDoubleResolution()
    {
        var t = new DateTimeOffset(2026, 8, 29, 3, 30, 12, 345, TimeSpan.Zero);
        var back = AstroTime.FromJulianDate(AstroTime.JulianDate(t));
        // A double JD near 2.46e6 resolves about 40 µs (common practice): tolerance 0.1 ms.
        Assert.True(Math.Abs((back - t).TotalMilliseconds) < 0.1);
    }

    [Fact]
    public void ModifiedJulianDate_J2000Noon_Is51544Point5()
    {
        // MJD = JD − 2400000.5 (IAU convention, common practice). Exact.
        Assert.Equal(51544.5, AstroTime.ModifiedJulianDate(new DateTimeOffset(2000, 1, 1, 12, 0, 0, TimeSpan.Zero)), 9);
    }

    [Fact]
    public void JulianDateTT_2026_Adds69Point184Seconds()
    {
        // check-values §0: JD(TT) = JD(UTC) + 69.184 s/86400 in 2026–27 (TAI−UTC = 37 s). Tolerance 1e-6 s.
        var t = new DateTimeOffset(2026, 6, 1, 0, 0, 0, TimeSpan.Zero);
        double seconds = (AstroTime.JulianDateTT(t) - AstroTime.JulianDate(t)) * 86400;
        Assert.Equal(69.184, seconds, 4);
    }

    [Fact]
    public void JulianDateFromGregorian_BadMonth_Throws()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => AstroTime.JulianDateFromGregorian(2026, 13, 1));
    }
}
