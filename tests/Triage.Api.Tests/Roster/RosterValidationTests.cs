using System.Net.Http.Json;
using System.Text.Json.Nodes;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;

namespace Triage.Api.Tests.Roster;

/// <summary>
/// Bad requests: each gets a 4xx application/problem+json naming the offending field, and
/// nothing is written.
/// </summary>
[Collection(ApiCollection.Name)]
public sealed class RosterValidationTests(TriageApiFactory api)
{
    public enum Target { Site, Spectrograph }

    private static JsonObject Mutate(JsonObject body, string field, JsonNode? value, bool remove = false)
    {
        if (remove)
        {
            body.Remove(field);
        }
        else
        {
            body[field] = value;
        }
        return body;
    }

    /// <summary>(case, target, raw body or null to use the mutation, field, value, remove, status, expected field)</summary>
    public static TheoryData<string, Target, string?, string, string?, bool, int, string> Cases() => new()
    {
        // Sites: ranges, types, enums, required fields, unknown properties.
        { "latitude above 90", Target.Site, null, "latitudeDeg", "90.5", false, 400, "latitudeDeg" },
        { "latitude below -90", Target.Site, null, "latitudeDeg", "-91", false, 400, "latitudeDeg" },
        { "longitude above 180", Target.Site, null, "longitudeDeg", "181", false, 400, "longitudeDeg" },
        { "longitude below -180", Target.Site, null, "longitudeDeg", "-180.01", false, 400, "longitudeDeg" },
        { "latitude as string", Target.Site, null, "latitudeDeg", "\"north\"", false, 400, "latitudeDeg" },
        { "latitude missing", Target.Site, null, "latitudeDeg", null, true, 400, "latitudeDeg" },
        { "name missing", Target.Site, null, "name", null, true, 400, "name" },
        { "name blank", Target.Site, null, "name", "\"   \"", false, 400, "name" },
        { "name too long", Target.Site, null, "name", "\"" + new string('x', 101) + "\"", false, 400, "name" },
        { "name as number", Target.Site, null, "name", "42", false, 400, "name" },
        { "min altitude negative", Target.Site, null, "minAltitudeDeg", "-5", false, 400, "minAltitudeDeg" },
        { "sun avoidance above 180", Target.Site, null, "sunAvoidanceDeg", "200", false, 400, "sunAvoidanceDeg" },
        { "moon avoidance negative", Target.Site, null, "moonAvoidanceDeg", "-1", false, 400, "moonAvoidanceDeg" },
        { "seeing zero", Target.Site, null, "seeingArcsec", "0", false, 400, "seeingArcsec" },
        { "sky brightness absurd", Target.Site, null, "darkSkyMagArcsec2", "40", false, 400, "darkSkyMagArcsec2" },
        { "extinction negative", Target.Site, null, "extinctionMagPerAirmass", "-0.1", false, 400, "extinctionMagPerAirmass" },
        { "unknown status", Target.Site, null, "status", "\"ajar\"", false, 400, "status" },
        { "unknown property", Target.Site, null, "altitudeOfMoon", "3", false, 400, "altitudeOfMoon" },
        { "elevation as bool", Target.Site, null, "elevationM", "true", false, 400, "elevationM" },
        { "NaN latitude", Target.Site, "{\"name\":\"x\",\"latitudeDeg\":NaN}", "", null, false, 400, "latitudeDeg" },
        { "Infinity longitude", Target.Site, "{\"name\":\"x\",\"latitudeDeg\":1,\"longitudeDeg\":Infinity}", "", null, false, 400, "longitudeDeg" },
        { "malformed JSON", Target.Site, "{\"name\": \"x\",", "", null, false, 400, "body" },
        { "JSON array instead of object", Target.Site, "[1,2,3]", "", null, false, 400, "body" },
        { "number as string", Target.Site, null, "elevationM", "\"2600\"", false, 400, "elevationM" },
        // Spectrographs.
        { "R zero", Target.Spectrograph, null, "resolvingPower", "0", false, 400, "resolvingPower" },
        { "R above a million", Target.Spectrograph, null, "resolvingPower", "2000000", false, 400, "resolvingPower" },
        { "R missing", Target.Spectrograph, null, "resolvingPower", null, true, 400, "resolvingPower" },
        { "wavelength range inverted", Target.Spectrograph, null, "maxWavelengthAngstrom", "3000", false, 400, "maxWavelengthAngstrom" },
        { "reference outside range", Target.Spectrograph, null, "referenceWavelengthAngstrom", "9900", false, 400, "referenceWavelengthAngstrom" },
        { "aperture negative", Target.Spectrograph, null, "apertureM", "-1", false, 400, "apertureM" },
        { "obstruction of 1", Target.Spectrograph, null, "centralObstruction", "1", false, 400, "centralObstruction" },
        { "throughput above 1", Target.Spectrograph, null, "throughput", "1.2", false, 400, "throughput" },
        { "read noise negative", Target.Spectrograph, null, "readNoiseElectrons", "-3", false, 400, "readNoiseElectrons" },
        { "pixels per element below 1", Target.Spectrograph, null, "pixelsPerResolutionElement", "0.5", false, 400, "pixelsPerResolutionElement" },
        { "slit width zero", Target.Spectrograph, null, "slitWidthArcsec", "0", false, 400, "slitWidthArcsec" },
        { "max exposure zero", Target.Spectrograph, null, "maxExposureSeconds", "0", false, 400, "maxExposureSeconds" },
        { "airmass limit below 1", Target.Spectrograph, null, "maxAirmass", "0.9", false, 400, "maxAirmass" },
        { "budget above 24 h", Target.Spectrograph, null, "nightlyBudgetHours", "25", false, 400, "nightlyBudgetHours" },
        { "cost negative", Target.Spectrograph, null, "costPerHour", "-10", false, 400, "costPerHour" },
        { "unknown spectrograph status", Target.Spectrograph, null, "status", "\"broken\"", false, 400, "status" },
        { "site id mismatch", Target.Spectrograph, null, "siteId", "\"00000000-0000-0000-0000-000000000001\"", false, 400, "siteId" },
        { "site id not a uuid", Target.Spectrograph, null, "siteId", "\"north-dome\"", false, 400, "siteId" },
        { "oversize body", Target.Spectrograph, null, "name", "\"" + new string('y', 70_000) + "\"", false, 413, "body" },
    };

    [Theory]
    [MemberData(nameof(Cases))]
    public async Task BadRequest_IsProblemNamingTheField_AndWritesNothing(
        string name, Target target, string? raw, string field, string? value, bool remove, int status, string expectedField)
    {
        Assert.False(string.IsNullOrEmpty(name));
        var client = api.ClientWith(await api.KeyAsync(Scope.Admin));
        string path;
        string listPath;
        JsonObject body;
        if (target == Target.Site)
        {
            path = "/api/sites";
            body = Bodies.Site();
            listPath = $"/api/sites?name={body["name"]}";
        }
        else
        {
            var site = await (await client.PostAsync("/api/sites", Bodies.Json(Bodies.Site()))).ReadObjectAsync();
            path = $"/api/sites/{site["id"]}/spectrographs";
            listPath = $"/api/spectrographs?siteId={site["id"]}";
            body = Bodies.Spectrograph();
        }
        var content = raw is not null
            ? Bodies.Raw(raw)
            : Bodies.Json(Mutate(body, field, value is null ? null : JsonNode.Parse(value), remove));

        var response = await client.PostAsync(path, content);

        await Bodies.AssertProblemNamingAsync(response, status, expectedField);
        var stored = await client.GetFromJsonAsync<JsonArray>(listPath);
        Assert.Empty(stored!);
    }

    [Theory]
    [InlineData("/api/sites?status=ajar", "status")]
    [InlineData("/api/spectrographs?status=broken", "status")]
    [InlineData("/api/spectrographs?minResolvingPower=-5", "minResolvingPower")]
    public async Task BadQuery_IsProblemNamingTheParameter(string url, string field)
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        await Bodies.AssertProblemNamingAsync(await client.GetAsync(url), 400, field);
    }

    [Fact]
    public async Task WrongContentType_Is415Problem()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var response = await client.PostAsync("/api/sites", new StringContent("name=x", System.Text.Encoding.UTF8, "text/plain"));
        await Bodies.AssertProblemNamingAsync(response, 415, "Content-Type");
    }
}
