using Triage.Api.Errors;
using Triage.Core.Roster;
using Triage.Storage;

namespace Triage.Api.Roster;

/// <summary>Body to create or replace a site. Longitude is east-positive.</summary>
public sealed record SiteRequest(
    string? Name,
    double? LatitudeDeg,
    double? LongitudeDeg,
    double? ElevationM,
    double? MinAltitudeDeg,
    double? SunAvoidanceDeg,
    double? MoonAvoidanceDeg,
    double? SeeingArcsec,
    double? DarkSkyMagArcsec2,
    double? SkyReferenceWavelengthAngstrom,
    double? ExtinctionMagPerAirmass,
    string? Status,
    string? Observatory);

/// <summary>A site as returned by the API.</summary>
public sealed record SiteResponse(
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
    string Status,
    string? Observatory,
    int Version,
    DateTimeOffset UpdatedAt)
{
    public static SiteResponse From(Versioned<Site> v)
    {
        var s = v.Value;
        return new(s.Id, s.Name, s.LatitudeDeg, s.LongitudeDeg, s.ElevationM, s.MinAltitudeDeg, s.SunAvoidanceDeg,
            s.MoonAvoidanceDeg, s.SeeingArcsec, s.DarkSkyMagArcsec2, s.SkyReferenceWavelengthAngstrom,
            s.ExtinctionMagPerAirmass, RosterText.Of(s.Status), s.Observatory, v.Version, v.UpdatedAt);
    }
}

/// <summary>Body to create or replace a spectrograph.</summary>
public sealed record SpectrographRequest(
    string? Name,
    Guid? SiteId,
    double? ResolvingPower,
    double? ReferenceWavelengthAngstrom,
    double? MinWavelengthAngstrom,
    double? MaxWavelengthAngstrom,
    double? ApertureM,
    double? CentralObstruction,
    double? Throughput,
    double? ReadNoiseElectrons,
    double? DarkCurrentElectronsPerSecond,
    double? PixelsPerResolutionElement,
    double? SpatialPixelScaleArcsec,
    double? SlitWidthArcsec,
    double? OverheadSeconds,
    double? MaxExposureSeconds,
    double? MaxAirmass,
    double? CostPerHour,
    double? NightlyBudgetHours,
    string? Status);

/// <summary>A spectrograph as returned by the API.</summary>
public sealed record SpectrographResponse(
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
    string Status,
    int Version,
    DateTimeOffset UpdatedAt)
{
    public static SpectrographResponse From(Versioned<Spectrograph> v)
    {
        var s = v.Value;
        return new(s.Id, s.SiteId, s.Name, s.ResolvingPower, s.ReferenceWavelengthAngstrom, s.MinWavelengthAngstrom,
            s.MaxWavelengthAngstrom, s.ApertureM, s.CentralObstruction, s.Throughput, s.ReadNoiseElectrons,
            s.DarkCurrentElectronsPerSecond, s.PixelsPerResolutionElement, s.SpatialPixelScaleArcsec, s.SlitWidthArcsec,
            s.OverheadSeconds, s.MaxExposureSeconds, s.MaxAirmass, s.CostPerHour, s.NightlyBudgetHours,
            RosterText.Of(s.Status), v.Version, v.UpdatedAt);
    }
}

/// <summary>A site with its spectrographs: the network as the planner sees it.</summary>
public sealed record NetworkSiteResponse(SiteResponse Site, IReadOnlyList<SpectrographResponse> Spectrographs);

internal static class RosterText
{
    public static readonly IReadOnlyDictionary<string, SiteStatus> SiteStatuses =
        new Dictionary<string, SiteStatus> { ["open"] = SiteStatus.Open, ["closed"] = SiteStatus.Closed };

    public static readonly IReadOnlyDictionary<string, SpectrographStatus> SpectrographStatuses =
        new Dictionary<string, SpectrographStatus> { ["available"] = SpectrographStatus.Available, ["closed"] = SpectrographStatus.Closed };

    public static string Of(SiteStatus s) => s == SiteStatus.Open ? "open" : "closed";

    public static string Of(SpectrographStatus s) => s == SpectrographStatus.Available ? "available" : "closed";
}

/// <summary>Field-by-field validation of roster bodies; ranges are documented in docs/api.md.</summary>
internal static class RosterValidation
{
    public static Site? ToSite(SiteRequest r, Guid id, string? observatory, FieldChecks c)
    {
        var name = c.Text("name", r.Name);
        var lat = c.Number("latitudeDeg", r.LatitudeDeg, -90, 90);
        var lon = c.Number("longitudeDeg", r.LongitudeDeg, -180, 180);
        var elev = c.Number("elevationM", r.ElevationM, -500, 9000);
        var minAlt = c.Number("minAltitudeDeg", r.MinAltitudeDeg, 0, 90);
        var sun = c.Number("sunAvoidanceDeg", r.SunAvoidanceDeg, 0, 180);
        var moon = c.Number("moonAvoidanceDeg", r.MoonAvoidanceDeg, 0, 180);
        var seeing = c.Number("seeingArcsec", r.SeeingArcsec, 0, 10, minExclusive: true);
        var sky = c.Number("darkSkyMagArcsec2", r.DarkSkyMagArcsec2, 10, 25);
        var skyWl = c.Number("skyReferenceWavelengthAngstrom", r.SkyReferenceWavelengthAngstrom, 1000, 50000);
        var ext = c.Number("extinctionMagPerAirmass", r.ExtinctionMagPerAirmass, 0, 3);
        var status = c.Choice("status", r.Status, RosterText.SiteStatuses, SiteStatus.Open);
        return c.IsValid
            ? new Site(id, name, lat, lon, elev, minAlt, sun, moon, seeing, sky, skyWl, ext, status, observatory)
            : null;
    }

    public static Spectrograph? ToSpectrograph(SpectrographRequest r, Guid id, Guid siteId, FieldChecks c)
    {
        var name = c.Text("name", r.Name);
        var res = c.Number("resolvingPower", r.ResolvingPower, 1, 1_000_000);
        var refWl = c.Number("referenceWavelengthAngstrom", r.ReferenceWavelengthAngstrom, 1000, 50000);
        var minWl = c.Number("minWavelengthAngstrom", r.MinWavelengthAngstrom, 1000, 50000);
        var maxWl = c.Number("maxWavelengthAngstrom", r.MaxWavelengthAngstrom, 1000, 50000);
        if (r.MinWavelengthAngstrom is not null && r.MaxWavelengthAngstrom is not null && minWl >= maxWl)
        {
            c.Fail("maxWavelengthAngstrom", "must be greater than minWavelengthAngstrom");
        }
        if (r.ReferenceWavelengthAngstrom is not null && r.MinWavelengthAngstrom is not null && r.MaxWavelengthAngstrom is not null
            && (refWl < minWl || refWl > maxWl))
        {
            c.Fail("referenceWavelengthAngstrom", "must lie inside [minWavelengthAngstrom, maxWavelengthAngstrom]");
        }
        var aperture = c.Number("apertureM", r.ApertureM, 0, 50, minExclusive: true);
        var obstruction = c.Number("centralObstruction", r.CentralObstruction, 0, 1, maxExclusive: true);
        var throughput = c.Number("throughput", r.Throughput, 0, 1, minExclusive: true);
        var readNoise = c.Number("readNoiseElectrons", r.ReadNoiseElectrons, 0, 1000);
        var dark = c.Number("darkCurrentElectronsPerSecond", r.DarkCurrentElectronsPerSecond, 0, 100);
        var pixels = c.Number("pixelsPerResolutionElement", r.PixelsPerResolutionElement, 1, 100);
        var scale = c.Number("spatialPixelScaleArcsec", r.SpatialPixelScaleArcsec, 0, 10, minExclusive: true);
        var slit = c.Number("slitWidthArcsec", r.SlitWidthArcsec, 0, 30, minExclusive: true);
        var overhead = c.Number("overheadSeconds", r.OverheadSeconds, 0, 7200);
        var maxExp = c.Number("maxExposureSeconds", r.MaxExposureSeconds, 0, 36000, minExclusive: true);
        var maxAirmass = c.Number("maxAirmass", r.MaxAirmass, 1, 40);
        var cost = c.Number("costPerHour", r.CostPerHour, 0, 1e7);
        var budget = c.Number("nightlyBudgetHours", r.NightlyBudgetHours, 0, 24);
        var status = c.Choice("status", r.Status, RosterText.SpectrographStatuses, SpectrographStatus.Available);
        return c.IsValid
            ? new Spectrograph(id, siteId, name, res, refWl, minWl, maxWl, aperture, obstruction, throughput, readNoise,
                dark, pixels, scale, slit, overhead, maxExp, maxAirmass, cost, budget, status)
            : null;
    }
}
