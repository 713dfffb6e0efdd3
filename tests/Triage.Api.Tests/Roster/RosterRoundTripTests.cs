using System.Net;
using System.Net.Http.Headers;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;

namespace Triage.Api.Tests.Roster;

[Collection(ApiCollection.Name)]
public sealed class RosterRoundTripTests(TriageApiFactory api)
{
    [Fact]
    public async Task Site_CreateReadUpdateDelete_RoundTripsThroughPostgres()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var body = Bodies.Site();

        var created = await client.PostAsync("/api/sites", Bodies.Json(body));
        Assert.Equal(HttpStatusCode.Created, created.StatusCode);
        var site = await created.ReadObjectAsync();
        var id = (string)site["id"]!;
        Assert.Equal((string)body["name"]!, (string)site["name"]!);
        Assert.Equal(-69.1, (double)site["longitudeDeg"]!);
        Assert.Equal(1, (int)site["version"]!);
        Assert.Equal($"/api/sites/{id}", created.Headers.Location!.OriginalString);

        var read = await client.GetAsync($"/api/sites/{id}");
        Assert.Equal(HttpStatusCode.OK, read.StatusCode);
        var etag = read.Headers.ETag!.Tag;
        Assert.Equal("\"1\"", etag);

        body["seeingArcsec"] = 1.4;
        body["status"] = "closed";
        var put = new HttpRequestMessage(HttpMethod.Put, $"/api/sites/{id}") { Content = Bodies.Json(body) };
        put.Headers.IfMatch.Add(new EntityTagHeaderValue(etag));
        var updated = await client.SendAsync(put);
        Assert.Equal(HttpStatusCode.OK, updated.StatusCode);
        var after = await updated.ReadObjectAsync();
        Assert.Equal(1.4, (double)after["seeingArcsec"]!);
        Assert.Equal("closed", (string)after["status"]!);
        Assert.Equal(2, (int)after["version"]!);

        var listed = await (await client.GetAsync($"/api/sites?status=closed&name={body["name"]}")).ReadArrayAsync();
        Assert.Single(listed);

        var del = new HttpRequestMessage(HttpMethod.Delete, $"/api/sites/{id}");
        del.Headers.IfMatch.Add(new EntityTagHeaderValue("\"2\""));
        Assert.Equal(HttpStatusCode.NoContent, (await client.SendAsync(del)).StatusCode);
        Assert.Equal(HttpStatusCode.NotFound, (await client.GetAsync($"/api/sites/{id}")).StatusCode);
    }

    [Fact]
    public async Task Spectrograph_CreateReadUpdateDelete_RoundTripsAndShowsInNetwork()
    {
        var observatory = Unique.Name("obs");
        var client = api.ClientWith(await api.KeyAsync(Scope.Observatory, observatory));
        var site = await (await client.PostAsync("/api/sites", Bodies.Json(Bodies.Site()))).ReadObjectAsync();
        Assert.Equal(observatory, (string)site["observatory"]!);
        var siteId = (string)site["id"]!;

        var body = Bodies.Spectrograph();
        var created = await client.PostAsync($"/api/sites/{siteId}/spectrographs", Bodies.Json(body));
        Assert.Equal(HttpStatusCode.Created, created.StatusCode);
        var sp = await created.ReadObjectAsync();
        var id = (string)sp["id"]!;
        Assert.Equal(600, (double)sp["resolvingPower"]!);
        Assert.Equal(siteId, (string)sp["siteId"]!);

        body["resolvingPower"] = 650;
        var put = new HttpRequestMessage(HttpMethod.Put, $"/api/spectrographs/{id}") { Content = Bodies.Json(body) };
        put.Headers.IfMatch.Add(new EntityTagHeaderValue(created.Headers.ETag!.Tag));
        var updated = await (await client.SendAsync(put)).ReadObjectAsync();
        Assert.Equal(650, (double)updated["resolvingPower"]!);

        var bySite = await (await client.GetAsync($"/api/spectrographs?siteId={siteId}&minResolvingPower=640")).ReadArrayAsync();
        Assert.Equal(id, (string)bySite.Single()!["id"]!);

        var network = await (await client.GetAsync("/api/network")).ReadArrayAsync();
        var entry = network.Single(n => (string)n!["site"]!["id"]! == siteId)!;
        Assert.Equal(id, (string)entry["spectrographs"]!.AsArray().Single()!["id"]!);

        // A site with instruments cannot be deleted.
        var delSite = new HttpRequestMessage(HttpMethod.Delete, $"/api/sites/{siteId}");
        delSite.Headers.IfMatch.Add(new EntityTagHeaderValue("\"1\""));
        await Bodies.AssertProblemNamingAsync(await client.SendAsync(delSite), 409, "id");

        var del = new HttpRequestMessage(HttpMethod.Delete, $"/api/spectrographs/{id}");
        del.Headers.IfMatch.Add(new EntityTagHeaderValue("\"2\""));
        Assert.Equal(HttpStatusCode.NoContent, (await client.SendAsync(del)).StatusCode);
        Assert.Equal(HttpStatusCode.NotFound, (await client.GetAsync($"/api/spectrographs/{id}")).StatusCode);
    }

    [Fact]
    public async Task Site_DuplicateName_IsConflictAndNothingWritten()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var body = Bodies.Site();
        Assert.Equal(HttpStatusCode.Created, (await client.PostAsync("/api/sites", Bodies.Json(body))).StatusCode);
        body["latitudeDeg"] = 10;
        await Bodies.AssertProblemNamingAsync(await client.PostAsync("/api/sites", Bodies.Json(body)), 409, "name");
        var listed = await (await client.GetAsync($"/api/sites?name={body["name"]}")).ReadArrayAsync();
        Assert.Equal(-26.4, (double)listed.Single()!["latitudeDeg"]!);
    }

    [Fact]
    public async Task Put_WithoutIfMatch_IsPreconditionRequired()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var site = await (await client.PostAsync("/api/sites", Bodies.Json(Bodies.Site()))).ReadObjectAsync();
        var put = await client.PutAsync($"/api/sites/{site["id"]}", Bodies.Json(Bodies.Site()));
        await Bodies.AssertProblemNamingAsync(put, 428, "If-Match");
    }
}
