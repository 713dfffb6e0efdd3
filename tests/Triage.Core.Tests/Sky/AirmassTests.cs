using Triage.Core.Sky;

namespace Triage.Core.Tests.Sky;

public class AirmassTests
{
    [Theory]
    // check-values §3 table: Kasten & Young (1989), Applied Optics 28(22) 4735, evaluated from the published formula [D].
    // Tolerance 1e-6: same formula, table printed to 6 decimals.
    [InlineData(0, 0.999712)]
    [InlineData(30, 1.153992)]
    [InlineData(45, 1.412595)]
    [InlineData(60, 1.994293)]
    [InlineData(70, 2.903147)]
    [InlineData(75, 3.812912)]
    [InlineData(80, 5.586036)]
    [InlineData(85, 10.305791)]
    [InlineData(90, 37.919608)]
    public void KastenYoung_ZenithAngle_MatchesReferenceTable(double zenithDeg, double expected)
    {
        Assert.Equal(expected, Airmass.KastenYoung(90 - zenithDeg)!.Value, 6);
    }

    [Theory]
    // check-values §3: plane-parallel sec z. Tolerance 1e-6.
    [InlineData(0, 1.000000)]
    [InlineData(60, 2.000000)]
    [InlineData(75, 3.863703)]
    [InlineData(85, 11.473713)]
    public void PlaneParallel_ZenithAngle_MatchesSecant(double zenithDeg, double expected)
    {
        Assert.Equal(expected, Airmass.PlaneParallel(90 - zenithDeg)!.Value, 6);
    }

    [Fact]
    public void KastenYoung_BelowHorizon_IsNull()
    {
        // check-values §2b case C3: a target below the horizon has no airmass; it must be flagged, not a number.
        Assert.Null(Airmass.KastenYoung(-65.1464));
        Assert.Null(Airmass.PlaneParallel(0));
    }

    [Theory]
    [InlineData(1.2)]
    [InlineData(2.0)]
    [InlineData(3.0)]
    public void AltitudeForAirmassDeg_RoundTrip_GivesTheLimit(double limit)
    {
        double alt = Airmass.AltitudeForAirmassDeg(limit);
        Assert.Equal(limit, Airmass.KastenYoung(alt)!.Value, 9);
    }

    [Fact]
    public void AltitudeForAirmassDeg_BelowOne_Throws()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => Airmass.AltitudeForAirmassDeg(0.9));
    }
}
