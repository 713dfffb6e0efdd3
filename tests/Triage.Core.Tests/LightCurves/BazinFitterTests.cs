using Triage.Core.LightCurves;

namespace Triage.Core.Tests.LightCurves;

public class BazinFitterTests
{
    private static readonly double[] Offsets = Enumerable.Range(0, 16).Select(i => -18.0 + 4 * i).ToArray();

    [Fact]
    public void PeakTime_ClosedForm_MatchesNumericalMaximum()
    {
        // Oracle: a dense grid search for the maximum of the model flux.
        double[] phi = [Math.Log(500), 3.0, Math.Log(2.5), Math.Log(17.5)];
        double best = double.NaN, bestFlux = double.NegativeInfinity;
        for (double t = -50; t <= 50; t += 1e-4)
        {
            double f = BazinModel.Flux(phi, t);
            if (f > bestFlux)
            {
                bestFlux = f;
                best = t;
            }
        }
        // Tolerance: the grid step.
        Assert.Equal(best, BazinModel.PeakTime(phi), 3);
    }

    [Fact]
    public void FluxWithGradient_MatchesFiniteDifferences()
    {
        double[] phi = [Math.Log(300), -2.0, Math.Log(4), Math.Log(25)];
        Span<double> g = stackalloc double[4];
        foreach (double t in new[] { -30.0, -5, 0, 7, 60 })
        {
            BazinModel.FluxWithGradient(phi, t, g);
            for (int k = 0; k < 4; k++)
            {
                double h = 1e-6;
                double[] up = (double[])phi.Clone(), down = (double[])phi.Clone();
                up[k] += h;
                down[k] -= h;
                double numeric = (BazinModel.Flux(up, t) - BazinModel.Flux(down, t)) / (2 * h);
                Assert.True(Math.Abs(numeric - g[k]) <= 1e-5 * Math.Max(1, Math.Abs(numeric)), $"t={t} k={k}: {g[k]} vs {numeric}");
            }
        }
    }

    [Fact]
    public void TryFit_NoiselessCurve_RecoversPeakWithinATenthOfADay()
    {
        double[] phi = CurveSimulator.Phi(400, CurveSimulator.PeakMjd, 3.5, 30);
        var points = CurveSimulator.Sample(phi, "r", Offsets, 4.0, rng: null);

        Assert.True(BazinFitter.TryFit(points.Select(p => p.Mjd).ToList(), points.Select(p => p.FluxMicroJy).ToList(),
            points.Select(p => p.FluxErrorMicroJy).ToList(), 2.0, out var fit));

        Assert.InRange(fit.PeakMjd().Value - CurveSimulator.PeakMjd, -0.1, 0.1);
    }

    [Fact]
    public void TryFit_NoisyCurves_TruePeakInsideReportedSigmaAboutTwoThirdsOfTrials()
    {
        // 200 seeded trials; for a Gaussian estimate with honest σ the true value lies within
        // ±1σ in 68.3% of trials. Binomial σ of the fraction is √(0.683·0.317/200) ≈ 0.033, so
        // [0.58, 0.80] is about ±3σ around 0.683 and fails for errors that are clearly under- or overstated.
        var rng = new Random(20261203);
        int inside = 0, trials = 200;
        for (int trial = 0; trial < trials; trial++)
        {
            double peak = CurveSimulator.PeakMjd + 10 * (rng.NextDouble() - 0.5);
            double tauRise = 2 + 4 * rng.NextDouble();
            double tauFall = tauRise + 15 + 30 * rng.NextDouble();
            double[] phi = CurveSimulator.Phi(300, peak, tauRise, tauFall);
            double start = -20 + 4 * rng.NextDouble();
            var offsets = Enumerable.Range(0, 20).Select(i => start + 3 * i + rng.NextDouble()).ToArray();
            var points = CurveSimulator.Sample(phi, "g", offsets, 15.0, rng);

            Assert.True(BazinFitter.TryFit(points.Select(p => p.Mjd).ToList(), points.Select(p => p.FluxMicroJy).ToList(),
                points.Select(p => p.FluxErrorMicroJy).ToList(), 2.0, out var fit), $"trial {trial} failed");
            var estimate = fit.PeakMjd();
            if (Math.Abs(estimate.Value - peak) <= estimate.Sigma)
            {
                inside++;
            }
        }
        double fraction = inside / (double)trials;
        Assert.InRange(fraction, 0.58, 0.80);
    }

    [Fact]
    public void TryFit_OneWildOutlier_PeakStaysClose()
    {
        double[] phi = CurveSimulator.Phi(400, CurveSimulator.PeakMjd, 3, 25);
        var points = CurveSimulator.Sample(phi, "r", Offsets, 5.0, new Random(7));
        var outlier = points[9];
        points[9] = outlier with { FluxMicroJy = outlier.FluxMicroJy * 3 };

        Assert.True(BazinFitter.TryFit(points.Select(p => p.Mjd).ToList(), points.Select(p => p.FluxMicroJy).ToList(),
            points.Select(p => p.FluxErrorMicroJy).ToList(), 2.0, out var fit));

        Assert.InRange(fit.PeakMjd().Value - CurveSimulator.PeakMjd, -1.5, 1.5);
    }

    [Fact]
    public void TryFit_FourPoints_Refuses()
    {
        double[] phi = CurveSimulator.Phi(400, CurveSimulator.PeakMjd, 3, 25);
        var points = CurveSimulator.Sample(phi, "r", [-6.0, -2, 2, 6], 5.0, null);
        Assert.False(BazinFitter.TryFit(points.Select(p => p.Mjd).ToList(), points.Select(p => p.FluxMicroJy).ToList(),
            points.Select(p => p.FluxErrorMicroJy).ToList(), 2.0, out _));
    }
}
