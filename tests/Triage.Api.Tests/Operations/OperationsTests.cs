using System.Net;
using System.Text.Json.Nodes;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;
using Triage.Storage.Migrations;

namespace Triage.Api.Tests.Operations;

[Collection(ApiCollection.Name)]
public sealed class OperationsTests(TriageApiFactory api)
{
    [Fact]
    public async Task Health_LiveAndReady_AreHealthyOnAMigratedDatabase()
    {
        var client = api.CreateClient();
        Assert.Equal(HttpStatusCode.OK, (await client.GetAsync("/health/live")).StatusCode);
        var ready = await client.GetAsync("/health/ready");
        Assert.Equal(HttpStatusCode.OK, ready.StatusCode);
        Assert.Equal("Healthy", await ready.Content.ReadAsStringAsync());
    }

    [Fact]
    public async Task OpenApi_DocumentListsTheRosterEndpoints()
    {
        var doc = await (await api.CreateClient().GetAsync("/openapi/v1.json")).ReadObjectAsync();
        var paths = doc["paths"]!.AsObject().Select(p => p.Key).ToList();
        Assert.Contains("/api/sites", paths);
        Assert.Contains("/api/sites/{id}", paths);
        Assert.Contains("/api/spectrographs/{id}", paths);
        Assert.Contains("/api/keys", paths);
    }

    [Fact]
    public async Task OpenApi_BearerSchemeErrorAnswersAndExamples()
    {
        var doc = await (await api.CreateClient().GetAsync("/openapi/v1.json")).ReadObjectAsync();
        var scheme = doc["components"]!["securitySchemes"]!["bearer"]!;
        Assert.Equal("http", (string?)scheme["type"]);
        Assert.Equal("bearer", (string?)scheme["scheme"]);

        int operations = 0;
        foreach (var (path, item) in doc["paths"]!.AsObject())
        {
            foreach (var (method, node) in item!.AsObject().Where(m => m.Key is "get" or "post" or "put" or "delete" or "patch"))
            {
                operations++;
                var op = node!.AsObject();
                var codes = op["responses"]!.AsObject().Select(r => r.Key).ToHashSet();
                string where = $"{method.ToUpperInvariant()} {path}";
                Assert.True(codes.IsSupersetOf(["400", "429", "503"]), $"{where}: {string.Join(",", codes)}");
                if (op["security"] is JsonArray { Count: > 0 })
                    Assert.True(codes.IsSupersetOf(["401", "403"]), $"{where}: {string.Join(",", codes)}");
                if (path.Contains('{', StringComparison.Ordinal)) Assert.Contains("404", codes);
                if (method is "post" or "put" or "delete") Assert.Contains("409", codes);
                if (method is "put" or "delete") Assert.True(codes.IsSupersetOf(["412", "428"]), where);
                if (op["requestBody"] is not null) Assert.True(codes.IsSupersetOf(["413", "415"]), where);
                Assert.All(codes.Where(c => c[0] is '4' or '5'), c =>
                    Assert.NotNull(op["responses"]![c]!["content"]?["application/problem+json"]));
            }
        }
        Assert.True(operations >= 30, $"{operations} operations");
        var sites = doc["paths"]!["/api/sites"]!["post"]!;
        Assert.NotNull(sites["security"]);
        Assert.Equal("Test Knoll", (string?)sites["requestBody"]!["content"]!["application/json"]!["example"]!["name"]);
        var batch = doc["paths"]!["/api/candidates/batches"]!["post"]!["requestBody"]!["content"]!["application/json"]!["example"]!;
        Assert.Equal("r", (string?)batch["candidates"]![0]!["photometry"]![0]!["band"]);
        Assert.NotNull(doc["components"]!["schemas"]!["TriageProblem"]!["properties"]!["type"]);
    }

    [Fact]
    public async Task Problems_AlwaysCarryAType_And413SaysTheLimit()
    {
        var anonymous = api.CreateClient();
        var admin = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var big = new string('x', 20_000);
        var requests = new Func<Task<HttpResponseMessage>>[]
        {
            () => anonymous.GetAsync("/api/sites"), // 401
            () => admin.GetAsync($"/api/sites/{Guid.NewGuid()}"), // 404
            () => admin.PostAsync("/api/keys", Bodies.Raw($$"""{"name":"{{big}}","scopes":["broker"]}""")), // 413 (16 KiB limit)
            () => admin.PutAsync($"/api/sites/{Guid.NewGuid()}", Bodies.Json(Bodies.Site())), // 428 or 404
            () => admin.PostAsync("/api/sites", new StringContent("{}", System.Text.Encoding.UTF8, "text/plain")), // 415
            () => admin.PostAsync("/api/sites", Bodies.Raw("{\"name\": ")), // 400
        };
        var answers = new List<(HttpStatusCode Status, JsonObject Problem)>();
        foreach (var send in requests)
        {
            using var answer = await send();
            Assert.Equal("application/problem+json", answer.Content.Headers.ContentType?.MediaType);
            var problem = await answer.ReadObjectAsync();
            Assert.False(string.IsNullOrEmpty((string?)problem["type"]), $"{(int)answer.StatusCode}: {problem.ToJsonString()}");
            answers.Add((answer.StatusCode, problem));
        }
        Assert.Equal(HttpStatusCode.RequestEntityTooLarge, answers[2].Status);
        var tooLarge = answers[2].Problem;
        Assert.True(tooLarge["limitBytes"] is not null, tooLarge.ToJsonString());
        Assert.Equal(16 * 1024, (long)tooLarge["limitBytes"]!);
        Assert.Contains("16,384 bytes", (string?)tooLarge["detail"], StringComparison.Ordinal);
        Assert.Equal("https://www.rfc-editor.org/rfc/rfc9110#section-15.5.14", (string?)tooLarge["type"]);
    }

    [Fact]
    public async Task ReferencePage_IsServed()
    {
        var page = await api.CreateClient().GetAsync("/reference.html");
        Assert.Equal(HttpStatusCode.OK, page.StatusCode);
        Assert.Contains("/openapi/v1.json", await page.Content.ReadAsStringAsync(), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Migrations_ApplyingAgain_ChangesNothing()
    {
        var report = await MigrationRunner.ApplyAsync(api.DataSource, TimeProvider.System);
        Assert.Empty(report.Applied);
        Assert.Equal(MigrationRunner.LatestVersion, report.CurrentVersion);
        Assert.True(MigrationRunner.Embedded.Count >= 1);
        Assert.Equal(MigrationRunner.Embedded.Select(m => m.Version).Order(), MigrationRunner.Embedded.Select(m => m.Version));
    }
}

/// <summary>A host with a tiny per-key budget, to see the limiter answer.</summary>
public sealed class TightLimitFactory : TriageApiFactory
{
    protected override IReadOnlyDictionary<string, string?> Settings => new Dictionary<string, string?>
    {
        ["Triage:RateLimit:PermitsPerSecond"] = "1",
        ["Triage:RateLimit:Burst"] = "3",
    };
}

public sealed class RateLimitTests(TightLimitFactory api) : IClassFixture<TightLimitFactory>
{
    [Fact]
    public async Task Burst_BeyondTheBucket_Gets429Problem()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        var answers = new List<HttpResponseMessage>();
        for (var i = 0; i < 8; i++)
        {
            answers.Add(await client.GetAsync("/api/sites?name=none"));
        }
        Assert.Contains(answers, a => (int)a.StatusCode == 200);
        var refused = answers.FirstOrDefault(a => (int)a.StatusCode == 429);
        Assert.NotNull(refused);
        Assert.Equal("application/problem+json", refused.Content.Headers.ContentType?.MediaType);
        var problem = await refused.ReadObjectAsync();
        Assert.Equal(429, (int)problem["status"]!);
        Assert.Equal("https://www.rfc-editor.org/rfc/rfc6585#section-4", (string?)problem["type"]);
        // Another key has its own bucket.
        var other = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        Assert.Equal(200, (int)(await other.GetAsync("/api/sites?name=none")).StatusCode);
    }
}
