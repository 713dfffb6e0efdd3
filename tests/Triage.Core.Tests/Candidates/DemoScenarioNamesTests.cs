using System.Text.Json;
using Triage.Core.Candidates;
using Triage.Core.Tests.Spectra;

namespace Triage.Core.Tests.Candidates;

/// <summary>
/// The invented demo names nothing real: none of the replaced names (a real telescope system's
/// name, a real settlement's name, the variable-star abbreviation of the old id prefix) appears
/// in the demo files or the docs, and the invented photometry uses Sloan-like ugriz letters only.
/// </summary>
public class DemoScenarioNamesTests
{
    private static readonly string[] Replaced = ["Condor-2000", "Kalkrand", "DN26-"];

    [Fact]
    public void DemoFilesAndDocs_ContainNoneOfTheReplacedNames()
    {
        string root = TaxonomyTests.RepoRoot();
        var files = Directory.GetFiles(Path.Combine(root, "demo"), "*", SearchOption.AllDirectories)
            .Concat(Directory.GetFiles(Path.Combine(root, "docs"), "*.md"))
            .Append(Path.Combine(root, "README.md"));
        var hits = files.SelectMany(f => Replaced.Where(n => File.ReadAllText(f).Contains(n, StringComparison.OrdinalIgnoreCase)).Select(n => $"{n} in {f}")).ToList();
        Assert.True(hits.Count == 0, string.Join("; ", hits));
    }

    [Fact]
    public void DemoCandidates_UseUgrizOnlyAndTheInventedPrefix()
    {
        using var doc = JsonDocument.Parse(File.ReadAllText(Path.Combine(TaxonomyTests.RepoRoot(), "demo", "candidates.json")));
        var candidates = doc.RootElement.GetProperty("candidates").EnumerateArray().ToList();
        Assert.NotEmpty(candidates);
        Assert.All(candidates, c => Assert.StartsWith(DemoNightGenerator.IdPrefix, c.GetProperty("id").GetString(), StringComparison.Ordinal));
        var bands = candidates.SelectMany(c => c.GetProperty("photometry").EnumerateArray().Select(p => p.GetProperty("band").GetString()!)).ToHashSet();
        Assert.Subset(new HashSet<string>(["u", "g", "r", "i", "z"]), bands);
    }

    [Fact]
    public void Generator_AnySeed_UsesUgrizOnly()
    {
        var batch = DemoNightGenerator.Generate(DefaultSubtypeLabels.All, new DemoNightOptions { Count = 60, Seed = 77 });
        var bands = batch.Candidates!.SelectMany(c => c!.Photometry!).Select(p => p!.Band!).ToHashSet();
        Assert.Subset(DemoNightGenerator.Bands.ToHashSet(), bands);
        Assert.Contains("u", bands);
    }
}
