using System.Net.Http.Headers;
using System.Text.Json.Nodes;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;

namespace Triage.Api.Tests.Access;

/// <summary>Every mutating endpoint × {no key, wrong scope, another observatory's key, the right key}.</summary>
[Collection(ApiCollection.Name)]
public sealed class AuthorizationMatrixTests(TriageApiFactory api)
{
    public enum Who { NoKey, WrongScope, OtherObservatory, RightKey }

    public static TheoryData<string, Who, int> Matrix()
    {
        var data = new TheoryData<string, Who, int>();
        string[] endpoints =
        [
            "POST /api/sites", "PUT /api/sites/{site}", "DELETE /api/sites/{site}",
            "POST /api/sites/{site}/spectrographs", "PUT /api/spectrographs/{spec}", "DELETE /api/spectrographs/{spec}",
            "POST /api/keys", "DELETE /api/keys/{key}",
        ];
        foreach (var e in endpoints)
        {
            data.Add(e, Who.NoKey, 401);
            data.Add(e, Who.WrongScope, 403);
            data.Add(e, Who.OtherObservatory, 403);
            data.Add(e, Who.RightKey, e.StartsWith("POST", StringComparison.Ordinal) ? 201 : e.StartsWith("PUT", StringComparison.Ordinal) ? 200 : 204);
        }
        return data;
    }

    [Theory]
    [MemberData(nameof(Matrix))]
    public async Task MutatingEndpoint_AnswersByCaller(string endpoint, Who who, int expected)
    {
        // Arrange: an observatory with a site, an instrument on it, and a spare key to revoke.
        var owner = Unique.Name("owner");
        var ownerKey = await api.KeyAsync(Scope.Observatory, owner);
        var ownerClient = api.ClientWith(ownerKey);
        var site = await (await ownerClient.PostAsync("/api/sites", Bodies.Json(Bodies.Site()))).ReadObjectAsync();
        var siteId = (string)site["id"]!;
        var spec = await (await ownerClient.PostAsync($"/api/sites/{siteId}/spectrographs", Bodies.Json(Bodies.Spectrograph()))).ReadObjectAsync();
        var specId = (string)spec["id"]!;
        var admin = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var spareAnswer = await admin.PostAsync("/api/keys", Bodies.Json(new JsonObject { ["name"] = "spare", ["scopes"] = new JsonArray("broker") }));
        Assert.True(spareAnswer.IsSuccessStatusCode, await spareAnswer.Content.ReadAsStringAsync());
        var spare = await spareAnswer.ReadObjectAsync();
        var spareId = (string)spare["key"]!["id"]!;

        var isKeyEndpoint = endpoint.Contains("/api/keys", StringComparison.Ordinal);
        string? callerKey = who switch
        {
            Who.NoKey => null,
            Who.WrongScope => await api.KeyAsync(Scope.Broker),
            Who.OtherObservatory => await api.KeyAsync(Scope.Observatory, Unique.Name("rival")),
            _ => isKeyEndpoint ? await api.KeyAsync(Scope.Admin) : ownerKey,
        };
        var parts = endpoint.Split(' ');
        var path = parts[1].Replace("{site}", siteId).Replace("{spec}", specId).Replace("{key}", spareId);
        var request = new HttpRequestMessage(new HttpMethod(parts[0]), path);
        if (parts[0] == "PUT" && path.StartsWith("/api/spectrographs", StringComparison.Ordinal))
        {
            request.Content = Bodies.Json(Bodies.Spectrograph());
        }
        else if (parts[0] == "PUT")
        {
            request.Content = Bodies.Json(Bodies.Site());
        }
        else if (path.EndsWith("/spectrographs", StringComparison.Ordinal))
        {
            request.Content = Bodies.Json(Bodies.Spectrograph());
        }
        else if (path == "/api/sites")
        {
            // Claims the owner's observatory: a rival observatory key may not.
            request.Content = Bodies.Json(Bodies.Site(observatory: owner));
        }
        else if (path == "/api/keys")
        {
            request.Content = Bodies.Json(new JsonObject { ["name"] = "new", ["scopes"] = new JsonArray("scheduler") });
        }
        if (parts[0] is "PUT" or "DELETE" && !isKeyEndpoint)
        {
            request.Headers.IfMatch.Add(new EntityTagHeaderValue("\"1\""));
        }
        if (path.StartsWith("/api/sites/", StringComparison.Ordinal) && parts[0] == "DELETE")
        {
            // A site with instruments cannot be deleted: clear it first so only access decides.
            var clear = new HttpRequestMessage(HttpMethod.Delete, $"/api/spectrographs/{specId}");
            clear.Headers.IfMatch.Add(new EntityTagHeaderValue("\"1\""));
            Assert.Equal(204, (int)(await ownerClient.SendAsync(clear)).StatusCode);
        }

        var response = await api.ClientWith(callerKey).SendAsync(request);

        var text = await response.Content.ReadAsStringAsync();
        Assert.True(expected == (int)response.StatusCode, $"{endpoint} as {who}: expected {expected}, got {(int)response.StatusCode} {text}");
        if (expected >= 400)
        {
            Assert.Equal("application/problem+json", response.Content.Headers.ContentType?.MediaType);
        }
    }

    [Fact]
    public async Task RevokedKey_IsRefusedWith401()
    {
        var admin = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var issued = await (await admin.PostAsync("/api/keys", Bodies.Json(new JsonObject { ["name"] = "short-lived", ["scopes"] = new JsonArray("scheduler") }))).ReadObjectAsync();
        var secret = (string)issued["secret"]!;
        var holder = api.ClientWith(secret);
        Assert.Equal(200, (int)(await holder.GetAsync("/api/sites")).StatusCode);

        Assert.Equal(204, (int)(await admin.DeleteAsync($"/api/keys/{issued["key"]!["id"]}")).StatusCode);

        await Bodies.AssertProblemNamingAsync(await holder.GetAsync("/api/sites"), 401, "Authorization");
    }

    [Fact]
    public async Task ForgedKey_WithKnownPublicPart_IsRefused()
    {
        var real = await api.KeyAsync(Scope.Admin);
        var forged = real[..^4] + (real.EndsWith("AAAA", StringComparison.Ordinal) ? "BBBB" : "AAAA");
        await Bodies.AssertProblemNamingAsync(await api.ClientWith(forged).GetAsync("/api/sites"), 401, "Authorization");
    }

    [Fact]
    public async Task KeyList_NeverContainsSecrets()
    {
        var secret = await api.KeyAsync(Scope.Broker);
        var admin = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var text = await (await admin.GetAsync("/api/keys")).Content.ReadAsStringAsync();
        Assert.DoesNotContain(secret, text, StringComparison.Ordinal);
        Assert.Contains(secret.Split('_')[1], text, StringComparison.Ordinal); // the public part is listed
    }
}
