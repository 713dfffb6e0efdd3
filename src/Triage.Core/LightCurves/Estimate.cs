namespace Triage.Core.LightCurves;

/// <summary>A value with its 1σ uncertainty (same unit as the value).</summary>
/// <param name="Value">Best estimate.</param>
/// <param name="Sigma">1σ uncertainty, ≥ 0; <see cref="double.PositiveInfinity"/> when unconstrained.</param>
public readonly record struct Estimate(double Value, double Sigma)
{
    /// <summary>Difference of two independent estimates (errors added in quadrature).</summary>
    public static Estimate operator -(Estimate a, Estimate b) => new(a.Value - b.Value, Math.Sqrt(a.Sigma * a.Sigma + b.Sigma * b.Sigma));

    /// <summary>The same value with <paramref name="extraSigma"/> added in quadrature.</summary>
    public Estimate WithExtraSigma(double extraSigma) => new(Value, Math.Sqrt(Sigma * Sigma + extraSigma * extraSigma));
}

/// <summary>Which way the light curve is heading at an instant.</summary>
public enum Trend
{
    /// <summary>Before peak by more than the peak-time uncertainty.</summary>
    Rising,
    /// <summary>Within one σ of the peak time.</summary>
    NearPeak,
    /// <summary>After peak by more than the peak-time uncertainty.</summary>
    Declining,
}

/// <summary>How a band's curve was obtained, from best to crudest.</summary>
public enum CurveMethod
{
    /// <summary>Robust least-squares fit of the Bazin rise-and-decline form (≥ 5 detections).</summary>
    Bazin,
    /// <summary>The shape of another band's Bazin fit, scaled to this band's 1–4 detections.</summary>
    ScaledShape,
    /// <summary>Straight line in magnitude through 2–4 detections, with template rates beyond the data.</summary>
    MagnitudeSlope,
    /// <summary>One epoch only: typical rise and decline rates around it, with large uncertainties.</summary>
    Template,
}
