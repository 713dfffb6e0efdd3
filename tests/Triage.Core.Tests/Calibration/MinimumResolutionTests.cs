using Triage.Core.Calibration;

namespace Triage.Core.Tests.Calibration;

public class MinimumResolutionTests
{
    private const int Seed = 11;

    // G objects of m spectra each; correct[i] spectra of every object right at resolutions[i] (homogeneous objects).
    private static PairedOutcomes Uniform(double[] resolutions, int objects, int spectra, params int[] correctOf100)
    {
        // Spread k = recall·n correct spectra over the objects as evenly as possible.
        var rows = new List<IReadOnlyList<int>>();
        int n = objects * spectra;
        for (int o = 0; o < objects; o++)
            rows.Add(correctOf100.Select(c => Share(c * n / 100, o, objects, spectra)).ToArray());
        return new PairedOutcomes("Ia", null, resolutions, Enumerable.Repeat(spectra, objects).ToArray(), rows);
    }

    private static int Share(int total, int o, int objects, int spectra)
    {
        // Round-robin: spectrum slot t goes to object t % objects.
        int full = total / objects, rest = total % objects;
        return Math.Min(spectra, full + (o < rest ? 1 : 0));
    }

    [Fact]
    public void Build_PlateauThenDrop_FindsKneeAndChance()
    {
        // Recall 0.90 flat down to R = 50, 0.80 at 20, 0.30 at 10, 0.12 at 5 (25 objects × 4 spectra, K = 10 → chance 0.10).
        var curve = Uniform([5, 10, 20, 50, 100, 1000], 25, 4, 12, 30, 80, 88, 90, 89);
        var row = Assert.Single(MinimumResolutionTable.Build([curve], 10, 0.05, Seed));
        Assert.Equal(0.90, row.BestRecallObserved!.Value, 12);
        Assert.Equal(100, row.BestResolution);
        Assert.Equal(50, row.MinimumResolution);
        Assert.Equal(20, row.MinimumResolutionBracketLow);
        // Object-level lower bound of 12/100 (objects nearly alike) stays below 0.10; 30/100 clears it.
        Assert.Equal(10, row.DistinguishableFromResolution);
        Assert.Equal(5, row.ChanceBelowResolution);
    }

    [Fact]
    public void Build_DipSharedByEveryObject_BlocksLowerR_EvenWhenUnpairedIntervalsOverlap()
    {
        // 30 objects, 4 spectra each: half are easy (4/4 right), half hard (1/4 right) at R = 50 and 1000.
        // At R = 100 every easy object loses one spectrum: recall 0.625 → 0.5. Objects differ a lot, so the
        // object-level interval of 0.5 is wide and reaches the floor 0.625 − 0.05 (unpaired: no significant dip);
        // the paired difference (the same objects at both R) is 0.125 in every resample: a real dip.
        double[] grid = [50, 100, 1000];
        var rows = Enumerable.Range(0, 30).Select(o => (IReadOnlyList<int>)(o % 2 == 0 ? [4, 3, 4] : [1, 1, 1])).ToArray();
        var curve = new PairedOutcomes("Ia", 10, grid, Enumerable.Repeat(4, 30).ToArray(), rows);
        var unpaired = ClusteredProportion.Compute(rows.Select(r => new ObjectTally(4, r[1])));
        Assert.True(unpaired.High >= 0.625 - 0.05, $"unpaired upper bound {unpaired.High:0.000}");

        var row = Assert.Single(MinimumResolutionTable.Build([curve], 10, 0.05, Seed));

        Assert.Equal(1000, row.MinimumResolution);
    }

    [Fact]
    public void Build_DipFromOneObjectOnly_DoesNotBlockLowerR()
    {
        // A dip of 6 points at R = 100 caused by one object of 20 (its 6 spectra all wrong there) is object-level noise.
        double[] grid = [20, 50, 100, 1000];
        var rows = Enumerable.Range(0, 20).Select(o => (IReadOnlyList<int>)(o == 0 ? [3, 6, 0, 6] : o < 5 ? [3, 4, 4, 4] : [4, 5, 5, 5])).ToArray();
        var sizes = Enumerable.Range(0, 20).Select(o => o == 0 ? 6 : o < 5 ? 4 : 5).ToArray();
        var curve = new PairedOutcomes("Ia", 10, grid, sizes, rows);

        var row = Assert.Single(MinimumResolutionTable.Build([curve], 10, 0.05, Seed));

        Assert.Equal(50, row.MinimumResolution);
        Assert.Equal(20, row.MinimumResolutionBracketLow);
    }

    [Fact]
    public void Build_BestOfTwelveNoisyPoints_IsCorrectedForChoosingTheMaximum()
    {
        // True recall 0.5 at every R; each R's answers are independent draws. The raw maximum of 12 points is biased
        // upward (expected order statistic); the held-out best must sit much closer to 0.5 on average.
        var random = new Random(3);
        double raw = 0, corrected = 0;
        const int datasets = 40;
        double[] grid = Enumerable.Range(0, 12).Select(i => 5.0 * Math.Pow(2, i)).ToArray();
        for (int d = 0; d < datasets; d++)
        {
            var rows = Enumerable.Range(0, 25).Select(_ => (IReadOnlyList<int>)grid.Select(_ => Enumerable.Range(0, 3).Count(_ => random.NextDouble() < 0.5)).ToArray()).ToArray();
            var row = MinimumResolutionTable.Build([new PairedOutcomes("Ia", 5, grid, Enumerable.Repeat(3, 25).ToArray(), rows)], 10, 0.05, d).Single();
            raw += row.BestRecallObserved!.Value - 0.5;
            corrected += row.BestRecall - 0.5;
        }
        raw /= datasets;
        corrected /= datasets;
        Assert.True(raw > 0.06, $"raw bias {raw:0.000}");
        Assert.True(Math.Abs(corrected) < raw / 4, $"corrected bias {corrected:0.000} vs raw {raw:0.000}");
    }

    [Fact]
    public void Build_SameSeed_SameTable()
    {
        var curve = Uniform([5, 10, 20, 50], 10, 3, 20, 40, 70, 73);
        var a = MinimumResolutionTable.Build([curve], 10, 0.05, Seed).Single();
        var b = MinimumResolutionTable.Build([curve], 10, 0.05, Seed).Single();
        Assert.Equal(a, b);
    }

    [Fact]
    public void ToCsv_HasHeaderAndOneLinePerRow()
    {
        var curve = Uniform([5, 100], 25, 4, 12, 90);
        var csv = MinimumResolutionTable.ToCsv(MinimumResolutionTable.Build([curve], 10, 0.05, Seed));
        var lines = csv.TrimEnd('\n').Split('\n');
        Assert.Equal(2, lines.Length);
        Assert.StartsWith("subtype,snr,tolerance,best_recall", lines[0]);
        Assert.EndsWith(",best_recall_observed", lines[0]);
        Assert.StartsWith("Ia,native,0.05,", lines[1]);
        Assert.EndsWith(",0.9", lines[1]);
    }
}
