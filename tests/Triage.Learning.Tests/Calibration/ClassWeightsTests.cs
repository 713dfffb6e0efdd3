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
}
