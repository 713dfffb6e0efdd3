using System.Net;
using System.Text;
using System.Text.Json;
using System.Text.Json.Nodes;
using Triage.Api.Tests.Candidates;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;

namespace Triage.Api.Tests.Operations;

/// <summary>
/// Input hygiene: control characters, bidi overrides in names, duplicate properties, extreme
/// dates and numbers are 400 problems naming the field (never 500); query-parameter errors say
/// so; no .NET type names in messages; 414/431 are problems; If-Match: * works; security
/// headers; the OpenAPI server is never the caller's Host header.
/// </summary>
[Collection(ApiCollection.Name)]
public sealed class InputHygieneTests(TriageApiFactory api)
{
    private static readonly string[] TypeNameMarks = ["System.", "Triage.", "Nullable", "Int32", "Double", "DateTimeOffset", "DateOnly", "Guid"];

    private static async Task<string> AssertProblemAsync(HttpResponseMessage answer, int status, string field)
    {
        await Bodies.AssertProblemNamingAsync(answer, status, field);
        var text = await answer.Content.ReadAsStringAsync();
        foreach (var mark in TypeNameMarks)
        {
            Assert.False(text.Contains(mark, StringComparison.Ordinal), $"a .NET type name ('{mark}') leaks: {text}");
        }
        return text;
    }

    [Theory]
    [InlineData("name", "Nul\u0000site")]
    [InlineData("name", "Bell\u0007site")]
    [InlineData("name", "Evil\u202Eetis")]
    [InlineData("name", "Iso\u2066late")]
    [InlineData("observatory", "Obs\u0000")]
    public async Task ControlAndBidiCharacters_InSiteText_Are400NamingTheField(string field, string value)
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var body = Bodies.Site();
        body[field] = field == "name" ? value + Guid.NewGuid().ToString("N")[..6] : value;
        await AssertProblemAsync(await client.PostAsync("/api/sites", Bodies.Json(body)), 400, field);
    }

    [Fact]
    public async Task Nul_InFreeTextAndBatchStrings_Is400_TabAndNewlineAreFine()
    {
        var scheduler = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        var broker = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var candidate = CandidateBodies.Candidate();
        candidate["notes"] = "bright\u0000host";
        var answer = await broker.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(candidate)));
        await AssertProblemAsync(answer, 400, "candidates[0].notes");

        candidate["notes"] = "bright host\tnear\nthe core";
        var stored = await broker.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(candidate)));
        Assert.Equal(HttpStatusCode.OK, stored.StatusCode);

        var id = (await (await scheduler.GetAsync("/api/candidates?limit=1")).ReadObjectAsync())["items"]!.AsArray()[0]!["id"]!.GetValue<string>();
        var transition = await scheduler.PostAsync($"/api/candidates/{id}/transitions", Bodies.Raw("""{"to":"stale","reason":"gone\u0000"}"""));
        await AssertProblemAsync(transition, 400, "reason");
    }

    [Fact]
    public async Task DuplicateJsonProperty_Is400NamingIt()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var json = Bodies.Site().ToJsonString();
        var twice = json.Insert(1, "\"name\":\"first\",");
        var text = await AssertProblemAsync(await client.PostAsync("/api/sites", Bodies.Raw(twice)), 400, "name");
        Assert.Contains("more than once", text, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("/api/candidates?at=0001-01-01T00:00:00Z", "at")]
    [InlineData("/api/candidates?at=9999-12-31T00:00:00Z", "at")]
    [InlineData("/api/candidates?updatedSince=0001-01-01T00:00:00Z", "updatedSince")]
    [InlineData("/api/plans/0001-01-01", "night")]
    [InlineData("/api/plans/9999-12-31/versions", "night")]
    [InlineData("/api/sites?name=a%00b", "name")]
    public async Task ExtremeOrControlQueryValues_Are400NamingTheParameter(string url, string field)
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        await AssertProblemAsync(await client.GetAsync(url), 400, field);
    }

    [Fact]
    public async Task SubnormalCoordinate_InACone_IsNot500()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        var answer = await client.GetAsync("/api/candidates?raDeg=1e-320&decDeg=1e-320&radiusDeg=1");
        Assert.True((int)answer.StatusCode < 500, await answer.Content.ReadAsStringAsync());
        var broker = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var candidate = CandidateBodies.Candidate();
        candidate["raDeg"] = JsonNode.Parse("1e-320");
        candidate["decDeg"] = JsonNode.Parse("-1e-320");
        var posted = await broker.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(candidate)));
        Assert.Equal(HttpStatusCode.OK, posted.StatusCode);
        // The stored row must not poison cone searches that reach it (PostgreSQL refuses underflowing products).
        var cone = await client.GetAsync("/api/candidates?raDeg=0&decDeg=0&radiusDeg=0.5&limit=1000");
        Assert.True(cone.StatusCode == HttpStatusCode.OK, await cone.Content.ReadAsStringAsync());
        Assert.Contains(candidate["id"]!.GetValue<string>(), await cone.Content.ReadAsStringAsync(), StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("""{"night":"0001-01-01"}""", "night")]
    [InlineData("""{"night":"9999-12-31"}""", "night")]
    [InlineData("""{"night":"2026-12-03","fromUtc":"9999-01-01T00:00:00Z"}""", "fromUtc")]
    [InlineData("""{"night":"2026-12-03","fromUtc":"2026-12-10T00:00:00Z"}""", "fromUtc")]
    public async Task PlanRequest_OutsideTheSkyModelOrTheNight_Is400(string body, string field)
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        await AssertProblemAsync(await client.PostAsync("/api/plans", Bodies.Raw(body)), 400, field);
    }

    [Theory]
    [InlineData("/api/jobs?limit=many", "limit")]
    [InlineData("/api/candidates?raDeg=east&decDeg=1&radiusDeg=1", "raDeg")]
    [InlineData("/api/candidates?at=yesterday", "at")]
    public async Task BadQueryParameter_IsNamedAsAQueryParameter_WithoutTypeNames(string url, string field)
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        var text = await AssertProblemAsync(await client.GetAsync(url), 400, field);
        Assert.Contains("query parameter", text, StringComparison.Ordinal);
        Assert.DoesNotContain("request body", text, StringComparison.OrdinalIgnoreCase);
    }

    [Fact]
    public async Task WrongJsonType_MessageCarriesNoTypeName()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var body = Bodies.Site();
        body["latitudeDeg"] = "north";
        await AssertProblemAsync(await client.PostAsync("/api/sites", Bodies.Json(body)), 400, "latitudeDeg");
        var broker = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var candidate = CandidateBodies.Candidate();
        candidate["raDeg"] = "east";
        await AssertProblemAsync(await broker.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(candidate))), 400, "candidates[0].raDeg");
    }

    [Fact]
    public async Task LongUrlAndHugeHeaders_Are414And431Problems()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        await AssertProblemAsync(await client.GetAsync("/api/sites?name=" + new string('a', 9000)), 414, "url");
        var big = new HttpRequestMessage(HttpMethod.Get, "/api/sites");
        big.Headers.Add("X-Padding", new string('b', 40_000));
        await AssertProblemAsync(await client.SendAsync(big), 431, "headers");
    }

    [Fact]
    public async Task IfMatchStar_ReplacesAnExistingSite_AndIsRefusedForAMissingOne()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var created = await client.PostAsync("/api/sites", Bodies.Json(Bodies.Site()));
        Assert.Equal(HttpStatusCode.Created, created.StatusCode);
        var site = await created.ReadObjectAsync();
        var body = Bodies.Site(site["name"]!.GetValue<string>());
        body["seeingArcsec"] = 1.1;

        var put = new HttpRequestMessage(HttpMethod.Put, $"/api/sites/{site["id"]}") { Content = Bodies.Json(body) };
        put.Headers.TryAddWithoutValidation("If-Match", "*");
        var replaced = await client.SendAsync(put);
        Assert.True(replaced.StatusCode == HttpStatusCode.OK, await replaced.Content.ReadAsStringAsync());

        var missing = new HttpRequestMessage(HttpMethod.Put, $"/api/sites/{Guid.NewGuid()}") { Content = Bodies.Json(Bodies.Site()) };
        missing.Headers.TryAddWithoutValidation("If-Match", "*");
        var answer = await client.SendAsync(missing);
        Assert.Contains((int)answer.StatusCode, new[] { 404, 412 });
    }

    [Fact]
    public async Task CsvImportWithWrongType_IsToldToSendCsv()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var answer = await client.PostAsync("/api/calibrations/imports", new StringContent("r,snr\n", Encoding.UTF8, "text/plain"));
        var text = await AssertProblemAsync(answer, 415, "Content-Type");
        Assert.Contains("text/csv", text, StringComparison.Ordinal);
        Assert.DoesNotContain("application/json", text.Replace("application/problem+json", "", StringComparison.Ordinal), StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("/")]
    [InlineData("/api/sites")]
    [InlineData("/health/live")]
    public async Task EveryAnswer_CarriesSecurityHeaders(string url)
    {
        var answer = await api.CreateClient().GetAsync(url);
        Assert.Equal("nosniff", answer.Headers.GetValues("X-Content-Type-Options").Single());
        var csp = answer.Headers.GetValues("Content-Security-Policy").Single();
        Assert.Contains("frame-ancestors 'none'", csp, StringComparison.Ordinal);
        Assert.Contains("script-src 'self'", csp, StringComparison.Ordinal);
        Assert.DoesNotContain("unsafe-inline", csp, StringComparison.Ordinal);
    }

    [Fact]
    public async Task OpenApiDocument_NeverEchoesTheHostHeader()
    {
        var request = new HttpRequestMessage(HttpMethod.Get, "/openapi/v1.json");
        request.Headers.Host = "attacker.example";
        var text = await (await api.CreateClient().SendAsync(request)).Content.ReadAsStringAsync();
        Assert.DoesNotContain("attacker.example", text, StringComparison.Ordinal);
        using var doc = JsonDocument.Parse(text);
        Assert.True(!doc.RootElement.TryGetProperty("servers", out var servers) || servers.GetArrayLength() == 0, text[..200]);
    }
}
