using System.Text.Json.Nodes;
using Dapper;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;

namespace Triage.Api.Tests.Candidates;

[Collection(ApiCollection.Name)]
public sealed class CandidateValidationTests(TriageApiFactory api)
{
    private static Action<JsonObject> Set(string field, JsonNode? value) => c => c[field] = value;

    private static Action<JsonObject> SetPoint(int index, string field, JsonNode? value) => c => c["photometry"]![index]![field] = value;

    /// <summary>Each spoils candidate [1] of a two-candidate batch; the answer must name the field.</summary>
    public static TheoryData<string, Action<JsonObject>> Spoilers => new()
    {
        { "candidates[1].id", c => c.Remove("id") },
        { "candidates[1].id", Set("id", "with space") },
        { "candidates[1].id", Set("id", new string('x', 80)) },
        { "candidates[1].id", Set("id", 12) },
        { "candidates[1].raDeg", c => c.Remove("raDeg") },
        { "candidates[1].raDeg", Set("raDeg", 360) },
        { "candidates[1].raDeg", Set("raDeg", -1) },
        { "candidates[1].raDeg", Set("raDeg", "12.5") },
        { "candidates[1].raDeg", Set("raDeg", JsonNode.Parse("1e309")) },
        { "candidates[1].decDeg", Set("decDeg", 91) },
        { "candidates[1].decDeg", Set("decDeg", true) },
        { "candidates[1].discoveredUtc", c => c.Remove("discoveredUtc") },
        { "candidates[1].discoveredUtc", Set("discoveredUtc", "last tuesday") },
        { "candidates[1].discoveredUtc", Set("discoveredUtc", "2099-01-01T00:00:00Z") },
        { "candidates[1].discoveredUtc", Set("discoveredUtc", "1980-01-01T00:00:00Z") },
        { "candidates[1].redshift", Set("redshift", -0.2) },
        { "candidates[1].redshift", Set("redshift", 7) },
        { "candidates[1].redshiftError", Set("redshiftError", 0.01) },
        { "candidates[1].scienceWeight", Set("scienceWeight", 0) },
        { "candidates[1].scienceWeight", Set("scienceWeight", 1000) },
        { "candidates[1].notes", Set("notes", new string('n', 2500)) },
        { "candidates[1].subtypeProbabilities.Ia-weird", Set("subtypeProbabilities", new JsonObject { ["Ia"] = 0.5, ["Ia-weird"] = 0.5 }) },
        { "candidates[1].subtypeProbabilities.II", Set("subtypeProbabilities", new JsonObject { ["Ia"] = 1.2, ["II"] = -0.2 }) },
        { "candidates[1].subtypeProbabilities", Set("subtypeProbabilities", new JsonObject { ["Ia"] = 0.4, ["II"] = 0.3 }) },
        { "candidates[1].subtypeProbabilities", Set("subtypeProbabilities", new JsonObject()) },
        { "candidates[1].subtypeProbabilities.Ia", Set("subtypeProbabilities", new JsonObject { ["Ia"] = "most" }) },
        { "candidates[1].brokerState.peakBand", Set("brokerState", new JsonObject { ["peakBand"] = "W9" }) },
        { "candidates[1].brokerState.peakSigmaDays", Set("brokerState", new JsonObject { ["peakSigmaDays"] = -3 }) },
        { "candidates[1].photometry", c => c.Remove("photometry") },
        { "candidates[1].photometry", Set("photometry", new JsonArray()) },
        { "candidates[1].photometry", Set("photometry", new JsonArray(new JsonObject { ["mjd"] = 61370.0, ["band"] = "r", ["magAb"] = 21.0, ["upperLimit"] = true })) },
        { "candidates[1].photometry[2].band", SetPoint(2, "band", "Q") },
        { "candidates[1].photometry[2].band", c => c["photometry"]![2]!.AsObject().Remove("band") },
        { "candidates[1].photometry[3].magAb", SetPoint(3, "magAb", 99) },
        { "candidates[1].photometry[3].magAbError", SetPoint(3, "magAbError", 0) },
        { "candidates[1].photometry[3].magAbError", c => c["photometry"]![3]!.AsObject().Remove("magAbError") },
        { "candidates[1].photometry[4].timeUtc", c => c["photometry"]![4]!.AsObject().Remove("timeUtc") },
        { "candidates[1].photometry[4].mjd", SetPoint(4, "mjd", 61300.0) },
        { "candidates[1].photometry[5].mjd", c => { c["photometry"]![5]!.AsObject().Remove("timeUtc"); c["photometry"]![5]!["mjd"] = 12.0; } },
        { "candidates[1].photometry[5].fluxMicroJy", SetPoint(5, "fluxMicroJy", 40.0) },
        { "candidates[1].photometry[6].upperLimit", SetPoint(6, "upperLimit", "yes") },
        { "candidates[1].photometry[6].magAb", SetPoint(6, "magAb", "bright") },
        { "candidates[1].photometry[7]", c => c["photometry"]![7] = c["photometry"]![6]!.DeepClone() },
        { "candidates[1].photometry[8]", c => c["photometry"]![8] = null },
        { "candidates[1].photometry[1].colour", SetPoint(1, "colour", "blue") },
        { "candidates[1].ra", Set("ra", 10) },
        { "candidates[1].unknown", c => { foreach (var k in c.Select(kv => kv.Key).ToList()) { c.Remove(k); } c["unknown"] = 1; } },
    };

    [Theory]
    [MemberData(nameof(Spoilers))]
    public async Task PostBatch_OneBadField_400NamingItAndNothingStored(string field, Action<JsonObject> spoil)
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var good = CandidateBodies.Candidate();
        var bad = CandidateBodies.Candidate();
        spoil(bad);

        var response = await client.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(good, bad)));

        await Bodies.AssertProblemNamingAsync(response, 400, field);
        await using var conn = await api.DataSource.OpenConnectionAsync();
        Assert.Equal(0, await conn.ExecuteScalarAsync<int>("SELECT count(*) FROM candidates WHERE broker_candidate_id = @id", new { id = (string)good["id"]! }));
    }

    [Theory]
    [InlineData("""{"candidates":[{"id":"x","raDeg":NaN}]}""", "candidates[0]")]
    [InlineData("""{"candidates":[{"id":"x","raDeg":Infinity}]}""", "candidates[0]")]
    [InlineData("""{"candidates":[""", "candidates")]
    [InlineData("""[]""", "$")]
    [InlineData("""{"candidates":null}""", "candidates")]
    [InlineData("""{"candidates":[]}""", "candidates")]
    [InlineData("""{"candidates":{"id":"x"}}""", "candidates")]
    [InlineData("""{"items":[]}""", "items")]
    public async Task PostBatch_MalformedJson_400NamingPath(string body, string fieldPrefix)
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Broker));

        var response = await client.PostAsync("/api/candidates/batches", Bodies.Raw(body));

        var text = await response.Content.ReadAsStringAsync();
        Assert.Equal(400, (int)response.StatusCode);
        Assert.Equal("application/problem+json", response.Content.Headers.ContentType?.MediaType);
        var errors = JsonNode.Parse(text)!["errors"]!.AsObject();
        Assert.Contains(errors, kv => kv.Key.StartsWith(fieldPrefix, StringComparison.Ordinal));
    }

    [Fact]
    public async Task PostBatch_DuplicateIdsInBatch_400NamingSecond()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var a = CandidateBodies.Candidate();
        var b = CandidateBodies.Candidate((string)a["id"]!);

        var response = await client.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(a, CandidateBodies.Candidate(), b)));

        await Bodies.AssertProblemNamingAsync(response, 400, "candidates[2].id");
    }

    [Fact]
    public async Task PostBatch_OversizeBatch_400NamingCandidates()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var many = Enumerable.Range(0, 5001).Select(_ => CandidateBodies.Candidate(points: 1)).ToArray();

        var response = await client.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(many)));

        await Bodies.AssertProblemNamingAsync(response, 400, "candidates");
    }

    [Fact]
    public async Task PostBatch_WrongContentType_415()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Broker));

        var response = await client.PostAsync("/api/candidates/batches", new StringContent("candidates", System.Text.Encoding.UTF8, "text/plain"));

        await Bodies.AssertProblemNamingAsync(response, 415, "Content-Type");
    }
}
