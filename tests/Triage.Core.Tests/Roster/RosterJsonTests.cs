using Triage.Core.Roster;

namespace Triage.Core.Tests.Roster;

public class RosterJsonTests
{
    private const string Valid = """
        [ { "site": { "id": "5a7e0000-0000-4000-8000-000000000009", "name": "Test Ridge", "latitudeDeg": -20, "longitudeDeg": 15,
                      "elevationM": 1500, "minAltitudeDeg": 25, "sunAvoidanceDeg": 45, "moonAvoidanceDeg": 20, "seeingArcsec": 1.0,
                      "darkSkyMagArcsec2": 21.3, "skyReferenceWavelengthAngstrom": 6000, "extinctionMagPerAirmass": 0.12, "status": "open" },
            "spectrographs": [ { "id": "5ec00000-0000-4000-8000-000000000009", "name": "T-100", "resolvingPower": 100,
                      "referenceWavelengthAngstrom": 6000, "minWavelengthAngstrom": 3800, "maxWavelengthAngstrom": 9200, "apertureM": 1.0,
                      "centralObstruction": 0.1, "throughput": 0.3, "readNoiseElectrons": 3, "darkCurrentElectronsPerSecond": 0.001,
                      "pixelsPerResolutionElement": 2.5, "spatialPixelScaleArcsec": 0.4, "slitWidthArcsec": 1.5, "overheadSeconds": 300,
                      "maxExposureSeconds": 1800, "maxAirmass": 2, "costPerHour": 50, "nightlyBudgetHours": 6, "status": "available" } ] } ]
        """;

    [Fact]
    public void Parse_ValidNetwork_ReadsSitesAndSpectrographs()
    {
        var (sites, spectrographs) = RosterJson.Parse(Valid);

        var site = Assert.Single(sites);
        var unit = Assert.Single(spectrographs);
        Assert.Equal(15, site.LongitudeDeg);
        Assert.Equal(SiteStatus.Open, site.Status);
        Assert.Equal(site.Id, unit.SiteId);
        Assert.Equal(100, unit.ResolvingPower);
    }

    [Theory]
    [InlineData("\"latitudeDeg\": -20", "\"latitudeDeg\": -95", "[0].site.latitudeDeg")]
    [InlineData("\"sunAvoidanceDeg\": 45,", "", "[0].site.sunAvoidanceDeg")]
    [InlineData("\"resolvingPower\": 100", "\"resolvingPower\": 0", "[0].spectrographs[0].resolvingPower")]
    [InlineData("\"maxAirmass\": 2", "\"maxAirmass\": 0.5", "[0].spectrographs[0].maxAirmass")]
    [InlineData("\"status\": \"open\"", "\"status\": \"ajar\"", "[0].site.status")]
    public void Parse_BadField_NamesItsPath(string from, string to, string path)
    {
        var ex = Assert.Throws<FormatException>(() => RosterJson.Parse(Valid.Replace(from, to)));

        Assert.Contains(path, ex.Message);
    }

    [Fact]
    public void Parse_EmptyArray_IsRejected()
        => Assert.Throws<FormatException>(() => RosterJson.Parse("[]"));
}
