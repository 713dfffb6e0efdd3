namespace Triage.Core.LightCurves;

/// <summary>
/// The Bazin et al. rise-and-decline form in flux space and its derivatives.
/// </summary>
/// <remarks>
/// f(t) = A · exp(−(t − t₀)/τ_fall) / (1 + exp(−(t − t₀)/τ_rise))   (ref. 1, eq. 1, baseline B fixed at 0
/// because brokers send difference-image fluxes). Parameterised as φ = (ln A, t₀, a = ln τ_rise,
/// b = ln(τ_fall − τ_rise)) so that A &gt; 0 and τ_fall &gt; τ_rise (the curve always has a peak).
/// Setting d ln f / dt = 0 gives the peak at t_peak = t₀ + τ_rise · ln(τ_fall/τ_rise − 1) = t₀ + τ_rise (b − a).
/// With x = t − t₀ and s = 1/(1 + e^{x/τ_rise}):
/// ∂ln f/∂ln A = 1, ∂ln f/∂t₀ = 1/τ_fall − s/τ_rise, ∂ln f/∂a = τ_rise (x/τ_fall² − s x/τ_rise²),
/// ∂ln f/∂b = (τ_fall − τ_rise) x / τ_fall².
/// References:
/// 1. Bazin G. et al. (2009), "The core-collapse rate from the Supernova Legacy Survey", A&amp;A 499, 653, eq. 1.
/// </remarks>
public static class BazinModel
{
    /// <summary>Number of parameters in φ.</summary>
    public const int ParameterCount = 4;

    /// <summary>Flux at time <paramref name="t"/> (days, same origin as t₀).</summary>
    public static double Flux(ReadOnlySpan<double> phi, double t)
    {
        double tauRise = Math.Exp(phi[2]);
        double tauFall = tauRise + Math.Exp(phi[3]);
        double x = t - phi[1];
        return Math.Exp(phi[0] - x / tauFall - Softplus(-x / tauRise));
    }

    /// <summary>Flux and its gradient with respect to φ.</summary>
    public static double FluxWithGradient(ReadOnlySpan<double> phi, double t, Span<double> gradient)
    {
        double tauRise = Math.Exp(phi[2]);
        double d = Math.Exp(phi[3]);
        double tauFall = tauRise + d;
        double x = t - phi[1];
        double f = Math.Exp(phi[0] - x / tauFall - Softplus(-x / tauRise));
        double s = Logistic(-x / tauRise);
        gradient[0] = f;
        gradient[1] = f * (1 / tauFall - s / tauRise);
        gradient[2] = f * tauRise * (x / (tauFall * tauFall) - s * x / (tauRise * tauRise));
        gradient[3] = f * d * x / (tauFall * tauFall);
        return f;
    }

    /// <summary>Time of peak flux (same origin as t₀).</summary>
    public static double PeakTime(ReadOnlySpan<double> phi) => phi[1] + Math.Exp(phi[2]) * (phi[3] - phi[2]);

    /// <summary>Time of peak and its gradient with respect to φ.</summary>
    public static double PeakTimeWithGradient(ReadOnlySpan<double> phi, Span<double> gradient)
    {
        double tauRise = Math.Exp(phi[2]);
        gradient[0] = 0;
        gradient[1] = 1;
        gradient[2] = tauRise * (phi[3] - phi[2] - 1);
        gradient[3] = tauRise;
        return PeakTime(phi);
    }

    /// <summary>ln(1 + eᵘ) without overflow.</summary>
    internal static double Softplus(double u) => Math.Max(u, 0) + Math.Log(1 + Math.Exp(-Math.Abs(u)));

    /// <summary>1/(1 + e⁻ᵘ) without overflow.</summary>
    internal static double Logistic(double u) => u >= 0 ? 1 / (1 + Math.Exp(-u)) : Math.Exp(u) / (1 + Math.Exp(u));
}
