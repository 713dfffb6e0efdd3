using Triage.Core.Candidates;

namespace Triage.Core.LightCurves;

/// <summary>
/// Shape features of the reference band's Bazin fit, in the rest frame when z is known.
/// </summary>
/// <remarks>
/// Rise time: days from half the peak flux to the peak. Decline: magnitudes faded 15 rest-frame
/// days after peak (the Δm₁₅ idea of ref. 1, applied to whichever band is the reference).
/// Peak absolute magnitude: M = m_peak − μ(z), with the luminosity distance of ref. 2 to second
/// order, d_L ≈ (cz/H₀)(1 + (1 − q₀)z/2), H₀ = 70 km/s/Mpc, q₀ = −0.55 (flat, Ω_m = 0.3; common
/// practice); no K-correction or extinction, for which 0.3 mag is added to σ.
/// Uncertainties by the delta method with numerical gradients over the fit covariance.
/// References:
/// 1. Phillips M. M. (1993), ApJ 413, L105 (the Δm₁₅ decline parameter).
/// 2. Weinberg S. (1972), Gravitation and Cosmology, §14.6 (series expansion of d_L).
/// </remarks>
/// <param name="RiseTimeDays">Half-flux-to-peak time, days (rest frame if z known).</param>
/// <param name="DeclineMag15Days">Fading in 15 days after peak, mag.</param>
/// <param name="PeakAbsoluteMag">Peak absolute magnitude (null without redshift).</param>
/// <param name="Band">Reference band.</param>
public sealed record LightCurveFeatures(Estimate RiseTimeDays, Estimate DeclineMag15Days, Estimate? PeakAbsoluteMag, string Band)
{
    /// <summary>Speed of light, km/s.</summary>
    private const double SpeedOfLightKmS = 299792.458;

    /// <summary>Features of a state, or null when its reference band has no Bazin fit.</summary>
    public static LightCurveFeatures? From(LightCurveState state)
    {
        if (state.Reference is not BazinCurve bazin)
        {
            return null;
        }
        var fit = bazin.Fit;
        double stretch = 1 + (state.Redshift ?? 0);
        var rise = Derived(fit, phi => RiseTime(phi) / stretch);
        var decline = Derived(fit, phi =>
        {
            double tp = BazinModel.PeakTime(phi);
            return -2.5 * Math.Log10(BazinModel.Flux(phi, tp + 15 * stretch) / BazinModel.Flux(phi, tp));
        });
        Estimate? absolute = null;
        if (state.Redshift is { } z && z > 0)
        {
            var peakMag = state.PeakMagnitude;
            double mu = DistanceModulus(z);
            double zErr = state.RedshiftError ?? 0;
            double muSigma = 5 / Math.Log(10) * zErr / z;
            absolute = new Estimate(peakMag.Value - mu, peakMag.Sigma).WithExtraSigma(muSigma).WithExtraSigma(0.3);
        }
        return new LightCurveFeatures(rise, decline, absolute, bazin.Band.Name);
    }

    /// <summary>Distance modulus for redshift z (second-order luminosity distance, H₀ = 70, q₀ = −0.55).</summary>
    public static double DistanceModulus(double z)
    {
        double dLMpc = SpeedOfLightKmS * z / 70.0 * (1 + (1 - -0.55) * z / 2);
        return 5 * Math.Log10(dLMpc * 1e6 / 10);
    }

    private static double RiseTime(double[] phi)
    {
        double tp = BazinModel.PeakTime(phi);
        double half = BazinModel.Flux(phi, tp) / 2;
        double lo = tp - 300, hi = tp;
        if (BazinModel.Flux(phi, lo) >= half)
        {
            return 300;
        }
        for (int i = 0; i < 60; i++)
        {
            double mid = (lo + hi) / 2;
            if (BazinModel.Flux(phi, mid) < half)
            {
                lo = mid;
            }
            else
            {
                hi = mid;
            }
        }
        return tp - (lo + hi) / 2;
    }

    private static Estimate Derived(BazinFit fit, Func<double[], double> f)
    {
        double[] phi = (double[])fit.Parameters.Clone();
        double value = f(phi);
        Span<double> g = stackalloc double[BazinModel.ParameterCount];
        for (int k = 0; k < BazinModel.ParameterCount; k++)
        {
            double h = 1e-5 * Math.Max(1, Math.Abs(phi[k]));
            double keep = phi[k];
            phi[k] = keep + h;
            double up = f(phi);
            phi[k] = keep - h;
            double down = f(phi);
            phi[k] = keep;
            g[k] = (up - down) / (2 * h);
        }
        return new(value, Math.Sqrt(fit.Variance(g)));
    }
}
