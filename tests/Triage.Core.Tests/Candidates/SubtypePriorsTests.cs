using Triage.Core.Candidates;
using Triage.Core.LightCurves;
using Triage.Core.Tests.LightCurves;

namespace Triage.Core.Tests.Candidates;

public class SubtypePriorsTests
{
    private static readonly double[] Dense = Enumerable.Range(0, 20).Select(i => -20.0 + 3 * i).ToArray();

    [Fact]
    public void For_BrokerProbabilities_UsedAsGivenWithZerosForOtherLabels()
    {
        var c = CurveSimulator.Candidate("b", [CurveSimulator.Point(61377, "r", 100, 5)]) with
        {
            SubtypeProbabilities = new Dictionary<string, double> { ["Ia"] = 0.8, ["II"] = 0.2 },
        };

        var prior = SubtypePriors.For(c, null, DefaultSubtypeLabels.All);

        Assert.Equal(PriorSource.Broker, prior.Source);
        Assert.Equal(0.8, prior.Probabilities["Ia"]);
        Assert.Equal(0, prior.Probabilities["IIn"]);
        Assert.Equal(DefaultSubtypeLabels.All.Count, prior.Probabilities.Count);
    }

    [Fact]
    public void BaseRates_SumToOneAndIaDominates()
    {
        var rates = SubtypePriors.BaseRates(DefaultSubtypeLabels.All);

        Assert.Equal(1.0, rates.Values.Sum(), 12);
        Assert.Equal("Ia", rates.MaxBy(kv => kv.Value).Key);
    }

    [Fact]
    public void BaseRates_UnknownLabel_GetsSmallShareAndSumStaysOne()
    {
        var rates = SubtypePriors.BaseRates(["Ia", "II", "TDE"]);

        Assert.Equal(1.0, rates.Values.Sum(), 12);
        Assert.True(rates["TDE"] < 0.01);
    }

    [Fact]
    public void For_SlowSuperluminousCurveWithRedshift_RaisesSuperluminousShare()
    {
        // Peak 19.0 mag at z = 0.25 (μ ≈ 40.6) → M ≈ −21.6; half-flux rise ≈ 30 rest days; slow decline.
        double[] phi = CurveSimulator.Phi(AbMagnitude.ToMicroJansky(19.0), 61377, 12, 110);
        var offsets = Enumerable.Range(0, 30).Select(i => -60.0 + 4 * i);
        var c = CurveSimulator.Candidate("slsn", CurveSimulator.Sample(phi, "r", offsets, 1.0, null), redshift: 0.25);
        var state = LightCurveFitter.Fit(c);

        var prior = SubtypePriors.For(c, state, DefaultSubtypeLabels.All);
        var baseRates = SubtypePriors.BaseRates(DefaultSubtypeLabels.All);

        Assert.Equal(PriorSource.BaseRatesWithLightCurve, prior.Source);
        double slsn = prior.Probabilities["SLSN-I"] + prior.Probabilities["SLSN-II"];
        Assert.True(slsn > 0.5, $"SLSN share {slsn}");
        Assert.True(slsn > 10 * (baseRates["SLSN-I"] + baseRates["SLSN-II"]));
        Assert.Equal(1.0, prior.Probabilities.Values.Sum(), 9);
    }

    [Fact]
    public void For_TypicalIaCurve_IaRemainsMostLikely()
    {
        double[] phi = CurveSimulator.Phi(AbMagnitude.ToMicroJansky(18.0), 61377, 3.0, 18);
        var c = CurveSimulator.Candidate("ia", CurveSimulator.Sample(phi, "r", Dense, 2.0, null), redshift: 0.06);
        var state = LightCurveFitter.Fit(c);

        var prior = SubtypePriors.For(c, state, DefaultSubtypeLabels.All);

        Assert.Equal("Ia", prior.Probabilities.MaxBy(kv => kv.Value).Key);
        Assert.Contains(prior.Evidence, e => e.StartsWith("peakAbsoluteMag=", StringComparison.Ordinal));
    }

    [Fact]
    public void DistanceModulus_LowRedshift_MatchesHubbleLaw()
    {
        // z = 0.01: cz/H0 = 2997.92458/70 = 42.8275 Mpc, × (1 + 1.55·0.005) = 43.1594 Mpc
        // → μ = 5 log10(4.31594e6) = 33.1754 (hand arithmetic, D). Tolerance 0.001 mag: rounding.
        Assert.Equal(33.1754, LightCurveFeatures.DistanceModulus(0.01), 3);
    }
}
