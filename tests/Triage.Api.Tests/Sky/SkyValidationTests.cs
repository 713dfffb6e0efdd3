using System.Net;
using System.Text.Json.Nodes;
using Triage.Api.Tests.Infrastructure;

namespace Triage.Api.Tests.Sky;

/// <summary>Bad requests to the sky endpoints: each is a 4xx application/problem+json naming the field, never a 500.</summary>
[Collection(ApiCollection.Name)]
public sealed class SkyValidationTests(TriageApiFactory api)
{
    private const string Night = "/api/sites/{site}/nights/2026-01-15";
    private const string Visibility = Night + "/visibility";
    private const string Exposure = "/api/spectrographs/{spec}/exposure";
    private const string NoSuchId = "00000000-0000-0000-0000-00000000abcd";

    private static string ManyTargets(int n) =>
        "{\"targets\":[" + string.Join(",", Enumerable.Range(0, n).Select(i => $"{{\"id\":\"t{i}\",\"raDeg\":10,\"decDeg\":-20}}")) + "]}";

    /// <summary>(case, path with {site}/{spec}, body or null for GET, status, field named)</summary>
    public static TheoryData<string, string, string?, int, string> Cases() => new()
    {
        // Night.
        { "date not a date", "/api/sites/{site}/nights/2026-13-40", null, 400, "date" },
        { "date in another format", "/api/sites/{site}/nights/15.01.2026", null, 400, "date" },
        { "date out of the supported years", "/api/sites/{site}/nights/2300-01-01", null, 400, "date" },
        { "twilight depth too shallow", Night + "?twilightDepthDeg=3", null, 400, "twilightDepthDeg" },
        { "twilight depth too deep", Night + "?twilightDepthDeg=18.5", null, 400, "twilightDepthDeg" },
        { "twilight depth not a number", Night + "?twilightDepthDeg=deep", null, 400, "twilightDepthDeg" },
        { "unknown site", $"/api/sites/{NoSuchId}/nights/2026-01-15", null, 404, "id" },
        // Visibility.
        { "targets missing", Visibility, "{\"maxAirmass\":2}", 400, "targets" },
        { "targets empty", Visibility, "{\"targets\":[]}", 400, "targets" },
        { "too many targets", Visibility, ManyTargets(5_001), 400, "targets" },
        { "declination above 90", Visibility, "{\"targets\":[{\"id\":\"a\",\"raDeg\":1,\"decDeg\":1},{\"id\":\"b\",\"raDeg\":1,\"decDeg\":1},{\"id\":\"c\",\"raDeg\":1,\"decDeg\":1},{\"id\":\"d\",\"raDeg\":1,\"decDeg\":95}]}", 400, "targets[3].decDeg" },
        { "right ascension of 360", Visibility, "{\"targets\":[{\"id\":\"a\",\"raDeg\":360,\"decDeg\":0}]}", 400, "targets[0].raDeg" },
        { "declination missing", Visibility, "{\"targets\":[{\"id\":\"a\",\"raDeg\":10}]}", 400, "targets[0].decDeg" },
        { "blank target id", Visibility, "{\"targets\":[{\"id\":\"a\",\"raDeg\":1,\"decDeg\":1},{\"id\":\" \",\"raDeg\":1,\"decDeg\":1}]}", 400, "targets[1].id" },
        { "repeated target id", Visibility, "{\"targets\":[{\"id\":\"a\",\"raDeg\":1,\"decDeg\":1},{\"id\":\"a\",\"raDeg\":2,\"decDeg\":1}]}", 400, "targets[1].id" },
        { "declination as text", Visibility, "{\"targets\":[{\"id\":\"a\",\"raDeg\":1,\"decDeg\":\"-20\"}]}", 400, "targets[0].decDeg" },
        { "unknown target property", Visibility, "{\"targets\":[{\"id\":\"a\",\"raDeg\":1,\"decDeg\":1,\"epoch\":2000}]}", 400, "targets[0].epoch" },
        { "airmass limit below 1", Visibility, "{\"targets\":[{\"id\":\"a\",\"raDeg\":1,\"decDeg\":1}],\"maxAirmass\":0.9}", 400, "maxAirmass" },
        { "visibility with a bad depth", Visibility + "?twilightDepthDeg=30", "{\"targets\":[{\"id\":\"a\",\"raDeg\":1,\"decDeg\":1}]}", 400, "twilightDepthDeg" },
        { "visibility of an unknown site", $"/api/sites/{NoSuchId}/nights/2026-01-15/visibility", "{\"targets\":[{\"id\":\"a\",\"raDeg\":1,\"decDeg\":1}]}", 404, "id" },
        // Exposure.
        { "both snr and seconds", Exposure, "{\"magnitudeAb\":19,\"snr\":10,\"seconds\":600}", 400, "seconds" },
        { "neither snr nor seconds", Exposure, "{\"magnitudeAb\":19}", 400, "snr" },
        { "magnitude missing", Exposure, "{\"snr\":10}", 400, "magnitudeAb" },
        { "magnitude absurd", Exposure, "{\"magnitudeAb\":45,\"snr\":10}", 400, "magnitudeAb" },
        { "snr zero", Exposure, "{\"magnitudeAb\":19,\"snr\":0}", 400, "snr" },
        { "seconds negative", Exposure, "{\"magnitudeAb\":19,\"seconds\":-5}", 400, "seconds" },
        { "airmass below 1", Exposure, "{\"magnitudeAb\":19,\"snr\":10,\"airmass\":0.8}", 400, "airmass" },
        { "moon illumination above 1", Exposure, "{\"magnitudeAb\":19,\"snr\":10,\"moonIllumination\":1.5}", 400, "moonIllumination" },
        { "moon separation above 180", Exposure, "{\"magnitudeAb\":19,\"snr\":10,\"moonIllumination\":0.5,\"moonSeparationDeg\":200}", 400, "moonSeparationDeg" },
        { "seeing zero", Exposure, "{\"magnitudeAb\":19,\"snr\":10,\"seeingArcsec\":0}", 400, "seeingArcsec" },
        { "wavelength outside the spectrograph (from the core)", Exposure, "{\"magnitudeAb\":19,\"snr\":10,\"wavelengthAngstrom\":12000}", 400, "wavelengthAngstrom" },
        { "NaN magnitude", Exposure, "{\"magnitudeAb\":NaN,\"snr\":10}", 400, "magnitudeAb" },
        { "unknown exposure property", Exposure, "{\"magnitudeAb\":19,\"snr\":10,\"filter\":\"r\"}", 400, "filter" },
        { "unknown spectrograph", $"/api/spectrographs/{NoSuchId}/exposure", "{\"magnitudeAb\":19,\"snr\":10}", 404, "id" },
    };

    /// <summary>Fills {site} with the test's site and {spec} with a new spectrograph at it.</summary>
    private async Task<string> ResolveAsync(string path, string siteId)
    {
        var url = path.Replace("{site}", siteId, StringComparison.Ordinal);
        return url.Contains("{spec}", StringComparison.Ordinal)
            ? url.Replace("{spec}", await SkyArrange.SpectrographAsync(api, siteId, Bodies.Spectrograph()), StringComparison.Ordinal)
            : url;
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public async Task BadRequest_IsProblemNamingTheField(string name, string path, string? body, int status, string field)
    {
        Assert.False(string.IsNullOrEmpty(name));
        var (client, siteId, _) = await SkyArrange.SiteAsync(api, SkyArrange.ReferenceLatitudeDeg, SkyArrange.ReferenceLongitudeDeg, SkyArrange.ReferenceElevationM);
        var url = await ResolveAsync(path, siteId);

        var response = body is null ? await client.GetAsync(url) : await client.PostAsync(url, Bodies.Raw(body));

        await Bodies.AssertProblemNamingAsync(response, status, field);
    }

    [Theory]
    [InlineData("GET", Night)]
    [InlineData("POST", Visibility)]
    [InlineData("POST", Exposure)]
    public async Task AnyValidKeyReads_NoKeyIsRefused(string method, string path)
    {
        var (reader, siteId, _) = await SkyArrange.SiteAsync(api, SkyArrange.ReferenceLatitudeDeg, SkyArrange.ReferenceLongitudeDeg, SkyArrange.ReferenceElevationM);
        var url = await ResolveAsync(path, siteId);
        var body = path == Exposure ? "{\"magnitudeAb\":19,\"snr\":10}" : "{\"targets\":[{\"id\":\"a\",\"raDeg\":75,\"decDeg\":-30}]}";
        Task<HttpResponseMessage> Send(HttpClient c) => method == "GET" ? c.GetAsync(url) : c.PostAsync(url, Bodies.Raw(body));

        Assert.Equal(HttpStatusCode.OK, (await Send(reader)).StatusCode); // a broker key: reading needs no scope
        Assert.Equal(HttpStatusCode.Unauthorized, (await Send(api.ClientWith(null))).StatusCode);
    }
}
