namespace Triage.Core.LightCurves;

/// <summary>Settings of the light-curve fit and its fallbacks. Defaults are documented per property.</summary>
/// <remarks>The template rates are typical values for supernovae, <b>from memory</b>: a rise of
/// roughly 1 mag in the 10 days before peak and a decline of about 1 mag per month after it.</remarks>
public sealed record LightCurveOptions
{
    /// <summary>Huber threshold k on normalised residuals. Default 2.</summary>
    public double HuberThreshold { get; init; } = 2.0;

    /// <summary>Fewest detections for a Bazin fit in a band. Default 5 (4 parameters + 1).</summary>
    public int MinPointsForBazin { get; init; } = 5;

    /// <summary>Largest acceptable 1σ peak-time uncertainty, days, for a Bazin fit to be used. Default 30.</summary>
    public double MaxBazinPeakSigmaDays { get; init; } = 30;

    /// <summary>Template brightening rate before peak, mag/day. Default 0.1.</summary>
    public double TemplateRiseMagPerDay { get; init; } = 0.1;

    /// <summary>Template fading rate after peak, mag/day. Default 0.035.</summary>
    public double TemplateDeclineMagPerDay { get; init; } = 0.035;

    /// <summary>Model-error floor added to every predicted magnitude, mag. Default 0.03.</summary>
    public double ModelFloorMag { get; init; } = 0.03;

    /// <summary>Extra σ per day of extrapolation beyond a band's data, mag/day. Default 0.01 for a Bazin
    /// fit; the cruder fallbacks use three times this.</summary>
    public double ExtrapolationMagPerDay { get; init; } = 0.01;

    /// <summary>Colour-evolution allowance when one band borrows another's shape, mag. Default 0.1.</summary>
    public double ScaledShapeColourMag { get; init; } = 0.1;

    /// <summary>Extra σ for a band predicted from the spectral energy distribution of neighbouring bands, mag
    /// per 1,000 Å beyond the observed wavelength range. Default 0.15.</summary>
    public double WavelengthExtrapolationMagPer1000Angstrom { get; init; } = 0.15;

    /// <summary>
    /// Prior on the peak absolute magnitude of an object seen only rising, used when the redshift is
    /// known: mean and 1σ, AB mag. Default −18.5 ± 1.5, spanning faint core-collapse (≈ −16) to
    /// bright thermonuclear (≈ −19.5) supernovae (typical peak values, <b>from memory</b>).
    /// </summary>
    public Estimate RisingPeakAbsMag { get; init; } = new(-18.5, 1.5);

    /// <summary>
    /// Brightest peak absolute magnitude a rising-only extrapolation may reach when the redshift is
    /// known, AB mag. Default −22.5, the bright end of superluminous supernovae (<b>from memory</b>).
    /// </summary>
    public double BrightestPeakAbsMag { get; init; } = -22.5;
}
