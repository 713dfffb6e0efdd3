using System.Net;
using System.Text.Json;
using Dapper;
using Triage.Api.Tests.Candidates;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;

namespace Triage.Api.Tests.Faults;

/// <summary>
/// The database vanishing under the service (the proxy cut): every route answers 503
/// problem+json with Retry-After, never 500; liveness stays up; readiness says unready without
/// authenticating; intake stays all-or-nothing and exactly-once through repeated cuts.
/// Short form of the fault harness (docs/operations.md).
/// </summary>
public sealed class DatabaseOutageTests(ProxiedDatabaseFactory api) : IClassFixture<ProxiedDatabaseFactory>
{
    [Fact]
    public async Task DatabaseGone_RoutesAnswer503WithRetryAfter_HealthLiveUp_ReadyUnreadyWithoutAuthenticating()
    {
        var scheduler = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        var broker = api.ClientWith(await api.KeyAsync(Scope.Broker));
        Assert.Equal(HttpStatusCode.OK, (await scheduler.GetAsync("/api/sites")).StatusCode);

        api.Proxy.Cut();
        try
        {
            var answers = new List<HttpResponseMessage>
            {
                await scheduler.GetAsync("/api/sites"),
                await scheduler.GetAsync("/api/candidates"),
                await scheduler.GetAsync("/api/jobs"),
                await broker.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(CandidateBodies.Candidate()))),
                // An unknown key needs the database to be refused: that too is a 503, not a 500.
                await api.ClientWith("trk_nosuchkey_" + new string('x', 40)).GetAsync("/api/sites"),
            };
            foreach (var answer in answers)
            {
                var text = await answer.Content.ReadAsStringAsync();
                Assert.True(answer.StatusCode == HttpStatusCode.ServiceUnavailable, $"{answer.RequestMessage!.RequestUri}: {(int)answer.StatusCode} {text}");
                Assert.Equal("application/problem+json", answer.Content.Headers.ContentType?.MediaType);
                Assert.True(answer.Headers.RetryAfter is not null, "Retry-After missing");
            }

            Assert.Equal(HttpStatusCode.OK, (await api.CreateClient().GetAsync("/health/live")).StatusCode);
            var ready = new HttpRequestMessage(HttpMethod.Get, "/health/ready");
            ready.Headers.Authorization = new System.Net.Http.Headers.AuthenticationHeaderValue("Bearer", "trk_nosuchkey_" + new string('y', 40));
            var readiness = await api.CreateClient().SendAsync(ready);
            Assert.Equal(HttpStatusCode.ServiceUnavailable, readiness.StatusCode);
            Assert.Contains("Unhealthy", await readiness.Content.ReadAsStringAsync(), StringComparison.Ordinal);
        }
        finally
        {
            api.Proxy.Restore();
        }
        Assert.Equal(HttpStatusCode.OK, (await scheduler.GetAsync("/api/sites")).StatusCode);
        Assert.Equal(HttpStatusCode.OK, (await api.CreateClient().GetAsync("/health/ready")).StatusCode);
    }

    [Fact]
    public async Task IntakeThroughRepeatedCuts_No500_NoPartialBatch_NoDuplicate()
    {
        const int batches = 24, perBatch = 20, points = 10;
        var broker = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var prefix = Unique.Name("cut");
        var bodies = Enumerable.Range(0, batches)
            .Select(b => CandidateBodies.Batch(Enumerable.Range(0, perBatch).Select(i => CandidateBodies.Candidate($"{prefix}-{b:D2}-{i:D2}", points)).ToArray()).ToJsonString())
            .ToList();

        // Posts race three cuts of the connection; answers are 200 or 503, never anything else.
        var cutter = Task.Run(async () =>
        {
            for (var i = 0; i < 3; i++)
            {
                await Task.Delay(120);
                api.Proxy.Cut();
                await Task.Delay(150);
                api.Proxy.Restore();
            }
        });
        var first = await Task.WhenAll(bodies.Select(async body => await broker.PostAsync("/api/candidates/batches", Bodies.Raw(body))));
        await cutter;
        Assert.All(first, a => Assert.Contains(a.StatusCode, new[] { HttpStatusCode.OK, HttpStatusCode.ServiceUnavailable }));

        // Nothing partial: each batch is stored whole (candidates and points) or not at all.
        await using var conn = await api.Direct.OpenConnectionAsync();
        var stored = (await conn.QueryAsync<(string Batch, long Candidates, long Points)>("""
            SELECT substring(c.broker_candidate_id from '^(.*)-[0-9]+$') AS batch, count(DISTINCT c.id), count(p.*)
            FROM candidates c LEFT JOIN candidate_photometry p ON p.candidate_id = c.id
            WHERE c.broker_candidate_id LIKE @like GROUP BY 1
            """, new { like = prefix + "-%" })).ToList();
        foreach (var (batch, candidates, pts) in stored)
        {
            Assert.True(candidates == perBatch && pts == perBatch * points, $"batch {batch} is partial: {candidates} candidates, {pts} points");
        }
        for (var b = 0; b < batches; b++)
        {
            if (first[b].StatusCode == HttpStatusCode.OK)
            {
                Assert.Contains(stored, s => s.Batch == $"{prefix}-{b:D2}");
            }
        }

        // Retrying every batch (as a broker does after 503) stores each candidate and point exactly once.
        foreach (var body in bodies)
        {
            var again = await broker.PostAsync("/api/candidates/batches", Bodies.Raw(body));
            Assert.Equal(HttpStatusCode.OK, again.StatusCode);
        }
        var totals = await conn.QuerySingleAsync<(long Candidates, long Distinct, long Points, long DistinctPoints)>("""
            SELECT count(DISTINCT c.id), count(DISTINCT c.broker_candidate_id), count(p.*), count(DISTINCT (p.candidate_id, p.band, p.observed_at))
            FROM candidates c LEFT JOIN candidate_photometry p ON p.candidate_id = c.id
            WHERE c.broker_candidate_id LIKE @like
            """, new { like = prefix + "-%" });
        Assert.Equal(batches * perBatch, totals.Candidates);
        Assert.Equal(batches * perBatch, totals.Distinct);
        Assert.Equal(batches * perBatch * points, totals.Points);
        Assert.Equal(totals.Points, totals.DistinctPoints);
    }
}
