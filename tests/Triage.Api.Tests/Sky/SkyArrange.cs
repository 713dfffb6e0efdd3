using System.Text.Json.Nodes;
using Triage.Api.Tests.Infrastructure;
using Triage.Core.Roster;
using Triage.Storage.Access;

namespace Triage.Api.Tests.Sky;

/// <summary>Creates invented sites and spectrographs through the API for the sky tests.</summary>
internal static class SkyArrange
{
    /// <summary>The invented reference site of check-values.md §2 (−30.5°, −70.8° east-positive, 2400 m).</summary>
    public const double ReferenceLatitudeDeg = -30.5, ReferenceLongitudeDeg = -70.8, ReferenceElevationM = 2400;

    public static async Task<(HttpClient Client, string SiteId, JsonObject Body)> SiteAsync(
        TriageApiFactory api, double latitudeDeg, double longitudeDeg, double elevationM, Action<JsonObject>? edit = null)
    {
        var admin = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var body = Bodies.Site();
        body["latitudeDeg"] = latitudeDeg;
        body["longitudeDeg"] = longitudeDeg;
        body["elevationM"] = elevationM;
        edit?.Invoke(body);
        var created = await admin.PostAsync("/api/sites", Bodies.Json(body));
        var site = await created.ReadObjectAsync();
        Assert.True(created.IsSuccessStatusCode, site.ToJsonString());
        // Reads need any valid key: use a non-admin one.
        var reader = api.ClientWith(await api.KeyAsync(Scope.Broker));
        return (reader, (string)site["id"]!, body);
    }

    public static async Task<string> SpectrographAsync(TriageApiFactory api, string siteId, JsonObject body)
    {
        var admin = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var created = await admin.PostAsync($"/api/sites/{siteId}/spectrographs", Bodies.Json(body));
        var sp = await created.ReadObjectAsync();
        Assert.True(created.IsSuccessStatusCode, sp.ToJsonString());
        return (string)sp["id"]!;
    }

    /// <summary>The core's site record for a site body sent to the API.</summary>
    public static Site ToSite(JsonObject b) => new(
        Guid.Empty, (string)b["name"]!, D(b, "latitudeDeg"), D(b, "longitudeDeg"), D(b, "elevationM"),
        D(b, "minAltitudeDeg"), D(b, "sunAvoidanceDeg"), D(b, "moonAvoidanceDeg"), D(b, "seeingArcsec"),
        D(b, "darkSkyMagArcsec2"), D(b, "skyReferenceWavelengthAngstrom"), D(b, "extinctionMagPerAirmass"),
        SiteStatus.Open);

    /// <summary>A number from a body node, whether it was written as an integer or not.</summary>
    private static double D(JsonObject b, string field) =>
        double.Parse(b[field]!.ToJsonString(), System.Globalization.CultureInfo.InvariantCulture);

    public static DateTimeOffset Utc(JsonNode? node) => DateTimeOffset.Parse((string)node!, System.Globalization.CultureInfo.InvariantCulture);
}
