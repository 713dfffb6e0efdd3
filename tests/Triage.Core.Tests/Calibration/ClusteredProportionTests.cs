using MathNet.Numerics.Distributions;
using Triage.Core.Calibration;

namespace Triage.Core.Tests.Calibration;

/// <summary>
/// Coverage of the object-level interval on correlated binomial data: objects draw their own success
/// probability from a beta distribution (mean p, intra-object correlation ρ = 1/(a + b + 1)), then each of their
/// 1–8 spectra succeeds independently with it (the beta-binomial model, Kleinman, JASA 68, 46, 1973). The true
/// proportion of the ratio estimator is p. A 95 % interval should cover it in 93–97 % of trials (the band;
/// the Monte-Carlo error of 2000 trials is ±1 point).
/// </summary>
public class ClusteredProportionTests
{
    private static (double Clustered, double Spectra) Coverage(int objects, double p, double rho, int maxSpectra, int seed, int trials = 2000)
    {
        var random = new Random(seed);
        double a = p * (1 / rho - 1), b = (1 - p) * (1 / rho - 1);
        int clustered = 0, naive = 0;
        for (int t = 0; t < trials; t++)
        {
            var tallies = new ObjectTally[objects];
            for (int g = 0; g < objects; g++)
            {
                int m = random.Next(1, maxSpectra + 1);
                double pg = Beta.Sample(random, a, b);
                tallies[g] = new ObjectTally(m, Binomial.Sample(random, pg, m));
            }
            var c = ClusteredProportion.Compute(tallies);
            if (c.Low <= p && p <= c.High) clustered++;
            var w = WilsonInterval.Compute(tallies.Sum(x => x.Correct), tallies.Sum(x => x.Spectra));
            if (w.Low <= p && p <= w.High) naive++;
        }
        return (clustered / (double)trials, naive / (double)trials);
    }

    [Theory]
    [InlineData(10, 0.7, 0.3, 8)]
    [InlineData(15, 0.5, 0.3, 8)]
    [InlineData(30, 0.8, 0.3, 8)]
    [InlineData(60, 0.7, 0.5, 8)]
    [InlineData(20, 0.9, 0.2, 6)]
    [InlineData(40, 0.6, 0.1, 8)]
    public void Compute_CorrelatedBinomial_CoversTheTruthAbout95PercentOfTrials(int objects, double p, double rho, int maxSpectra)
    {
        var (clustered, spectra) = Coverage(objects, p, rho, maxSpectra, seed: objects * 31 + (int)(p * 100));

        Assert.InRange(clustered, 0.93, 0.97);
        // The interval on the number of spectra (what calibration used before) is too narrow on the same data.
        Assert.True(spectra < 0.91, $"spectrum-level Wilson coverage {spectra:0.000}");
    }

    [Fact]
    public void Compute_IndependentSpectra_MatchesWilsonOnSpectraUpToTheStudentQuantile()
    {
        // One spectrum per object: no clustering, deff = 1 and n_eff = n. 30 of 60 right.
        var tallies = Enumerable.Range(0, 60).Select(i => new ObjectTally(1, i % 2)).ToArray();
        var c = ClusteredProportion.Compute(tallies);
        var t = StudentT.InvCDF(0, 1, 59, 0.975);
        var (low, high) = WilsonInterval.Bounds(0.5, 60, t);
        Assert.Equal(1, c.DesignEffect, 12);
        Assert.Equal(60, c.EffectiveSpectra, 9);
        Assert.Equal(low, c.Low, 12);
        Assert.Equal(high, c.High, 12);
    }

    [Fact]
    public void Compute_ObjectsAllOrNothing_IsWorthOneSpectrumPerObject()
    {
        // Every object is either entirely right or entirely wrong (ρ = 1): 20 objects of 5 spectra are worth 20 spectra.
        var tallies = Enumerable.Range(0, 20).Select(i => new ObjectTally(5, i < 12 ? 5 : 0)).ToArray();
        var c = ClusteredProportion.Compute(tallies);
        Assert.Equal(0.6, c.Estimate, 12);
        Assert.Equal(20, c.EffectiveSpectra, 9);
        Assert.Equal(5, c.DesignEffect, 9);
        Assert.Equal(20, c.Objects);
        Assert.Equal(100, c.Spectra);
    }

    [Fact]
    public void Compute_AllCorrect_UsesTheConservativeObjectCount()
    {
        var c = ClusteredProportion.Compute(Enumerable.Repeat(new ObjectTally(4, 4), 10));
        Assert.Equal(1, c.High);
        Assert.Equal(10, c.EffectiveSpectra, 9);
        Assert.True(c.Low < 0.8);
    }

    [Fact]
    public void Compute_CorrectAboveSpectra_Throws()
        => Assert.Throws<ArgumentOutOfRangeException>(() => ClusteredProportion.Compute([new ObjectTally(2, 3)]));
}
