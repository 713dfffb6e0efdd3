using Triage.Core.Sky;

namespace Triage.Core.Tests.Sky;

public class HorizonTests
{
    [Fact]
    public void FromHourAngle_VenusAtWashington_MatchesMeeusExample13b()
    {
        // Meeus 2nd ed. example 13.b (check-values §1, S1): apparent α = 23h09m16.641s, δ = −6°43′11.61″,
        // φ = +38°55′17″, L = 77°03′56″ W, 1987 Apr 10 19:21 UT: A = 68.0337° from South (= 248.0337° from North),
        // h = 15.1249°, H = 64.3521°. Apparent GST from our nutation (TT = UT + 56 s, from memory).
        // Tolerance 0.0003°: the book rounds to 0.0001° and our GAST is within 10 ms (0.00004°).
        double ra = (23 + 9 / 60.0 + 16.641 / 3600) * 15;
        double dec = -(6 + 43 / 60.0 + 11.61 / 3600);
        double lat = 38 + 55 / 60.0 + 17 / 3600.0;
        double lonEast = -(77 + 3 / 60.0 + 56 / 3600.0);
        double gast = SiderealTime.GreenwichApparentDeg(2446896.30625, 2446896.30625 + 56.0 / 86400);
        double ha = Horizon.HourAngleDeg(gast + lonEast, ra);
        var hz = Horizon.FromHourAngle(ha, dec, lat);
        Assert.InRange(ha - 64.3521, -3e-4, 3e-4);
        Assert.InRange(hz.AzimuthDeg - 248.0337, -3e-4, 3e-4);
        Assert.InRange(hz.AltitudeDeg - 15.1249, -3e-4, 3e-4);
    }

    [Theory]
    // Apparent minus airless altitude from astropy/ERFA refco (752 hPa, 10 °C, RH 0.2, 0.55 µm), check-values §2b:
    // C4 42.5428 → 42.5558, C5 57.8134 → 57.8210, C8 29.8102 → 29.8310, C9 29.3121 → 29.3334.
    // Tolerance 0.0015° (5″): Sæmundsson's formula ignores humidity and colour and is good to ~0.1′ (Meeus ch. 16).
    [InlineData(42.5428, 42.5558)]
    [InlineData(57.8134, 57.8210)]
    [InlineData(29.8102, 29.8310)]
    [InlineData(29.3121, 29.3334)]
    public void RefractionFromTrueDeg_SiteWeather_MatchesErfa(double airless, double refracted)
    {
        var weather = new Atmosphere { PressureHpa = 752, TemperatureC = 10 };
        Assert.InRange(airless + Horizon.RefractionFromTrueDeg(airless, weather) - refracted, -0.0015, 0.0015);
    }

    [Theory]
    [InlineData(0.5)]
    [InlineData(10)]
    [InlineData(45)]
    public void RefractionFromApparentDeg_InvertsSaemundsson_WithinFourArcsec(double trueAlt)
    {
        // Meeus ch. 16: Bennett and Sæmundsson are mutually consistent to about 4″ (from memory). Tolerance 5″.
        double apparent = trueAlt + Horizon.RefractionFromTrueDeg(trueAlt);
        Assert.InRange(apparent - Horizon.RefractionFromApparentDeg(apparent) - trueAlt, -5 / 3600.0, 5 / 3600.0);
    }

    [Fact]
    public void RefractionFromTrueDeg_ZeroPressure_IsZero()
    {
        // Common practice: no air, no refraction.
        Assert.Equal(0, Horizon.RefractionFromTrueDeg(20, new Atmosphere { PressureHpa = 0 }));
    }
}

public class SkyPositionsTests
{
    [Fact]
    public void HourAngleDeg_CaseC1_IsLastMinusApparentRa()
    {
        // check-values §2b C1: LAST 5.984688 h and apparent α 75.25954° give H = 89.77032° − 75.25954° = 14.51078°.
        // Tolerance 0.0005°: LAST within 0.03 s (0.000125°) and apparent α within 1″ (0.0003°).
        double h = SkyPositions.HourAngleDeg(new SkyTarget(75, -30), ReferenceSite.Observer, DateTimeOffset.Parse("2026-01-16T03:00:00Z"));
        Assert.InRange(h - 14.51078, -0.0005, 0.0005);
    }

    [Theory]
    [InlineData(91, 0, 0, "LatitudeDeg")]
    [InlineData(0, 400, 0, "LongitudeDeg")]
    [InlineData(0, 0, 20000, "ElevationM")]
    public void ObserverValidated_OutOfRange_ThrowsNamingTheField(double lat, double lon, double elev, string field)
    {
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new Observer(lat, lon, elev).Validated());
        Assert.Equal(field, ex.ParamName);
    }

    [Fact]
    public void TargetHorizontal_WithRefraction_RaisesTheTarget()
    {
        // check-values §2b C8 with refraction (752 hPa, 10 °C): 29.8310°. Tolerance 0.0015° (see refraction tests).
        var hz = SkyPositions.TargetHorizontal(new SkyTarget(37.5, 5), ReferenceSite.Observer, DateTimeOffset.Parse("2027-02-07T01:30:00Z"),
            new Atmosphere { PressureHpa = 752, TemperatureC = 10 });
        Assert.InRange(hz.AltitudeDeg - 29.8310, -0.0015, 0.0015);
    }
}
