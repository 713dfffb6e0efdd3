using System.Net;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;

namespace Triage.Api.Tests.Roster;

/// <summary>
/// <c>If-Match</c> on a conditional write as RFC 9110 §13.1.1 defines it: <c>*</c>, or a comma-separated list of
/// entity tags (several field lines form one list, empty elements are ignored per §5.6.1.2) that holds when one tag
/// equals the current ETag by strong comparison (§8.8.3.2: a weak tag never matches; opaque tags compare character
/// by character). Each case replaces a site whose current ETag is <c>"2"</c> (created, then replaced once).
/// </summary>
[Collection(ApiCollection.Name)]
public sealed class IfMatchTests(TriageApiFactory api)
{
    [Theory]
    [InlineData(new[] { "\"2\"" }, 200)]                       // the current tag
    [InlineData(new[] { "\"1\", \"2\", \"3\"" }, 200)]         // a list that holds it
    [InlineData(new[] { "\"1\"", "\"2\"" }, 200)]              // two field lines, one list
    [InlineData(new[] { " , \"2\" ,, " }, 200)]                // empty list elements ignored
    [InlineData(new[] { "*" }, 200)]                           // any current representation
    [InlineData(new[] { "\"1\", \"3\"" }, 412)]                // a list without it
    [InlineData(new[] { "\"1\"" }, 412)]                       // a tag read earlier
    [InlineData(new[] { "W/\"2\"" }, 412)]                     // weak: never matches for If-Match
    [InlineData(new[] { "W/\"2\", \"7\"" }, 412)]              // weak current tag plus a stale strong one
    [InlineData(new[] { "\"02\"" }, 412)]                      // strong comparison is character by character
    [InlineData(new[] { "\"2 \"" }, 400)]                      // a space is not an entity-tag character
    [InlineData(new[] { "2" }, 400)]                           // unquoted
    [InlineData(new[] { "\"2" }, 400)]                         // unterminated
    [InlineData(new[] { "*, \"2\"" }, 400)]                    // * stands alone
    [InlineData(new[] { "\"1\" \"2\"" }, 400)]                 // list elements need a comma
    [InlineData(new[] { "\"2\", abc" }, 400)]                // every element must be an entity tag
    [InlineData(new string[0], 428)]                           // absent
    [InlineData(new[] { " " }, 428)]                           // empty
    public async Task ReplaceSite_FollowsIfMatch(string[] fieldLines, int expected)
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var created = await client.PostAsync("/api/sites", Bodies.Json(Bodies.Site()));
        Assert.Equal(HttpStatusCode.Created, created.StatusCode);
        var site = await created.ReadObjectAsync();
        var body = Bodies.Site(site["name"]!.GetValue<string>());
        var first = new HttpRequestMessage(HttpMethod.Put, $"/api/sites/{site["id"]}") { Content = Bodies.Json(body) };
        first.Headers.TryAddWithoutValidation("If-Match", "\"1\"");
        var replaced = await client.SendAsync(first);
        Assert.Equal("\"2\"", replaced.Headers.ETag?.Tag);

        body["seeingArcsec"] = 1.3;
        var put = new HttpRequestMessage(HttpMethod.Put, $"/api/sites/{site["id"]}") { Content = Bodies.Json(body) };
        if (fieldLines.Length > 0)
        {
            put.Headers.TryAddWithoutValidation("If-Match", fieldLines);
        }
        var answer = await client.SendAsync(put);

        Assert.True((int)answer.StatusCode == expected, $"If-Match [{string.Join(" | ", fieldLines)}]: {(int)answer.StatusCode} {await answer.Content.ReadAsStringAsync()}");
        var now = await (await client.GetAsync($"/api/sites/{site["id"]}")).ReadObjectAsync();
        if (expected == 200)
        {
            Assert.Equal(3, (int)now["version"]!);
            Assert.Equal(1.3, (double)now["seeingArcsec"]!);
        }
        else
        {
            Assert.Equal(2, (int)now["version"]!);
            await Bodies.AssertProblemNamingAsync(answer, expected, "If-Match");
        }
    }

    [Fact]
    public async Task DeleteSite_WithAWeakTagOfTheCurrentVersion_IsRefusedAndKeepsTheSite()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var created = await client.PostAsync("/api/sites", Bodies.Json(Bodies.Site()));
        var site = await created.ReadObjectAsync();
        var weak = new HttpRequestMessage(HttpMethod.Delete, $"/api/sites/{site["id"]}");
        weak.Headers.TryAddWithoutValidation("If-Match", "W/\"1\"");
        await Bodies.AssertProblemNamingAsync(await client.SendAsync(weak), 412, "If-Match");
        Assert.Equal(HttpStatusCode.OK, (await client.GetAsync($"/api/sites/{site["id"]}")).StatusCode);

        var strong = new HttpRequestMessage(HttpMethod.Delete, $"/api/sites/{site["id"]}");
        strong.Headers.TryAddWithoutValidation("If-Match", "\"5\", \"1\"");
        Assert.Equal(HttpStatusCode.NoContent, (await client.SendAsync(strong)).StatusCode);
        Assert.Equal(HttpStatusCode.NotFound, (await client.GetAsync($"/api/sites/{site["id"]}")).StatusCode);
    }
}
