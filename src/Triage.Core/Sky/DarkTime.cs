using Triage.Core.Roster;

namespace Triage.Core.Sky;

/// <summary>Which night an instant belongs to at a site, and the latest dark instant before a time.</summary>
public static class DarkTime
{
    /// <summary>
    /// The local date of the evening of the night containing <paramref name="utc"/> at a site of longitude
    /// <paramref name="longitudeDeg"/> (east positive): the date of local mean solar time − 12 h, so that every
    /// instant from local noon to the next local noon belongs to one night.
    /// </summary>
    public static DateOnly NightOf(DateTimeOffset utc, double longitudeDeg) =>
        DateOnly.FromDateTime((utc + TimeSpan.FromHours(longitudeDeg / 15.0) - TimeSpan.FromHours(12)).UtcDateTime);

    /// <summary>
    /// The latest instant at or before <paramref name="notAfterUtc"/> inside the site's dark window (one minute before
    /// the window's end when the window is over), looking back at most three nights; null at a site with no dark time then.
    /// </summary>
    public static DateTimeOffset? LatestDarkInstant(Site site, DateTimeOffset notAfterUtc, NightOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(site);
        var night = NightOf(notAfterUtc, site.LongitudeDeg);
        for (var back = 0; back < 3; back++)
        {
            if (NightModel.For(site, night.AddDays(-back), options).DarkWindow.Window is { } d && d.StartUtc <= notAfterUtc)
            {
                return d.EndUtc <= notAfterUtc ? d.EndUtc.AddMinutes(-1) : notAfterUtc;
            }
        }

        return null;
    }
}
