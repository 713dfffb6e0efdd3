using System.Net;
using System.Text.Json.Nodes;
using Dapper;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;

namespace Triage.Api.Tests.Candidates;

[Collection(ApiCollection.Name)]
public sealed class CandidateIntakeTests(TriageApiFactory api)
{
    private async Task<(int Candidates, int Points)> CountAsync(IEnumerable<string> ids)
    {
        await using var conn = await api.DataSource.OpenConnectionAsync();
        var list = ids.ToArray();
        int candidates = await conn.ExecuteScalarAsync<int>("SELECT count(*) FROM candidates WHERE broker_candidate_id = ANY(@list)", new { list });
        int points = await conn.ExecuteScalarAsync<int>(
            "SELECT count(*) FROM candidate_photometry p JOIN candidates c ON c.id = p.candidate_id WHERE c.broker_candidate_id = ANY(@list)", new { list });
        return (candidates, points);
    }

    [Theory]
    [InlineData(40)] // staged with binary COPY
    [InlineData(5)] // merged from array parameters (small batches)
    public async Task PostBatch_SameBatchThreeTimesInParallel_OneRowPerCandidateAndPoint(int count)
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var candidates = Enumerable.Range(0, count).Select(_ => CandidateBodies.Candidate()).ToArray();
        string body = CandidateBodies.Batch(candidates).ToJsonString();

        var responses = await Task.WhenAll(Enumerable.Range(0, 3).Select(_ => client.PostAsync("/api/candidates/batches", Bodies.Raw(body))));

        Assert.All(responses, r => Assert.Equal(HttpStatusCode.OK, r.StatusCode));
        var answers = await Task.WhenAll(responses.Select(r => r.ReadObjectAsync()));
        Assert.Equal(count, answers.Sum(a => (int)a["created"]!));
        Assert.Equal(2 * count, answers.Sum(a => (int)a["unchanged"]!));
        var (rows, points) = await CountAsync(candidates.Select(c => (string)c["id"]!));
        Assert.Equal(count, rows);
        Assert.Equal(10 * count, points);
    }

    [Fact]
    public async Task PostBatch_RepeatedThenExtended_UnchangedThenUpdatedWithNewPointsOnly()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var candidate = CandidateBodies.Candidate(points: 6);
        string id = (string)candidate["id"]!;

        var first = await (await client.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(candidate)))).ReadObjectAsync();
        var again = await (await client.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(candidate)))).ReadObjectAsync();
        var longer = CandidateBodies.Candidate(id, points: 10);
        var extended = await (await client.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(longer)))).ReadObjectAsync();

        Assert.Equal(1, (int)first["created"]!);
        Assert.Equal(1, (int)again["unchanged"]!);
        Assert.Equal(0, (int)again["photometryWritten"]!);
        Assert.Equal(1, (int)extended["updated"]!);
        var (rows, points) = await CountAsync([id]);
        Assert.Equal(1, rows);
        Assert.Equal(10, points);
    }

    [Theory]
    [InlineData(40)] // staged with binary COPY
    [InlineData(2)] // merged from array parameters
    public async Task PostBatch_OlderSnapshotAfterNewer_UnchangedNoHistoryEventNothingOverwritten(int count)
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var newer = Enumerable.Range(0, count).Select(_ => CandidateBodies.Candidate(points: 10)).ToArray();
        foreach (var c in newer) c["subtypeProbabilities"] = new JsonObject { ["Ia"] = 0.9, ["II"] = 0.1 };
        await (await client.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(newer)))).ReadObjectAsync();

        // The same candidates as the broker saw them earlier: six points and older probabilities.
        var older = newer.Select(c =>
        {
            var o = CandidateBodies.Candidate((string)c["id"]!, points: 6);
            o["subtypeProbabilities"] = new JsonObject { ["II"] = 0.7, ["Ia"] = 0.3 };
            return o;
        }).ToArray();
        var answer = await (await client.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(older)))).ReadObjectAsync();

        Assert.Equal(count, (int)answer["unchanged"]!);
        Assert.Equal(0, (int)answer["updated"]!);
        Assert.Equal(0, (int)answer["photometryWritten"]!);
        await using var conn = await api.DataSource.OpenConnectionAsync();
        var list = newer.Select(c => (string)c["id"]!).ToArray();
        var events = await conn.QueryAsync<string>(
            "SELECT e.kind FROM candidate_events e JOIN candidates c ON c.id = e.candidate_id WHERE c.broker_candidate_id = ANY(@list)", new { list });
        Assert.All(events, kind => Assert.Equal("created", kind));
        Assert.Equal(count, events.Count());
        var probabilities = await conn.QueryAsync<string>(
            "SELECT subtype_probabilities::text FROM candidates WHERE broker_candidate_id = ANY(@list)", new { list });
        Assert.All(probabilities, p => Assert.Contains("0.9", p, StringComparison.Ordinal));
    }

    [Theory]
    [InlineData(40)] // staged with binary COPY: the existing candidates' points go through the staging merge
    [InlineData(3)] // merged from array parameters
    public async Task PostBatch_ExtendedNextToNewCandidates_OnlyNewPointsWritten(int count)
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var first = Enumerable.Range(0, count).Select(_ => CandidateBodies.Candidate(points: 6)).ToArray();
        await (await client.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(first)))).ReadObjectAsync();

        // The same candidates with four more points each, plus as many new ones with ten points.
        var extended = first.Select(c => CandidateBodies.Candidate((string)c["id"]!, points: 10)).ToArray();
        var added = Enumerable.Range(0, count).Select(_ => CandidateBodies.Candidate(points: 10)).ToArray();
        var answer = await (await client.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch([.. extended, .. added])))).ReadObjectAsync();

        Assert.Equal(count, (int)answer["created"]!);
        Assert.Equal(count, (int)answer["updated"]!);
        Assert.Equal(count * 4 + count * 10, (int)answer["photometryWritten"]!);
        var (rows, points) = await CountAsync([.. extended.Concat(added).Select(c => (string)c["id"]!)]);
        Assert.Equal(2 * count, rows);
        Assert.Equal(2 * count * 10, points);
    }

    [Fact]
    public async Task PostBatch_SameIdFromTwoBrokers_TwoCandidates()
    {
        var a = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var b = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var candidate = CandidateBodies.Candidate();

        Assert.Equal(HttpStatusCode.OK, (await a.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(candidate)))).StatusCode);
        Assert.Equal(HttpStatusCode.OK, (await b.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(candidate)))).StatusCode);

        Assert.Equal(2, (await CountAsync([(string)candidate["id"]!])).Candidates);
    }

    [Fact]
    public async Task GetCandidate_AfterIntake_ReturnsPhotometryFitPriorAndHistory()
    {
        var broker = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var candidate = CandidateBodies.Candidate(points: 12);
        candidate["subtypeProbabilities"] = new JsonObject { ["Ia"] = 0.6, ["II"] = 0.41 };
        candidate["brokerState"] = new JsonObject { ["peakMagAb"] = 18.4, ["trend"] = "rising" };
        await broker.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(candidate)));
        var reader = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        // By the broker's own id: a cone around the shared default position would page out on a long-lived test database.
        var page = await (await reader.GetAsync($"/api/candidates?state=new&brokerId={Uri.EscapeDataString((string)candidate["id"]!)}")).ReadObjectAsync();
        var item = page["items"]!.AsArray().Single(i => (string)i!["brokerCandidateId"]! == (string)candidate["id"]!)!;

        var detail = await (await reader.GetAsync($"/api/candidates/{item["id"]}")).ReadObjectAsync();

        Assert.Equal(12, detail["photometry"]!.AsArray().Count);
        Assert.Equal("bazin", (string)detail["lightCurve"]!["method"]!);
        Assert.NotNull(detail["lightCurve"]!["phaseDays"]);
        Assert.Equal("broker", (string)detail["prior"]!["source"]!);
        Assert.Equal(0.6 / 1.01, (double)detail["prior"]!["probabilities"]!["Ia"]!, 5);
        Assert.Equal(18.4, (double)detail["lightCurve"]!["brokerState"]!["peakMagAb"]!);
        Assert.Equal("created", (string)detail["history"]![0]!["kind"]!);
    }

    [Fact]
    public async Task ListCandidates_CursorPages_CoverEverythingOnce()
    {
        var broker = api.ClientWith(await api.KeyAsync(Scope.Broker));
        double ra = 200 + Random.Shared.NextDouble() * 100;
        var candidates = Enumerable.Range(0, 7).Select(_ => { var c = CandidateBodies.Candidate(); c["raDeg"] = ra; c["decDeg"] = 41.0; return c; }).ToArray();
        await broker.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(candidates)));
        var reader = api.ClientWith(await api.KeyAsync(Scope.Scheduler));

        var seen = new List<string>();
        string? cursor = null;
        do
        {
            var url = $"/api/candidates?raDeg={ra}&decDeg=41&radiusDeg=0.001&limit=3" + (cursor is null ? "" : $"&cursor={cursor}");
            var page = await (await reader.GetAsync(url)).ReadObjectAsync();
            seen.AddRange(page["items"]!.AsArray().Select(i => (string)i!["brokerCandidateId"]!));
            cursor = (string?)page["nextCursor"];
        }
        while (cursor is not null);

        Assert.Equal(candidates.Select(c => (string)c["id"]!).Order(), seen.Order());
    }

    [Fact]
    public async Task ListCandidates_BrighterThan_UsesStoredPrediction()
    {
        var broker = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var candidate = CandidateBodies.Candidate(points: 12);
        double ra = 10 + Random.Shared.NextDouble() * 50;
        candidate["raDeg"] = ra;
        await broker.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(candidate)));
        var reader = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        var listed = await (await reader.GetAsync($"/api/candidates?raDeg={ra}&decDeg=-23.5&radiusDeg=0.001")).ReadObjectAsync();
        var id = (string)listed["items"]![0]!["id"]!;
        await reader.GetAsync($"/api/candidates/{id}"); // fits and stores the fit if the background worker has not yet

        var bright = await (await reader.GetAsync($"/api/candidates?raDeg={ra}&decDeg=-23.5&radiusDeg=0.001&brighterThanMagAb=10")).ReadObjectAsync();
        var faint = await (await reader.GetAsync($"/api/candidates?raDeg={ra}&decDeg=-23.5&radiusDeg=0.001&brighterThanMagAb=30")).ReadObjectAsync();

        Assert.Empty(bright["items"]!.AsArray());
        Assert.Single(faint["items"]!.AsArray());
        Assert.NotNull(faint["items"]![0]!["predictedMagAb"]);
    }

    [Fact]
    public async Task PostBatch_WithoutBrokerScope_Forbidden()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Scheduler));

        var response = await client.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(CandidateBodies.Candidate())));

        Assert.Equal(HttpStatusCode.Forbidden, response.StatusCode);
        Assert.Equal(HttpStatusCode.Unauthorized, (await api.ClientWith(null).PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(CandidateBodies.Candidate())))).StatusCode);
    }
}
