using Triage.Learning;

namespace Triage.Learning.Tests.Calibration;

public class ClassWeightsTests
{
    [Fact]
    public void ClassWeights_Balanced_EachClassCarriesEqualTotalWeight()
    {
        int[] labels = [0, 0, 0, 0, 0, 0, 1, 1, 2];
        var w = CalibrationPipeline.ClassWeights(labels, 4, balanced: true);
        double total0 = 6 * w[0], total1 = 2 * w[1], total2 = 1 * w[2];
        Assert.Equal(total0, total1, 5);
        Assert.Equal(total0, total2, 5);
        Assert.Equal(0, w[3]);
        // Sum of weights equals the number of examples (N / (K n_c) summed over the data).
        Assert.Equal(labels.Length, total0 + total1 + total2, 4);
    }

    [Fact]
    public void ClassWeights_Unbalanced_AllOne() =>
        Assert.All(CalibrationPipeline.ClassWeights([0, 1, 1], 2, balanced: false), w => Assert.Equal(1f, w));

    [Fact]
    public void DerivedSeed_DefaultGridDraws_SpreadLikeUniform31BitValues()
    {
        // The noise draws of the default grid on a ~3000-spectrum library (spectrum × R × S/N): 144,000 seeds.
        // Uniform 31-bit values would collide n²/2³² ≈ 4.8 times on average (birthday bound, common practice);
        // a poor mix of the indices would collide far more.
        var seeds = new HashSet<int>();
        for (int i = 0; i < 3000; i++)
            for (int r = 0; r < 12; r++)
                for (int s = 0; s < 4; s++)
                {
                    int seed = CalibrationPipeline.DerivedSeed(1, i, r, s);
                    Assert.True(seed >= 0);
                    seeds.Add(seed);
                }
        Assert.InRange(3000 * 12 * 4 - seeds.Count, 0, 20);
    }
}
