using Triage.Core.Sky;

namespace Triage.Core.Exposure;

/// <summary>Observing conditions of one exposure. Every property has a documented default.</summary>
public sealed record ObservingConditions
{
    /// <summary>Airmass of the pointing, 1–40. Default 1 (zenith).</summary>
    public double Airmass { get; init; } = 1.0;

    /// <summary>Seeing FWHM in arcsec, &gt; 0. Default null: the site's typical seeing.</summary>
    public double? SeeingArcsec { get; init; }

    /// <summary>Moon geometry. Default null: no moonlight (Moon down or new).</summary>
    public MoonlightGeometry? Moon { get; init; }

    /// <summary>Wavelength of the estimate, Å, inside the spectrograph's range. Default null: its reference wavelength.</summary>
    public double? WavelengthAngstrom { get; init; }

    /// <summary>
    /// Pixels summed along the slit. Default null: the nearest integer to 2 × seeing FWHM / pixel scale (at least 1),
    /// which keeps ~96 % of a Gaussian profile.
    /// </summary>
    public int? SpatialExtractionPixels { get; init; }

    /// <summary>Longest total integration considered by <see cref="ExposureCalculator.TimeFor"/>, s. Default 14,400 (4 h).</summary>
    public double MaxTotalSeconds { get; init; } = 14_400;
}

/// <summary>
/// Count rates for one resolution element (Δλ = λ/R) of one spectrograph under given conditions.
/// </summary>
/// <param name="SourceElectronsPerSecond">Source e⁻/s inside the slit and the extraction aperture, after extinction.</param>
/// <param name="SkyElectronsPerSecond">Sky e⁻/s over slit width × extraction length.</param>
/// <param name="DarkElectronsPerSecond">Dark current e⁻/s summed over the element's pixels.</param>
/// <param name="ReadNoiseVariancePerExposure">Read-noise variance of one readout summed over the pixels, e⁻².</param>
/// <param name="Pixels">Pixels in one resolution element (spectral × spatial).</param>
/// <param name="SpatialPixels">Pixels summed along the slit.</param>
/// <param name="ResolutionElementAngstrom">Δλ = λ/R, Å.</param>
/// <param name="WavelengthAngstrom">Wavelength of the estimate, Å.</param>
/// <param name="EffectiveAreaCm2">Unobstructed collecting area, cm².</param>
/// <param name="SlitTransmission">Fraction of a centred Gaussian PSF passing the slit.</param>
/// <param name="ExtractionFraction">Fraction of the slit light inside the extraction length.</param>
/// <param name="SkyMagArcsec2">Sky surface brightness used (with airmass and Moon), AB mag/arcsec².</param>
public sealed record ExposureRates(
    double SourceElectronsPerSecond,
    double SkyElectronsPerSecond,
    double DarkElectronsPerSecond,
    double ReadNoiseVariancePerExposure,
    double Pixels,
    int SpatialPixels,
    double ResolutionElementAngstrom,
    double WavelengthAngstrom,
    double EffectiveAreaCm2,
    double SlitTransmission,
    double ExtractionFraction,
    double SkyMagArcsec2);

/// <summary>Electrons collected in one resolution element over the whole integration.</summary>
/// <param name="SourceElectrons">Source electrons.</param>
/// <param name="SkyElectrons">Sky electrons.</param>
/// <param name="DarkElectrons">Dark-current electrons.</param>
/// <param name="ReadNoiseVariance">Total read-noise variance (all readouts), e⁻².</param>
public readonly record struct ElectronBudget(double SourceElectrons, double SkyElectrons, double DarkElectrons, double ReadNoiseVariance)
{
    /// <summary>Read noise in e⁻ rms (square root of <see cref="ReadNoiseVariance"/>).</summary>
    public double ReadNoiseElectrons => Math.Sqrt(ReadNoiseVariance);

    /// <summary>Total noise, e⁻ rms.</summary>
    public double NoiseElectrons => Math.Sqrt(SourceElectrons + SkyElectrons + DarkElectrons + ReadNoiseVariance);
}

/// <summary>An exposure estimate: S/N per resolution element for a time, or the time for an S/N.</summary>
/// <param name="Reachable">False when the requested S/N cannot be reached within <see cref="ObservingConditions.MaxTotalSeconds"/>; the other fields then describe the best S/N within that time.</param>
/// <param name="SignalToNoise">S/N per resolution element at the reference wavelength, on the continuum.</param>
/// <param name="ExposureSeconds">Total open-shutter time, s.</param>
/// <param name="ExposureCount">Number of sub-exposures (each ≤ the spectrograph's maximum).</param>
/// <param name="SubExposureSeconds">Length of each (equal) sub-exposure, s.</param>
/// <param name="ElapsedSeconds">Exposure time plus the spectrograph's overhead (counted once per observation), s.</param>
/// <param name="Electrons">Electron budget of the whole integration.</param>
/// <param name="Rates">The count rates behind the estimate.</param>
public sealed record ExposureEstimate(
    bool Reachable,
    double SignalToNoise,
    double ExposureSeconds,
    int ExposureCount,
    double SubExposureSeconds,
    double ElapsedSeconds,
    ElectronBudget Electrons,
    ExposureRates Rates);
