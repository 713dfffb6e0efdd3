using System.Text.Json;
using Triage.Core.Candidates;
using Triage.Core.Tests.Spectra;

namespace Triage.Core.Tests.Candidates;

/// <summary>
/// The second demo broker reposts one demo candidate in twelve under its own ids, 0.3–0.9″ away and found later: a
/// valid batch whose every repost the planner's grouping joins to its original, and to nothing else.
/// </summary>
public class DemoSecondBrokerTests
{
    [Fact]
    public void Reposts_AreValid_NearTheirOriginals_AndGroupedWithThemOnly()
    {
        var json = File.ReadAllText(Path.Combine(TaxonomyTests.RepoRoot(), "demo", "candidates.json"));
        var original = JsonSerializer.Deserialize<BrokerBatch>(json, BrokerBatchJson.Options)!;
        var reposts = JsonSerializer.Deserialize<BrokerBatch>(DemoSecondBroker.Batch(json), BrokerBatchJson.Options)!;

        var errors = BrokerBatchValidator.Validate(reposts, DefaultSubtypeLabels.Set, new BatchLimits { MaxCandidates = 5000 }).Errors;
        Assert.True(errors.Count == 0, string.Join("; ", errors.Take(3).Select(e => $"{e.Field}: {e.Message}")));
        Assert.Equal((original.Candidates!.Count - 5 + DemoSecondBroker.Every - 1) / DemoSecondBroker.Every, reposts.Candidates!.Count);
        var posts = new List<TransientPost>();
        foreach (var (repost, k) in reposts.Candidates.Select((c, k) => (c!, k)))
        {
            var source = original.Candidates[5 + k * DemoSecondBroker.Every]!;
            Assert.Equal("NB-" + source.Id![5..], repost.Id);
            Assert.InRange(SameTransient.SeparationArcsec(source.RaDeg!.Value, source.DecDeg!.Value, repost.RaDeg!.Value, repost.DecDeg!.Value), 0.29, 0.91);
            Assert.True(repost.DiscoveredUtc >= source.DiscoveredUtc, $"{repost.Id}: {repost.DiscoveredUtc:O} before {source.DiscoveredUtc:O}");
            Assert.True(repost.Photometry!.Count >= source.Photometry!.Count - 1 && repost.Photometry.Count <= source.Photometry.Count, $"{repost.Id}: {repost.Photometry.Count} of {source.Photometry.Count} points");
        }

        var all = original.Candidates.Concat(reposts.Candidates)
            .Select(c => new TransientPost(c!.Id!, c.RaDeg!.Value, c.DecDeg!.Value, c.DiscoveredUtc!.Value, PostStanding.Waiting, 1, null)).ToList();
        var pairs = SameTransient.Groups(all).Where(g => g.Count > 1).ToList();
        Assert.Equal(reposts.Candidates.Count, pairs.Count);
        Assert.All(pairs, g => Assert.Equal(all[g[0]].Id[5..], all[g[1]].Id[3..]));
    }
}
