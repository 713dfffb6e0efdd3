namespace Triage.Core.Roster;

/// <summary>Whether a spectrograph can be given work tonight.</summary>
public enum SpectrographStatus
{
    Available,
    Closed,
}

/// <summary>
/// A spectrograph on a telescope at a site: everything the exposure model and the planner need.
/// </summary>
/// <param name="Id">Stable identifier.</param>
/// <param name="SiteId">The site it is mounted at.</param>
/// <param name="Name">Human-readable name, unique at its site.</param>
/// <param name="ResolvingPower">R = λ/Δλ at <paramref name="ReferenceWavelengthAngstrom"/>; 1…1,000,000.</param>
/// <param name="ReferenceWavelengthAngstrom">Wavelength at which R and the S/N are quoted, Å.</param>
/// <param name="MinWavelengthAngstrom">Blue end of the wavelength range, Å.</param>
/// <param name="MaxWavelengthAngstrom">Red end of the wavelength range, Å.</param>
/// <param name="ApertureM">Telescope primary diameter, m.</param>
/// <param name="CentralObstruction">Fraction of the collecting <b>area</b> blocked by the secondary, 0…&lt;1.</param>
/// <param name="Throughput">End-to-end throughput (atmosphere above the site excluded, optics, grating, QE), 0…1.</param>
/// <param name="ReadNoiseElectrons">Read noise, e⁻ rms per pixel.</param>
/// <param name="DarkCurrentElectronsPerSecond">Dark current, e⁻/s per pixel.</param>
/// <param name="PixelsPerResolutionElement">Pixels along dispersion per resolution element (≥ 1).</param>
/// <param name="SpatialPixelScaleArcsec">Spatial pixel scale along the slit, arcsec/pixel.</param>
/// <param name="SlitWidthArcsec">Slit width, arcsec.</param>
/// <param name="OverheadSeconds">Acquisition plus readout overhead per observation, s.</param>
/// <param name="MaxExposureSeconds">Longest single exposure, s; longer integrations are split.</param>
/// <param name="MaxAirmass">Airmass limit of the instrument (≥ 1).</param>
/// <param name="CostPerHour">Cost of one hour, in the network's own accounting unit.</param>
/// <param name="NightlyBudgetHours">Time the network may use per night, h.</param>
/// <param name="Status">Available or closed.</param>
public sealed record Spectrograph(
    Guid Id,
    Guid SiteId,
    string Name,
    double ResolvingPower,
    double ReferenceWavelengthAngstrom,
    double MinWavelengthAngstrom,
    double MaxWavelengthAngstrom,
    double ApertureM,
    double CentralObstruction,
    double Throughput,
    double ReadNoiseElectrons,
    double DarkCurrentElectronsPerSecond,
    double PixelsPerResolutionElement,
    double SpatialPixelScaleArcsec,
    double SlitWidthArcsec,
    double OverheadSeconds,
    double MaxExposureSeconds,
    double MaxAirmass,
    double CostPerHour,
    double NightlyBudgetHours,
    SpectrographStatus Status);
