using System.Net;
using System.Text.Json.Nodes;
using Triage.Api.Tests.Infrastructure;
using Triage.Core.Sky;

namespace Triage.Api.Tests.Sky;

[Collection(ApiCollection.Name)]
public sealed class VisibilityEndpointTests(TriageApiFactory api)
{
    private static JsonObject Targets(params (string Id, double Ra, double Dec)[] targets) => new()
    {
        ["targets"] = new JsonArray(targets.Select(t => (JsonNode)new JsonObject { ["id"] = t.Id, ["raDeg"] = t.Ra, ["decDeg"] = t.Dec }).ToArray()),
    };

    [Fact]
    public async Task PostVisibility_Windows_ContainOnlyInstantsInsideEveryLimit()
    {
        var (client, siteId, siteBody) = await SkyArrange.SiteAsync(api, SkyArrange.ReferenceLatitudeDeg, SkyArrange.ReferenceLongitudeDeg, SkyArrange.ReferenceElevationM);
        // Invented targets: C1 and C2 of check-values.md §2b, one near the ecliptic close to the Sun's side, one setting early.
        var body = Targets(("c1", 75, -30), ("c2", 157.5, -45), ("eve", 30, 0), ("dawn", 250, -20), ("pole", 200, -85));
        body["maxAirmass"] = 1.8;

        var response = await client.PostAsync($"/api/sites/{siteId}/nights/2026-01-15/visibility", Bodies.Json(body));

        var answer = await response.ReadObjectAsync();
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Equal("request", (string)answer["maxAirmassSource"]!);
        double limit = (double)answer["altitudeLimitDeg"]!;
        // Kasten & Young airmass 1.8 is about 33.7° altitude (X ≈ sec z, common practice), above the site's 25° minimum.
        Assert.InRange(limit, 33.5, 34.0);
        var model = NightModel.For(SkyArrange.ToSite(siteBody), new DateOnly(2026, 1, 15));
        var site = SkyArrange.ToSite(siteBody);
        int checkedInstants = 0;
        foreach (var t in answer["targets"]!.AsArray())
        {
            var target = new SkyTarget((double)t!["raDeg"]!, (double)t["decDeg"]!);
            var windows = t["windows"]!.AsArray();
            Assert.Equal(windows.Count > 0, (string)t["reason"]! == "visible");
            foreach (var w in windows)
            {
                var start = SkyArrange.Utc(w!["startUtc"]);
                var end = SkyArrange.Utc(w["endUtc"]);
                Assert.True(end > start);
                for (int i = 0; i <= 20; i++)
                {
                    var at = start + (end - start) * (i / 20.0);
                    // Exact (non-grid) core functions; 0.001° slack for the bisection tolerance at the window edges.
                    Assert.True(model.AltitudeDeg(target, at) >= limit - 1e-3, $"{t["id"]} below the limit at {at:O}");
                    Assert.True(model.SunAltitudeDeg(at) <= -18 + 1e-3, $"{t["id"]}: Sun above −18° at {at:O}");
                    Assert.True(model.SunSeparationDeg(target, at) >= site.SunAvoidanceDeg - 1e-3);
                    if (model.MoonHorizontal(at).AltitudeDeg > 0.5)
                    {
                        Assert.True(model.MoonSeparationDeg(target, at) >= site.MoonAvoidanceDeg - 1e-3);
                    }
                    checkedInstants++;
                }
            }
        }
        Assert.True(checkedInstants >= 42, $"only {checkedInstants} instants were checked");
        // C1 is at 77.46° at 03:00Z (check-values.md §2b C1, astropy [A]) so it must be visible then.
        var c1 = answer["targets"]!.AsArray().Single(t => (string)t!["id"]! == "c1")!;
        var at3 = DateTimeOffset.Parse("2026-01-16T03:00:00Z");
        Assert.Contains(c1["windows"]!.AsArray(), w => SkyArrange.Utc(w!["startUtc"]) <= at3 && at3 <= SkyArrange.Utc(w["endUtc"]));
        Assert.True((double)c1["maxAltitudeInDarkDeg"]! >= 77.4599 - 0.005);
    }

    [Fact]
    public async Task PostVisibility_TargetThatNeverRises_HasReasonAndNoWindows()
    {
        var (client, siteId, _) = await SkyArrange.SiteAsync(api, SkyArrange.ReferenceLatitudeDeg, SkyArrange.ReferenceLongitudeDeg, SkyArrange.ReferenceElevationM);

        var answer = await (await client.PostAsync($"/api/sites/{siteId}/nights/2026-01-15/visibility",
            Bodies.Json(Targets(("north", 150, 70))))).ReadObjectAsync();

        // Dec +70° from latitude −30.5° culminates at 90 − 30.5 − 70 = −10.5° (common practice): never rises.
        // Precession since J2000 moves the apparent declination by up to 0.36° in 2026 (check-values.md §2b, TETE vs ICRS), hence ±0.4°.
        var t = answer["targets"]!.AsArray().Single()!;
        Assert.Equal("never-above-limit", (string)t["reason"]!);
        Assert.Empty(t["windows"]!.AsArray());
        Assert.Equal(0, (double)t["observableHours"]!);
        Assert.InRange((double)t["maxAltitudeInDarkDeg"]!, -10.5 - 0.4, -10.5 + 0.4);
    }

    [Fact]
    public async Task PostVisibility_PolarSummer_EveryTargetHasNoDarkTime()
    {
        var (client, siteId, _) = await SkyArrange.SiteAsync(api, 78.0, 15.6, 10);

        var response = await client.PostAsync($"/api/sites/{siteId}/nights/2026-06-21/visibility", Bodies.Json(Targets(("a", 10, 60), ("b", 200, 30))));

        var answer = await response.ReadObjectAsync();
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Equal("never-dark", (string)answer["darkWindow"]!["kind"]!);
        Assert.All(answer["targets"]!.AsArray(), t =>
        {
            Assert.Equal("no-dark-time", (string)t!["reason"]!);
            Assert.Empty(t["windows"]!.AsArray());
            Assert.Null(t["maxAltitudeInDarkDeg"]);
        });
    }

    [Fact]
    public async Task PostVisibility_NoAirmassGiven_UsesTheMostPermissiveAvailableSpectrographOrThree()
    {
        var (client, siteId, _) = await SkyArrange.SiteAsync(api, SkyArrange.ReferenceLatitudeDeg, SkyArrange.ReferenceLongitudeDeg, SkyArrange.ReferenceElevationM);
        var url = $"/api/sites/{siteId}/nights/2026-01-15/visibility";

        var bare = await (await client.PostAsync(url, Bodies.Json(Targets(("x", 75, -30))))).ReadObjectAsync();
        Assert.Equal(3.0, (double)bare["maxAirmass"]!);
        Assert.Equal("default", (string)bare["maxAirmassSource"]!);

        var strict = Bodies.Spectrograph();
        strict["maxAirmass"] = 1.5;
        var loose = Bodies.Spectrograph();
        loose["maxAirmass"] = 2.4;
        var closed = Bodies.Spectrograph();
        closed["maxAirmass"] = 3.5;
        closed["status"] = "closed";
        foreach (var s in new[] { strict, loose, closed })
        {
            await SkyArrange.SpectrographAsync(api, siteId, s);
        }

        var withUnits = await (await client.PostAsync(url, Bodies.Json(Targets(("x", 75, -30))))).ReadObjectAsync();
        Assert.Equal(2.4, (double)withUnits["maxAirmass"]!);
        Assert.Equal("spectrograph", (string)withUnits["maxAirmassSource"]!);
    }
}
