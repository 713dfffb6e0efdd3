using Triage.Core.Calibration;

namespace Triage.Core.Tests.Calibration;

public class GroupedFoldsTests
{
    private static List<(string ObjectId, string Label)> Items(int seed)
    {
        // 60 objects of 5 labels with 1–12 spectra each; rare label "E" has exactly 5 objects.
        var rng = new Random(seed);
        var items = new List<(string, string)>();
        string[] labels = ["A", "A", "A", "B", "B", "C", "D"];
        for (int o = 0; o < 60; o++)
        {
            string label = o < 5 ? "E" : labels[rng.Next(labels.Length)];
            int n = 1 + rng.Next(12);
            for (int s = 0; s < n; s++) items.Add(($"obj{o}", label));
        }
        return items;
    }

    [Theory]
    [InlineData(1, 5)]
    [InlineData(2, 3)]
    [InlineData(3, 10)]
    public void Assign_EveryObject_InExactlyOneFold(int seed, int k)
    {
        var items = Items(seed);
        var fold = GroupedFolds.Assign(items, k, seed);
        foreach (var g in items.Select((it, i) => (it.ObjectId, Fold: fold[i])).GroupBy(x => x.ObjectId))
            Assert.Single(g.Select(x => x.Fold).Distinct());
        Assert.All(fold, f => Assert.InRange(f, 0, k - 1));
    }

    [Fact]
    public void Assign_LabelWithKObjects_AppearsInEveryFold()
    {
        var items = Items(4);
        var fold = GroupedFolds.Assign(items, 5, 4);
        var foldsOfE = items.Select((it, i) => (it.Label, fold[i])).Where(x => x.Label == "E").Select(x => x.Item2).Distinct();
        Assert.Equal(5, foldsOfE.Count());
    }

    [Fact]
    public void Assign_SameSeed_IsDeterministic()
    {
        var items = Items(9);
        Assert.Equal(GroupedFolds.Assign(items, 5, 3), GroupedFolds.Assign(items, 5, 3));
    }

    [Fact]
    public void Assign_ObjectWithTwoLabels_Throws()
    {
        Assert.Throws<ArgumentException>(() => GroupedFolds.Assign([("a", "Ia"), ("a", "II")], 2, 1));
    }
}
