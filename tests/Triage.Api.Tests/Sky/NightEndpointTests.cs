using System.Net;
using Triage.Api.Tests.Infrastructure;
using Triage.Core.Sky;

namespace Triage.Api.Tests.Sky;

[Collection(ApiCollection.Name)]
public sealed class NightEndpointTests(TriageApiFactory api)
{
    /// <summary>
    /// −18° twilight at the invented reference site, from /work/shared/reference/check-values.md §2a
    /// (astropy 5.2.1 / ERFA builtin ephemeris, airless topocentric Sun centre, brentq to 1 ms) [A].
    /// Tolerance 60 s: the file's suggested tolerance for twilight times (its independent low-precision
    /// recomputation agrees to 0–4 s; the API rounds to the second).
    /// </summary>
    [Theory]
    [InlineData("2026-01-15", "2026-01-16T01:23:03Z", "2026-01-16T08:22:50Z")] // §2a row 2026-01-15
    [InlineData("2026-06-21", "2026-06-21T23:16:16Z", "2026-06-22T10:14:03Z")] // §2a row 2026-06-21
    public async Task GetNight_ReferenceSite_ReproducesAstronomicalTwilightWithin60s(string date, string evening, string morning)
    {
        var (client, siteId, _) = await SkyArrange.SiteAsync(api, SkyArrange.ReferenceLatitudeDeg, SkyArrange.ReferenceLongitudeDeg, SkyArrange.ReferenceElevationM);

        var response = await client.GetAsync($"/api/sites/{siteId}/nights/{date}");

        var night = await response.ReadObjectAsync();
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var t18 = night["twilights"]!.AsArray().Single(t => (double)t!["depressionDeg"]! == 18)!;
        Assert.InRange((SkyArrange.Utc(t18["eveningUtc"]) - DateTimeOffset.Parse(evening)).Duration().TotalSeconds, 0, 60);
        Assert.InRange((SkyArrange.Utc(t18["morningUtc"]) - DateTimeOffset.Parse(morning)).Duration().TotalSeconds, 0, 60);
        var dark = night["darkWindow"]!;
        Assert.Equal("normal", (string)dark["kind"]!);
        Assert.Equal(18, (double)dark["twilightDepthDeg"]!);
        Assert.Equal(SkyArrange.Utc(t18["eveningUtc"]), SkyArrange.Utc(dark["startUtc"]));
        Assert.Equal(SkyArrange.Utc(t18["morningUtc"]), SkyArrange.Utc(dark["endUtc"]));
    }

    [Fact]
    public async Task GetNight_ShallowerDepth_DarkWindowFollowsThatTwilight()
    {
        var (client, siteId, _) = await SkyArrange.SiteAsync(api, SkyArrange.ReferenceLatitudeDeg, SkyArrange.ReferenceLongitudeDeg, SkyArrange.ReferenceElevationM);

        var night = await (await client.GetAsync($"/api/sites/{siteId}/nights/2026-01-15?twilightDepthDeg=12")).ReadObjectAsync();

        var dark = night["darkWindow"]!;
        Assert.Equal(12, (double)dark["twilightDepthDeg"]!);
        var t12 = night["twilights"]!.AsArray().Single(t => (double)t!["depressionDeg"]! == 12)!;
        Assert.Equal(SkyArrange.Utc(t12["eveningUtc"]), SkyArrange.Utc(dark["startUtc"]));
        // check-values.md §2a, 2026-01-15: −12° evening 00:48:35, morning 08:57:18 → 8.145 h; two 60 s tolerances (0.034 h).
        Assert.InRange((double)dark["hours"]!, 8.145 - 0.034, 8.145 + 0.034);
    }

    [Fact]
    public async Task GetNight_MoonIllumination_IsAtTheMiddleOfTheDarkWindow()
    {
        var (client, siteId, _) = await SkyArrange.SiteAsync(api, SkyArrange.ReferenceLatitudeDeg, SkyArrange.ReferenceLongitudeDeg, SkyArrange.ReferenceElevationM);

        var night = await (await client.GetAsync($"/api/sites/{siteId}/nights/2026-01-15")).ReadObjectAsync();

        var moon = night["moon"]!;
        var dark = night["darkWindow"]!;
        var start = SkyArrange.Utc(dark["startUtc"]);
        var middle = start + (SkyArrange.Utc(dark["endUtc"]) - start) / 2;
        Assert.Equal("dark-window-middle", (string)moon["at"]!);
        Assert.InRange((SkyArrange.Utc(moon["atUtc"]) - middle).Duration().TotalSeconds, 0, 1);
        // Illumination moves by < 0.01 per hour; at 2026-01-16T03:00Z it is 0.0707 (check-values.md §2b C1, astropy [A]),
        // and the middle of the dark window is 1.9 h later, on the waning crescent: expect a little less.
        var k = (double)moon["illumination"]!;
        Assert.InRange(k, 0.0707 - 0.02, 0.0707);
        Assert.Equal(MoonPhase.At(SkyArrange.Utc(moon["atUtc"])).IlluminatedFraction, k, 4);
        var events = moon["riseSet"]!.AsArray();
        Assert.NotEmpty(events);
        Assert.All(events, e => Assert.Contains((string)e!["kind"]!, new[] { "rise", "set" }));
    }

    [Fact]
    public async Task GetNight_PolarSiteInJune_AnswersNeverDarkNotAnError()
    {
        var (client, siteId, _) = await SkyArrange.SiteAsync(api, 78.0, 15.6, 10);

        var response = await client.GetAsync($"/api/sites/{siteId}/nights/2026-06-21");

        var night = await response.ReadObjectAsync();
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var dark = night["darkWindow"]!;
        Assert.Equal("never-dark", (string)dark["kind"]!);
        Assert.Null(dark["startUtc"]);
        Assert.Null(dark["endUtc"]);
        Assert.Equal(0, (double)dark["hours"]!);
        // Midnight Sun at 78° N in June (common practice): the Sun does not even set.
        var sunset = night["twilights"]!.AsArray().Single(t => (double)t!["depressionDeg"]! == 0.833)!;
        Assert.Null(sunset["eveningUtc"]);
        Assert.Null(sunset["morningUtc"]);
        Assert.Equal("local-midnight", (string)night["moon"]!["at"]!);
    }

    [Fact]
    public async Task GetNight_PolarSiteInDecember_IsAlwaysDarkAtCivilDepth()
    {
        var (client, siteId, _) = await SkyArrange.SiteAsync(api, 78.0, 15.6, 10);

        var night = await (await client.GetAsync($"/api/sites/{siteId}/nights/2026-12-21?twilightDepthDeg=6")).ReadObjectAsync();

        // Polar night at 78° N near the December solstice: the Sun's noon altitude is about 90 − 78 − 23.4 = −11.4° (common practice).
        var dark = night["darkWindow"]!;
        Assert.Equal("always-dark", (string)dark["kind"]!);
        Assert.Equal(24, (double)dark["hours"]!, 3);
    }
}
