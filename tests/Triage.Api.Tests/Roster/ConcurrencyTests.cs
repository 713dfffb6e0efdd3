using System.Net;
using System.Net.Http.Headers;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;

namespace Triage.Api.Tests.Roster;

[Collection(ApiCollection.Name)]
public sealed class ConcurrencyTests(TriageApiFactory api)
{
    [Fact]
    public async Task TwoUpdates_SameETag_OneSucceedsOneIs412()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var created = await client.PostAsync("/api/sites", Bodies.Json(Bodies.Site()));
        var site = await created.ReadObjectAsync();
        var etag = created.Headers.ETag!.Tag;

        HttpRequestMessage Update(double seeing)
        {
            var body = Bodies.Site((string)site["name"]!);
            body["seeingArcsec"] = seeing;
            var put = new HttpRequestMessage(HttpMethod.Put, $"/api/sites/{site["id"]}") { Content = Bodies.Json(body) };
            put.Headers.IfMatch.Add(new EntityTagHeaderValue(etag));
            return put;
        }

        var answers = await Task.WhenAll(client.SendAsync(Update(1.1)), client.SendAsync(Update(1.3)));
        var codes = answers.Select(a => a.StatusCode).OrderBy(c => c).ToArray();
        Assert.Equal([HttpStatusCode.OK, HttpStatusCode.PreconditionFailed], codes);
        var loser = answers.Single(a => a.StatusCode == HttpStatusCode.PreconditionFailed);
        await Bodies.AssertProblemNamingAsync(loser, 412, "If-Match");

        var winner = await answers.Single(a => a.StatusCode == HttpStatusCode.OK).ReadObjectAsync();
        var stored = await (await client.GetAsync($"/api/sites/{site["id"]}")).ReadObjectAsync();
        Assert.Equal((double)winner["seeingArcsec"]!, (double)stored["seeingArcsec"]!);
        Assert.Equal(2, (int)stored["version"]!);
    }
}
