using System.Net.Http.Json;
using System.Text;
using System.Text.Json;
using System.Text.Json.Nodes;

namespace Triage.Api.Tests.Infrastructure;

/// <summary>Request bodies of a valid invented site and spectrograph, and JSON helpers.</summary>
public static class Bodies
{
    public static JsonObject Site(string? name = null, string? observatory = null)
    {
        var o = new JsonObject
        {
            ["name"] = name ?? Unique.Name("site"),
            ["latitudeDeg"] = -26.4, // empty ground (a salt flat), over 1° from any observatory
            ["longitudeDeg"] = -69.1,
            ["elevationM"] = 2600,
            ["minAltitudeDeg"] = 25,
            ["sunAvoidanceDeg"] = 45,
            ["moonAvoidanceDeg"] = 20,
            ["seeingArcsec"] = 0.9,
            ["darkSkyMagArcsec2"] = 21.7,
            ["skyReferenceWavelengthAngstrom"] = 6000,
            ["extinctionMagPerAirmass"] = 0.12,
            ["status"] = "open",
        };
        if (observatory is not null)
        {
            o["observatory"] = observatory;
        }
        return o;
    }

    public static JsonObject Spectrograph(string? name = null) => new()
    {
        ["name"] = name ?? Unique.Name("spec"),
        ["resolvingPower"] = 600,
        ["referenceWavelengthAngstrom"] = 6000,
        ["minWavelengthAngstrom"] = 3800,
        ["maxWavelengthAngstrom"] = 9200,
        ["apertureM"] = 2.0,
        ["centralObstruction"] = 0.12,
        ["throughput"] = 0.22,
        ["readNoiseElectrons"] = 4,
        ["darkCurrentElectronsPerSecond"] = 0.002,
        ["pixelsPerResolutionElement"] = 2.5,
        ["spatialPixelScaleArcsec"] = 0.4,
        ["slitWidthArcsec"] = 1.2,
        ["overheadSeconds"] = 300,
        ["maxExposureSeconds"] = 1800,
        ["maxAirmass"] = 2.2,
        ["costPerHour"] = 120,
        ["nightlyBudgetHours"] = 8,
        ["status"] = "available",
    };

    public static StringContent Json(JsonNode node) => Raw(node.ToJsonString());

    public static StringContent Raw(string text) => new(text, Encoding.UTF8, "application/json");

    public static async Task<JsonObject> ReadObjectAsync(this HttpResponseMessage response) =>
        (await response.Content.ReadFromJsonAsync<JsonObject>())!;

    public static async Task<JsonArray> ReadArrayAsync(this HttpResponseMessage response) =>
        (await response.Content.ReadFromJsonAsync<JsonArray>())!;

    /// <summary>Asserts a problem+json answer with <paramref name="status"/> that names <paramref name="field"/>.</summary>
    public static async Task AssertProblemNamingAsync(HttpResponseMessage response, int status, string field)
    {
        var text = await response.Content.ReadAsStringAsync();
        Assert.True((int)response.StatusCode == status, $"expected {status}, got {(int)response.StatusCode}: {text}");
        Assert.Equal("application/problem+json", response.Content.Headers.ContentType?.MediaType);
        using var doc = JsonDocument.Parse(text);
        var named = new List<string>();
        if (doc.RootElement.TryGetProperty("errors", out var errors))
        {
            named.AddRange(errors.EnumerateObject().Select(p => p.Name));
        }
        if (doc.RootElement.TryGetProperty("field", out var f))
        {
            named.Add(f.GetString()!);
        }
        Assert.True(named.Contains(field, StringComparer.Ordinal), $"problem should name '{field}' but named [{string.Join(", ", named)}]: {text}");
    }
}
