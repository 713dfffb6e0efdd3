using System.Net;
using System.Text.Json.Nodes;
using Triage.Api.Tests.Infrastructure;

namespace Triage.Api.Tests.Sky;

[Collection(ApiCollection.Name)]
public sealed class ExposureEndpointTests(TriageApiFactory api)
{
    /// <summary>
    /// A spectrograph and site with the inputs of the fully worked CCD example in check-values.md §4d [D]:
    /// 2.0 m, 15 % of the area obstructed, T = 0.25, R = 100 at 6000 Å, slit 1.5″, 0.75″/px, 2 px per element,
    /// seeing 1.2″ (so 3 spatial pixels), sky 21.0 AB/arcsec², RN 5 e⁻, dark 0.001 e⁻/s/px. Extinction 0 because the
    /// example's throughput already includes the atmosphere.
    /// </summary>
    private async Task<(HttpClient Client, string SpectrographId)> WorkedExampleAsync(double maxExposureSeconds = 1800)
    {
        var (client, siteId, _) = await SkyArrange.SiteAsync(api, SkyArrange.ReferenceLatitudeDeg, SkyArrange.ReferenceLongitudeDeg, SkyArrange.ReferenceElevationM, b =>
        {
            b["seeingArcsec"] = 1.2;
            b["darkSkyMagArcsec2"] = 21.0;
            b["skyReferenceWavelengthAngstrom"] = 6000;
            b["extinctionMagPerAirmass"] = 0.0;
        });
        var sp = Bodies.Spectrograph();
        sp["resolvingPower"] = 100;
        sp["referenceWavelengthAngstrom"] = 6000;
        sp["apertureM"] = 2.0;
        sp["centralObstruction"] = 0.15;
        sp["throughput"] = 0.25;
        sp["readNoiseElectrons"] = 5;
        sp["darkCurrentElectronsPerSecond"] = 0.001;
        sp["pixelsPerResolutionElement"] = 2;
        sp["spatialPixelScaleArcsec"] = 0.75;
        sp["slitWidthArcsec"] = 1.5;
        sp["overheadSeconds"] = 300;
        sp["maxExposureSeconds"] = maxExposureSeconds;
        return (client, await SkyArrange.SpectrographAsync(api, siteId, sp));
    }

    private static async Task<JsonObject> EstimateAsync(HttpClient client, string id, JsonObject body)
    {
        var response = await client.PostAsync($"/api/spectrographs/{id}/exposure", Bodies.Json(body));
        var answer = await response.ReadObjectAsync();
        Assert.True(response.StatusCode == HttpStatusCode.OK, answer.ToJsonString());
        return answer;
    }

    [Fact]
    public async Task PostExposure_WorkedExample_ReproducesTheReferenceBudget()
    {
        var (client, id) = await WorkedExampleAsync();

        var answer = await EstimateAsync(client, id, new JsonObject { ["magnitudeAb"] = 19.0, ["seconds"] = 600 });

        // check-values.md §4d [D], steps 11–16: S = 4606.52, B = 2949.20, dark 3.60, RN² 150, noise 87.803, S/N 52.46.
        // Tolerance 0.01 %: the table is rounded to 4–6 significant figures.
        var e = answer["electrons"]!;
        Assert.Equal(4606.52, (double)e["source"]!, 4606.52 * 1e-4);
        Assert.Equal(2949.20, (double)e["sky"]!, 2949.20 * 1e-4);
        Assert.Equal(3.60, (double)e["dark"]!, 1e-6);
        Assert.Equal(150, (double)e["readNoiseVariance"]!, 1e-9);
        Assert.Equal(87.803, (double)e["noise"]!, 87.803 * 1e-4);
        Assert.Equal(52.464, (double)answer["snr"]!, 52.464 * 1e-4);
        Assert.Equal(900, (double)answer["elapsedSeconds"]!, 1e-9);
        Assert.Contains("per resolution element", (string)answer["snrConvention"]!);
        Assert.Equal(3, (int)answer["conditions"]!["spatialPixels"]!);

        // Same section, the quadratic for S/N = 10: t = 29.888 s.
        var time = await EstimateAsync(client, id, new JsonObject { ["magnitudeAb"] = 19.0, ["snr"] = 10 });
        Assert.Equal(29.888, (double)time["seconds"]!, 29.888 * 1e-4);
        Assert.True((bool)time["reachable"]!);
    }

    [Theory]
    [InlineData(19.5, 20, 1.0, 0.0)]
    [InlineData(21.0, 15, 1.6, 0.8)]   // moonlit, at airmass 1.6
    [InlineData(22.5, 10, 1.2, 0.0)]   // faint: split into several sub-exposures
    public async Task PostExposure_TimeForSnrThenSnrForThatTime_InvertEachOther(double mag, double snr, double airmass, double moon)
    {
        var (client, id) = await WorkedExampleAsync(maxExposureSeconds: 600);
        JsonObject Body() => new() { ["magnitudeAb"] = mag, ["airmass"] = airmass, ["moonIllumination"] = moon, ["moonSeparationDeg"] = 40 };

        var forSnr = Body();
        forSnr["snr"] = snr;
        var time = await EstimateAsync(client, id, forSnr);
        var seconds = (double)time["seconds"]!;
        var forTime = Body();
        forTime["seconds"] = seconds;
        var back = await EstimateAsync(client, id, forTime);

        Assert.True((bool)time["reachable"]!);
        Assert.Equal(snr, (double)back["snr"]!, snr * 1e-9);
        Assert.Equal((int)time["exposureCount"]!, (int)back["exposureCount"]!);
        Assert.Equal((int)time["exposureCount"]!, (int)Math.Ceiling(seconds / 600 - 1e-9));
        Assert.Equal(seconds + 300, (double)time["elapsedSeconds"]!, 1e-6);
        // A second less gives less S/N: the time is the shortest that reaches it.
        var shorter = Body();
        shorter["seconds"] = seconds - 1;
        Assert.True((double)(await EstimateAsync(client, id, shorter))["snr"]! < snr);
        if (mag > 22)
        {
            Assert.True((int)time["exposureCount"]! > 1);
        }
    }

    [Fact]
    public async Task PostExposure_Unreachable_SaysSoWithTheBestWithinFourHours()
    {
        var (client, id) = await WorkedExampleAsync();

        var answer = await EstimateAsync(client, id, new JsonObject { ["magnitudeAb"] = 27, ["snr"] = 50 });

        Assert.False((bool)answer["reachable"]!);
        Assert.Equal(14_400, (double)answer["maxTotalSeconds"]!);
        Assert.InRange((double)answer["seconds"]!, 1, 14_400);
        Assert.InRange((double)answer["snr"]!, 0, 50);
    }
}
