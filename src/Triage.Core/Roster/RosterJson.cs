using System.Text.Json;
using System.Text.Json.Serialization;

namespace Triage.Core.Roster;

/// <summary>
/// The roster file (read by the <c>plan</c> verb and the demo): a JSON array of sites, each with its spectrographs,
/// mirroring the network the API returns (<c>[{ "site": {...}, "spectrographs": [...] }]</c>).
/// Field names are those of the roster records in camelCase; <c>status</c> is "open"/"closed"
/// for sites and "available"/"closed" for spectrographs; a spectrograph's <c>siteId</c> may be omitted.
/// </summary>
public static class RosterJson
{
    private static readonly JsonSerializerOptions Json = new(JsonSerializerDefaults.Web)
    {
        Converters = { new JsonStringEnumConverter(JsonNamingPolicy.CamelCase, allowIntegerValues: false) },
        UnmappedMemberHandling = JsonUnmappedMemberHandling.Skip,
    };

    private sealed record NetworkSiteFile(SiteFile? Site, IReadOnlyList<SpectrographFile?>? Spectrographs);

    private sealed record SiteFile(
        Guid? Id, string? Name, double? LatitudeDeg, double? LongitudeDeg, double? ElevationM, double? MinAltitudeDeg,
        double? SunAvoidanceDeg, double? MoonAvoidanceDeg, double? SeeingArcsec, double? DarkSkyMagArcsec2,
        double? SkyReferenceWavelengthAngstrom, double? ExtinctionMagPerAirmass, SiteStatus? Status, string? Observatory);

    private sealed record SpectrographFile(
        Guid? Id, Guid? SiteId, string? Name, double? ResolvingPower, double? ReferenceWavelengthAngstrom,
        double? MinWavelengthAngstrom, double? MaxWavelengthAngstrom, double? ApertureM, double? CentralObstruction,
        double? Throughput, double? ReadNoiseElectrons, double? DarkCurrentElectronsPerSecond, double? PixelsPerResolutionElement,
        double? SpatialPixelScaleArcsec, double? SlitWidthArcsec, double? OverheadSeconds, double? MaxExposureSeconds,
        double? MaxAirmass, double? CostPerHour, double? NightlyBudgetHours, SpectrographStatus? Status);

    /// <summary>Parses the roster from JSON text; throws <see cref="FormatException"/> naming the path of the first bad field.</summary>
    public static (IReadOnlyList<Site> Sites, IReadOnlyList<Spectrograph> Spectrographs) Parse(string json)
    {
        NetworkSiteFile?[]? network;
        try
        {
            network = JsonSerializer.Deserialize<NetworkSiteFile?[]>(json, Json);
        }
        catch (JsonException ex)
        {
            throw new FormatException($"roster: {ex.Path}: {ex.Message}", ex);
        }

        if (network is null || network.Length == 0)
        {
            throw new FormatException("roster: expected a non-empty array of { site, spectrographs }.");
        }

        var sites = new List<Site>();
        var spectrographs = new List<Spectrograph>();
        for (var i = 0; i < network.Length; i++)
        {
            var path = $"[{i}]";
            var entry = network[i] ?? throw new FormatException($"roster: {path} is null.");
            var s = entry.Site ?? throw new FormatException($"roster: {path}.site is missing.");
            var site = new Site(
                s.Id ?? throw Missing(path + ".site.id"),
                Text(s.Name, path + ".site.name"),
                In(s.LatitudeDeg, -90, 90, path + ".site.latitudeDeg"),
                In(s.LongitudeDeg, -180, 180, path + ".site.longitudeDeg"),
                In(s.ElevationM, -500, 9000, path + ".site.elevationM"),
                In(s.MinAltitudeDeg, 0, 90, path + ".site.minAltitudeDeg"),
                In(s.SunAvoidanceDeg, 0, 180, path + ".site.sunAvoidanceDeg"),
                In(s.MoonAvoidanceDeg, 0, 180, path + ".site.moonAvoidanceDeg"),
                In(s.SeeingArcsec, 0.1, 10, path + ".site.seeingArcsec"),
                In(s.DarkSkyMagArcsec2, 10, 25, path + ".site.darkSkyMagArcsec2"),
                In(s.SkyReferenceWavelengthAngstrom, 1000, 30000, path + ".site.skyReferenceWavelengthAngstrom"),
                In(s.ExtinctionMagPerAirmass, 0, 5, path + ".site.extinctionMagPerAirmass"),
                s.Status ?? throw Missing(path + ".site.status"),
                s.Observatory);
            sites.Add(site);
            var list = entry.Spectrographs ?? throw Missing(path + ".spectrographs");
            for (var j = 0; j < list.Count; j++)
            {
                var p = $"{path}.spectrographs[{j}]";
                var g = list[j] ?? throw new FormatException($"roster: {p} is null.");
                if (g.SiteId is { } sid && sid != site.Id)
                {
                    throw new FormatException($"roster: {p}.siteId does not match the enclosing site.");
                }

                var minWl = In(g.MinWavelengthAngstrom, 1000, 30000, p + ".minWavelengthAngstrom");
                var maxWl = In(g.MaxWavelengthAngstrom, minWl, 30000, p + ".maxWavelengthAngstrom");
                spectrographs.Add(new Spectrograph(
                    g.Id ?? throw Missing(p + ".id"), site.Id, Text(g.Name, p + ".name"),
                    In(g.ResolvingPower, 1, 1_000_000, p + ".resolvingPower"),
                    In(g.ReferenceWavelengthAngstrom, minWl, maxWl, p + ".referenceWavelengthAngstrom"),
                    minWl, maxWl,
                    In(g.ApertureM, 0.05, 50, p + ".apertureM"),
                    In(g.CentralObstruction, 0, 0.99, p + ".centralObstruction"),
                    In(g.Throughput, 1e-4, 1, p + ".throughput"),
                    In(g.ReadNoiseElectrons, 0, 100, p + ".readNoiseElectrons"),
                    In(g.DarkCurrentElectronsPerSecond, 0, 100, p + ".darkCurrentElectronsPerSecond"),
                    In(g.PixelsPerResolutionElement, 1, 100, p + ".pixelsPerResolutionElement"),
                    In(g.SpatialPixelScaleArcsec, 0.01, 10, p + ".spatialPixelScaleArcsec"),
                    In(g.SlitWidthArcsec, 0.05, 20, p + ".slitWidthArcsec"),
                    In(g.OverheadSeconds, 0, 7200, p + ".overheadSeconds"),
                    In(g.MaxExposureSeconds, 1, 14400, p + ".maxExposureSeconds"),
                    In(g.MaxAirmass, 1, 10, p + ".maxAirmass"),
                    In(g.CostPerHour, 0, 1e9, p + ".costPerHour"),
                    In(g.NightlyBudgetHours, 0, 24, p + ".nightlyBudgetHours"),
                    g.Status ?? throw Missing(p + ".status")));
            }
        }

        var duplicate = sites.GroupBy(s => s.Id).FirstOrDefault(g => g.Count() > 1)?.Key
                        ?? spectrographs.GroupBy(s => s.Id).FirstOrDefault(g => g.Count() > 1)?.Key;
        if (duplicate is { } d)
        {
            throw new FormatException($"roster: id {d} appears more than once.");
        }

        return (sites, spectrographs);
    }

    private static FormatException Missing(string path) => new($"roster: {path} is missing.");

    private static string Text(string? value, string path)
        => string.IsNullOrWhiteSpace(value) ? throw Missing(path) : value;

    private static double In(double? value, double min, double max, string path)
    {
        if (value is not { } v)
        {
            throw Missing(path);
        }

        if (!(v >= min && v <= max))
        {
            throw new FormatException($"roster: {path} = {v} is outside [{min}, {max}].");
        }

        return v;
    }
}
