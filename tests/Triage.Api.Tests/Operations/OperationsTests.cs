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
        Assert.Equal(429, (int)(await refused.ReadObjectAsync())["status"]!);
        // Another key has its own bucket.
        var other = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        Assert.Equal(200, (int)(await other.GetAsync("/api/sites?name=none")).StatusCode);
    }
}
