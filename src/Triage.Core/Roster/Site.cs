namespace Triage.Core.Roster;

/// <summary>Whether a site takes part in tonight's planning.</summary>
public enum SiteStatus
{
    Open,
    Closed,
}

/// <summary>
/// An observing site of the network, with the limits every plan must respect there.
/// </summary>
/// <param name="Id">Stable identifier.</param>
/// <param name="Name">Human-readable name, unique in the network.</param>
/// <param name="LatitudeDeg">Geodetic latitude, −90…90°, north positive.</param>
/// <param name="LongitudeDeg">Longitude, −180…180°, <b>east positive</b> (IAU convention).</param>
/// <param name="ElevationM">Height above the WGS84 ellipsoid in metres.</param>
/// <param name="MinAltitudeDeg">Lowest usable altitude of a target, 0…90°.</param>
/// <param name="SunAvoidanceDeg">Least allowed angle between pointing and the Sun, 0…180°.</param>
/// <param name="MoonAvoidanceDeg">Least allowed angle between pointing and the Moon, 0…180°.</param>
/// <param name="SeeingArcsec">Typical seeing FWHM in arcseconds.</param>
/// <param name="DarkSkyMagArcsec2">Dark-sky surface brightness, AB mag/arcsec², at <paramref name="SkyReferenceWavelengthAngstrom"/>.</param>
/// <param name="SkyReferenceWavelengthAngstrom">Wavelength at which the sky brightness is quoted, Å.</param>
/// <param name="ExtinctionMagPerAirmass">Atmospheric extinction at the reference wavelength, mag per airmass.</param>
/// <param name="Status">Open or closed tonight.</param>
/// <param name="Observatory">Observatory that manages the site (its keys may change it); null: managed by admins only.</param>
public sealed record Site(
    Guid Id,
    string Name,
    double LatitudeDeg,
    double LongitudeDeg,
    double ElevationM,
    double MinAltitudeDeg,
    double SunAvoidanceDeg,
    double MoonAvoidanceDeg,
    double SeeingArcsec,
    double DarkSkyMagArcsec2,
    double SkyReferenceWavelengthAngstrom,
    double ExtinctionMagPerAirmass,
    SiteStatus Status,
    string? Observatory = null);
