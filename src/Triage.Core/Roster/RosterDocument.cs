using System.Security.Cryptography;
using System.Text;

namespace Triage.Core.Roster;

/// <summary>
/// The network as a file (the demo roster, the <c>plan</c> verb's input): sites, each with
/// its spectrographs. Ids may be omitted; they are then derived from the names, so loading
/// the same file twice names the same rows.
/// </summary>
public sealed record RosterDocument(IReadOnlyList<RosterSiteEntry> Sites)
{
    /// <summary>The sites and spectrographs as domain records, with ids filled in.</summary>
    public (IReadOnlyList<Site> Sites, IReadOnlyList<Spectrograph> Spectrographs) ToRecords()
    {
        var sites = new List<Site>();
        var instruments = new List<Spectrograph>();
        foreach (var entry in Sites)
        {
            var siteId = entry.Id ?? NameGuid.From("site:" + entry.Name);
            sites.Add(new Site(siteId, entry.Name, entry.LatitudeDeg, entry.LongitudeDeg, entry.ElevationM,
                entry.MinAltitudeDeg, entry.SunAvoidanceDeg, entry.MoonAvoidanceDeg, entry.SeeingArcsec,
                entry.DarkSkyMagArcsec2, entry.SkyReferenceWavelengthAngstrom, entry.ExtinctionMagPerAirmass,
                entry.Status, entry.Observatory));
            foreach (var s in entry.Spectrographs)
            {
                instruments.Add(new Spectrograph(s.Id ?? NameGuid.From($"spectrograph:{entry.Name}/{s.Name}"), siteId, s.Name,
                    s.ResolvingPower, s.ReferenceWavelengthAngstrom, s.MinWavelengthAngstrom, s.MaxWavelengthAngstrom,
                    s.ApertureM, s.CentralObstruction, s.Throughput, s.ReadNoiseElectrons, s.DarkCurrentElectronsPerSecond,
                    s.PixelsPerResolutionElement, s.SpatialPixelScaleArcsec, s.SlitWidthArcsec, s.OverheadSeconds,
                    s.MaxExposureSeconds, s.MaxAirmass, s.CostPerHour, s.NightlyBudgetHours, s.Status));
            }
        }
        return (sites, instruments);
    }
}

/// <summary>A site in a roster file, with its spectrographs (field meanings as in <see cref="Site"/>).</summary>
public sealed record RosterSiteEntry(
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
    IReadOnlyList<RosterSpectrographEntry> Spectrographs,
    SiteStatus Status = SiteStatus.Open,
    string? Observatory = null,
    Guid? Id = null);

/// <summary>A spectrograph in a roster file (field meanings as in <see cref="Spectrograph"/>).</summary>
public sealed record RosterSpectrographEntry(
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
    SpectrographStatus Status = SpectrographStatus.Available,
    Guid? Id = null);

/// <summary>Deterministic ids from names (a name-based UUID in the manner of RFC 9562 version 5, with SHA-256).</summary>
public static class NameGuid
{
    public static Guid From(string name)
    {
        Span<byte> hash = stackalloc byte[32];
        SHA256.HashData(Encoding.UTF8.GetBytes("triage/" + name), hash);
        var bytes = hash[..16].ToArray();
        bytes[6] = (byte)((bytes[6] & 0x0F) | 0x80); // version 8: custom, name-based
        bytes[8] = (byte)((bytes[8] & 0x3F) | 0x80); // RFC variant
        return new Guid(bytes, bigEndian: true);
    }
}

/// <summary>Reads roster files: camelCase JSON, statuses as lower-case words, unknown properties refused.</summary>
public static class RosterJson
{
    public static System.Text.Json.JsonSerializerOptions Options { get; } = new(System.Text.Json.JsonSerializerDefaults.Web)
    {
        UnmappedMemberHandling = System.Text.Json.Serialization.JsonUnmappedMemberHandling.Disallow,
        NumberHandling = System.Text.Json.Serialization.JsonNumberHandling.Strict,
        Converters = { new System.Text.Json.Serialization.JsonStringEnumConverter(System.Text.Json.JsonNamingPolicy.KebabCaseLower, allowIntegerValues: false) },
    };

    /// <summary>Parses a roster document; throws <see cref="System.Text.Json.JsonException"/> naming the path on bad input.</summary>
    public static RosterDocument Parse(string json) =>
        System.Text.Json.JsonSerializer.Deserialize<RosterDocument>(json, Options)
        ?? throw new System.Text.Json.JsonException("The roster file is empty.");
}
