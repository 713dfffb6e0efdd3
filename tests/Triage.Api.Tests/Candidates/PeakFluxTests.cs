using System.Text.Json.Nodes;
using Dapper;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;

namespace Triage.Api.Tests.Candidates;

/// <summary>
/// The brightest detection kept on the candidate row by the intake merge (the planner's pool
/// reads it instead of the photometry): equal to the largest detected flux of the stored points,
/// on both intake paths, and never lowered by a later submission.
/// </summary>
[Collection(ApiCollection.Name)]
public sealed class PeakFluxTests(TriageApiFactory api)
{
    private async Task<List<(string Id, double? Peak, double? FromPoints)>> PeaksAsync(IEnumerable<string> ids)
    {
        await using var conn = await api.DataSource.OpenConnectionAsync();
        var rows = await conn.QueryAsync<(string, double?, double?)>("""
            SELECT c.broker_candidate_id, c.peak_flux_microjy,
                (SELECT max(p.flux_microjy) FROM candidate_photometry p WHERE p.candidate_id = c.id AND NOT p.upper_limit AND p.flux_microjy > 0)
            FROM candidates c WHERE c.broker_candidate_id = ANY(@list) ORDER BY 1
            """, new { list = ids.ToArray() });
        return rows.ToList();
    }

    [Theory]
    [InlineData(40)] // staged with binary COPY
    [InlineData(5)] // merged from array parameters
    public async Task PostBatch_PeakIsTheBrightestStoredDetection_AndABrighterPointRaisesIt(int count)
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var candidates = Enumerable.Range(0, count).Select(_ => CandidateBodies.Candidate()).ToArray();
        var posted = await client.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(candidates)));
        Assert.True(posted.IsSuccessStatusCode, await posted.Content.ReadAsStringAsync());
        var ids = candidates.Select(c => c["id"]!.GetValue<string>()).ToList();

        var first = await PeaksAsync(ids);
        Assert.Equal(count, first.Count);
        Assert.All(first, r => Assert.Equal(r.FromPoints!.Value, r.Peak!.Value, 9));

        // One point two magnitudes brighter than the light curve's peak (18.5 mag), and, on another
        // candidate, a point fainter than its peak: the first peak rises, the second stays.
        var brighter = (JsonObject)candidates[0].DeepClone();
        brighter["photometry"]!.AsArray().Add(new JsonObject
        {
            ["timeUtc"] = new DateTimeOffset(2026, 11, 30, 0, 0, 0, TimeSpan.Zero).ToString("O"), ["band"] = "r", ["magAb"] = 16.5, ["magAbError"] = 0.05,
        });
        var fainter = (JsonObject)candidates[1].DeepClone();
        fainter["photometry"]!.AsArray().Add(new JsonObject
        {
            ["timeUtc"] = new DateTimeOffset(2026, 11, 30, 0, 0, 0, TimeSpan.Zero).ToString("O"), ["band"] = "r", ["magAb"] = 21.5, ["magAbError"] = 0.05,
        });
        var again = candidates.Skip(2).Prepend(fainter).Prepend(brighter).ToArray();
        var reposted = await client.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(again)));
        Assert.True(reposted.IsSuccessStatusCode, await reposted.Content.ReadAsStringAsync());

        var second = (await PeaksAsync(ids)).ToDictionary(r => r.Id);
        Assert.All(second.Values, r => Assert.Equal(r.FromPoints!.Value, r.Peak!.Value, 9));
        var id0 = ids[0];
        var id1 = ids[1];
        // 16.5 mag AB is 10^(0.4·(23.9 − 16.5)) µJy (AB definition, Oke & Gunn 1983).
        Assert.Equal(Math.Pow(10, 0.4 * (23.9 - 16.5)), second[id0].Peak!.Value, 6);
        Assert.Equal(first.Single(r => r.Id == id1).Peak, second[id1].Peak);
    }
}
