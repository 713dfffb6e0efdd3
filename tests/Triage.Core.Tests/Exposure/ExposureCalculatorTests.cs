using Triage.Core.Exposure;
using Triage.Core.Roster;
using Triage.Core.Sky;

namespace Triage.Core.Tests.Exposure;

public class ExposureCalculatorTests
{
    /// <summary>The instrument of check-values §4d: 2.0 m, 15 % of the area obstructed, T = 0.25, R = 100 at 6000 Å,
    /// slit 1.5″, 2 px per element at 0.75″/px, RN 5 e⁻, dark 0.001 e⁻/s/px.</summary>
    internal static Spectrograph WorkedExample(double resolvingPower = 100, double maxExposureSeconds = 3600) => new(
        Guid.Empty, Guid.Empty, "worked example", resolvingPower, 6000, 4000, 9000, 2.0, 0.15, 0.25,
        5.0, 0.001, 2, 0.75, 1.5, 0, maxExposureSeconds, 2.5, 1, 8, SpectrographStatus.Available);

    /// <summary>Seeing 1.2″, sky 21.0 AB mag/arcsec²; extinction 0 because the example's T includes the atmosphere.</summary>
    internal static Site WorkedExampleSite(double extinction = 0) => new(
        Guid.Empty, "worked example site", -30, -70, 2000, 30, 45, 30, 1.2, 21.0, 6000, extinction, SiteStatus.Open);

    private static readonly ObservingConditions ThreePixels = new() { SpatialExtractionPixels = 3 };

    [Theory]
    // check-values §4b [D] (AB zero point 3631 Jy, Oke & Gunn 1983; h exact, CODATA 2018). Relative tolerance 1e-6 (printed digits).
    [InlineData(0, 5500, 996.3399)]
    [InlineData(20, 5500, 9.963399e-06)]
    [InlineData(20, 7000, 7.828385e-06)]
    [InlineData(19, 6000, 2.294135e-05)]
    [InlineData(21, 6000, 3.635959e-06)]
    public void PhotonFluxDensity_AbMagnitudes_MatchReferenceTable(double mag, double lambda, double expected)
    {
        double n = ExposureCalculator.PhotonFluxDensity(mag, lambda);
        Assert.InRange(n / expected - 1, -1e-6, 1e-6);
    }

    [Fact]
    public void Rates_WorkedExample_MatchReferenceSteps()
    {
        // check-values §4d steps 2, 6, 7, 8, 10 [D]. Relative tolerance 1e-5: same formulas, table printed to 6 digits.
        var calc = ExposureCalculator.For(WorkedExample(), WorkedExampleSite());
        var r = calc.Rates(19.0, ThreePixels);
        Assert.InRange(r.EffectiveAreaCm2 / 26703.54 - 1, -1e-5, 1e-5);
        Assert.InRange(r.SlitTransmission / 0.85891 - 1, -1e-5, 1e-5);
        Assert.InRange(r.ExtractionFraction / 0.97273 - 1, -1e-5, 1e-5);
        Assert.InRange(r.SourceElectronsPerSecond / 7.67754 - 1, -1e-5, 1e-5);
        Assert.InRange(r.SkyElectronsPerSecond / 4.91533 - 1, -1e-5, 1e-5);
        Assert.Equal(6, r.Pixels);
        Assert.Equal(60, r.ResolutionElementAngstrom, 9);
    }

    [Fact]
    public void SignalToNoiseFor_WorkedExample600s_Is52Point46()
    {
        // check-values §4d step 16 [D]: S/N = 52.46 per resolution element in 600 s (S 4606.52, B 2949.20, D 3.60, RN² 150).
        // The issue asks for 1 %; the same formula reproduces it to 1e-4.
        var est = ExposureCalculator.For(WorkedExample(), WorkedExampleSite()).SignalToNoiseFor(19.0, 600, ThreePixels);
        Assert.InRange(est.SignalToNoise / 52.464 - 1, -1e-4, 1e-4);
        Assert.InRange(est.Electrons.SourceElectrons / 4606.52 - 1, -1e-5, 1e-5);
        Assert.InRange(est.Electrons.SkyElectrons / 2949.20 - 1, -1e-5, 1e-5);
        Assert.Equal(3.60, est.Electrons.DarkElectrons, 9);
        Assert.Equal(150, est.Electrons.ReadNoiseVariance, 9);
        Assert.Equal(1, est.ExposureCount);
    }

    [Fact]
    public void TimeFor_WorkedExampleSnr10_Is29Point89Seconds()
    {
        // check-values §4d quadratic [D]: t(S/N = 10) = 29.888 s. Tolerance 1e-4 relative (issue asks 1 %).
        var est = ExposureCalculator.For(WorkedExample(), WorkedExampleSite()).TimeFor(19.0, 10, ThreePixels);
        Assert.True(est.Reachable);
        Assert.InRange(est.ExposureSeconds / 29.888 - 1, -1e-4, 1e-4);
        Assert.InRange(est.SignalToNoise - 10, -1e-9, 1e-9);
    }

    [Fact]
    public void SignalToNoiseFor_DiameterReadingOfObstruction_MatchesVariantRow()
    {
        // check-values §4d variants [D]: "15 % of diameter" = 1 − 0.15² = 0.0225 of the area: A = 30 709.07 cm²,
        // s = 8.82917 e⁻/s, b = 5.65263 e⁻/s, S/N(600 s) = 56.335, t(S/N 10) = 25.989 s. Tolerance 1e-4 relative.
        var calc = ExposureCalculator.For(WorkedExample() with { CentralObstruction = 0.15 * 0.15 }, WorkedExampleSite());
        Assert.InRange(calc.EffectiveAreaCm2 / 30709.07 - 1, -1e-5, 1e-5);
        Assert.InRange(calc.SignalToNoiseFor(19.0, 600, ThreePixels).SignalToNoise / 56.335 - 1, -1e-4, 1e-4);
        Assert.InRange(calc.TimeFor(19.0, 10, ThreePixels).ExposureSeconds / 25.989 - 1, -1e-4, 1e-4);
    }

    [Fact]
    public void Rates_DefaultExtraction_PicksThreePixelsForTheWorkedExample()
    {
        // Common practice: extract about ±1 FWHM; 2 × 1.2″ / 0.75″ = 3.2 → 3 px, the example's choice.
        var r = ExposureCalculator.For(WorkedExample(), WorkedExampleSite()).Rates(19.0);
        Assert.Equal(3, r.SpatialPixels);
    }

    [Theory]
    [InlineData(17.0, 5.0)]
    [InlineData(19.0, 10.0)]
    [InlineData(20.5, 30.0)]
    [InlineData(22.0, 8.0)]
    public void TimeFor_ThenSignalToNoiseFor_Invert(double mag, double snr)
    {
        // Round trip property: S/N(t(S/N)) = S/N, including split exposures (max 300 s here).
        var calc = ExposureCalculator.For(WorkedExample(maxExposureSeconds: 300), WorkedExampleSite(0.12));
        var conditions = new ObservingConditions { Airmass = 1.3 };
        var time = calc.TimeFor(mag, snr, conditions);
        Assert.True(time.Reachable);
        var back = calc.SignalToNoiseFor(mag, time.ExposureSeconds, conditions);
        Assert.Equal(time.ExposureCount, back.ExposureCount);
        Assert.InRange(back.SignalToNoise / snr - 1, -1e-9, 1e-9);
        // Minimality: a little less time does not reach the S/N.
        Assert.True(calc.SignalToNoiseFor(mag, time.ExposureSeconds * 0.999, conditions).SignalToNoise < snr);
    }

    [Fact]
    public void TimeFor_BeyondMaxExposure_SplitsAndCountsReadNoisePerReadout()
    {
        // A faint source with a 100 s maximum: the budget must hold n readouts of 6 px × 25 e⁻² each.
        var calc = ExposureCalculator.For(WorkedExample(maxExposureSeconds: 100), WorkedExampleSite());
        var est = calc.TimeFor(21.5, 10, ThreePixels);
        Assert.True(est.Reachable);
        Assert.True(est.ExposureCount > 1);
        Assert.Equal(est.ExposureCount * 150.0, est.Electrons.ReadNoiseVariance, 6);
        Assert.True(est.SubExposureSeconds <= 100 + 1e-9);
        Assert.Equal(est.ExposureSeconds, est.SubExposureSeconds * est.ExposureCount, 6);
        // The single-readout answer would have been shorter: splitting costs time, never less.
        var unsplit = ExposureCalculator.For(WorkedExample(maxExposureSeconds: 1e6), WorkedExampleSite()).TimeFor(21.5, 10, ThreePixels);
        Assert.True(est.ExposureSeconds > unsplit.ExposureSeconds);
    }

    [Theory]
    [InlineData(20.0, 10.0, 60.0)]
    [InlineData(21.5, 10.0, 100.0)]
    [InlineData(22.0, 5.0, 30.0)]
    public void TimeFor_SplitExposures_MatchesSegmentBisectionOracle(double mag, double snr, double maxExposure)
    {
        // Oracle: walk the segments ((n−1)t_max, n t_max] where the readout count is fixed and S/N rises with t;
        // the first segment whose end reaches the S/N holds the answer, found by bisection (no quadratic involved).
        var calc = ExposureCalculator.For(WorkedExample(maxExposureSeconds: maxExposure), WorkedExampleSite());
        double Snr(double t) => calc.SignalToNoiseFor(mag, t, ThreePixels).SignalToNoise;
        int n = 1;
        while (Snr(n * maxExposure) < snr)
        {
            n++;
        }

        double lo = (n - 1) * maxExposure, hi = n * maxExposure;
        for (int i = 0; i < 60; i++)
        {
            double mid = 0.5 * (lo + hi);
            if (mid > (n - 1) * maxExposure && Snr(mid) >= snr)
            {
                hi = mid;
            }
            else
            {
                lo = mid;
            }
        }

        var est = calc.TimeFor(mag, snr, ThreePixels);
        Assert.Equal(n, est.ExposureCount);
        Assert.InRange(est.ExposureSeconds - hi, -1e-6, 1e-6);
    }

    [Fact]
    public void TimeFor_Unreachable_ReturnsBestWithinLimitWithoutInfinity()
    {
        var calc = ExposureCalculator.For(WorkedExample(), WorkedExampleSite());
        var est = calc.TimeFor(28.0, 50, new ObservingConditions { MaxTotalSeconds = 3600 });
        Assert.False(est.Reachable);
        Assert.True(double.IsFinite(est.SignalToNoise) && est.SignalToNoise > 0 && est.SignalToNoise < 50);
        Assert.True(est.ExposureSeconds <= 3600);
    }

    [Theory]
    [InlineData(16.0, 20.0)]
    [InlineData(19.0, 10.0)]
    [InlineData(21.0, 5.0)]
    public void TimeFor_LowerResolvingPower_ReachesSnrSooner(double mag, double snr)
    {
        // Property (science notes): per element, a lower R on the same telescope collects more photons → shorter time.
        var site = WorkedExampleSite(0.15);
        double previous = 0;
        foreach (double r in new[] { 10.0, 50.0, 100.0, 500.0, 2000.0 })
        {
            var est = ExposureCalculator.For(WorkedExample(r), site).TimeFor(mag, snr, new ObservingConditions { MaxTotalSeconds = 1e7 });
            Assert.True(est.ExposureSeconds > previous, $"R={r}: {est.ExposureSeconds} s not longer than {previous} s");
            previous = est.ExposureSeconds;
        }
    }

    [Fact]
    public void SignalToNoiseFor_HigherAirmass_LowersSnr()
    {
        // Extinction 0.15 mag/airmass dims the source: S/N must fall with airmass (common practice).
        var calc = ExposureCalculator.For(WorkedExample(), WorkedExampleSite(0.15));
        double low = calc.SignalToNoiseFor(20, 600, new ObservingConditions { Airmass = 1.0 }).SignalToNoise;
        double high = calc.SignalToNoiseFor(20, 600, new ObservingConditions { Airmass = 2.0 }).SignalToNoise;
        Assert.True(high < low);
    }

    [Fact]
    public void SignalToNoiseFor_BrightMoonNearby_LowersSnr()
    {
        var calc = ExposureCalculator.For(WorkedExample(), WorkedExampleSite(0.15));
        double dark = calc.SignalToNoiseFor(21, 600).SignalToNoise;
        var moon = new MoonlightGeometry(PhaseAngleDeg: 10, MoonAltitudeDeg: 50, SeparationDeg: 30);
        double moonlit = calc.SignalToNoiseFor(21, 600, new ObservingConditions { Moon = moon }).SignalToNoise;
        Assert.True(moonlit < dark);
    }

    [Theory]
    [InlineData(double.NaN)]
    [InlineData(-1.0)]
    [InlineData(0.0)]
    public void SignalToNoiseFor_BadTime_ThrowsNamingTheParameter(double seconds)
    {
        var calc = ExposureCalculator.For(WorkedExample(), WorkedExampleSite());
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => calc.SignalToNoiseFor(19, seconds));
        Assert.Equal("exposureSeconds", ex.ParamName);
    }

    [Fact]
    public void Rates_WavelengthOutsideRange_Throws()
    {
        var calc = ExposureCalculator.For(WorkedExample(), WorkedExampleSite());
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => calc.Rates(19, new ObservingConditions { WavelengthAngstrom = 12000 }));
        Assert.Equal(nameof(ObservingConditions.WavelengthAngstrom), ex.ParamName);
    }
}

public class ExposureCalculatorValidationTests
{
    [Fact]
    public void For_ZeroThroughput_ThrowsNamingTheField()
    {
        var sp = ExposureCalculatorTests.WorkedExample() with { Throughput = 0 };
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => ExposureCalculator.For(sp, ExposureCalculatorTests.WorkedExampleSite()));
        Assert.Equal(nameof(Spectrograph.Throughput), ex.ParamName);
    }

    [Fact]
    public void TimeFor_NonPositiveSnr_ThrowsNamingTheParameter()
    {
        var calc = ExposureCalculator.For(ExposureCalculatorTests.WorkedExample(), ExposureCalculatorTests.WorkedExampleSite());
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => calc.TimeFor(19, 0));
        Assert.Equal("signalToNoise", ex.ParamName);
    }
}
