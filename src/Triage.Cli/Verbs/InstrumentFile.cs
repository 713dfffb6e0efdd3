using System.Text.Json;
using Triage.Core.Roster;

namespace Triage.Cli.Verbs;

/// <summary>
/// The instrument file read by <c>triage exptime</c>: the spectrograph fields plus the site's seeing and sky
/// (see docs/sky-and-exposure.md for the shape). Missing optional fields take the documented defaults.
/// </summary>
internal sealed record InstrumentFile
{
    public string Name { get; init; } = "instrument";

    public double ResolvingPower { get; init; }

    public double ReferenceWavelengthAngstrom { get; init; }

    public double MinWavelengthAngstrom { get; init; }

    public double MaxWavelengthAngstrom { get; init; }

    public double ApertureM { get; init; }

    public double CentralObstruction { get; init; }

    public double Throughput { get; init; }

    public double ReadNoiseElectrons { get; init; }

    public double DarkCurrentElectronsPerSecond { get; init; }

    public double PixelsPerResolutionElement { get; init; }

    public double SpatialPixelScaleArcsec { get; init; }

    public double SlitWidthArcsec { get; init; }

    public double OverheadSeconds { get; init; }

    public double MaxExposureSeconds { get; init; } = 1800;

    public double MaxAirmass { get; init; } = 2.0;

    public int? SpatialExtractionPixels { get; init; }

    public SiteSky? Site { get; init; }

    /// <summary>The site fields the exposure model uses.</summary>
    internal sealed record SiteSky
    {
        public double SeeingArcsec { get; init; }

        public double DarkSkyMagArcsec2 { get; init; }

        public double SkyReferenceWavelengthAngstrom { get; init; }

        public double ExtinctionMagPerAirmass { get; init; }
    }

    public static InstrumentFile Parse(string json) =>
        JsonSerializer.Deserialize<InstrumentFile>(json, new JsonSerializerOptions(CliJson.Options) { UnmappedMemberHandling = System.Text.Json.Serialization.JsonUnmappedMemberHandling.Disallow })
        ?? throw new JsonException("The instrument file is empty.");

    public Spectrograph ToSpectrograph() => new(
        Guid.Empty, Guid.Empty, Name, ResolvingPower, ReferenceWavelengthAngstrom, MinWavelengthAngstrom, MaxWavelengthAngstrom,
        ApertureM, CentralObstruction, Throughput, ReadNoiseElectrons, DarkCurrentElectronsPerSecond, PixelsPerResolutionElement,
        SpatialPixelScaleArcsec, SlitWidthArcsec, OverheadSeconds, MaxExposureSeconds, MaxAirmass, 0, 0, SpectrographStatus.Available);

    public Site ToSite()
    {
        var sky = Site ?? throw new JsonException("The instrument file needs a \"site\" object (seeingArcsec, darkSkyMagArcsec2, skyReferenceWavelengthAngstrom, extinctionMagPerAirmass).");
        return new Site(Guid.Empty, Name + " site", 0, 0, 0, 0, 0, 0, sky.SeeingArcsec, sky.DarkSkyMagArcsec2,
            sky.SkyReferenceWavelengthAngstrom, sky.ExtinctionMagPerAirmass, SiteStatus.Open);
    }
}
