using Triage.Core.Calibration;

namespace Triage.Core.Tests.Calibration;

public class WilsonIntervalTests
{
    [Theory]
    // Wilson (1927), JASA 22, 209; values from shared/reference/check-values.md §7, which match
    // scipy.stats.binomtest(k, n).proportion_ci(0.95, method='wilson') to all printed digits.
    // Tolerance 1e-6: the table prints six decimals.
    [InlineData(8, 10, 0.490162, 0.943318)]
    [InlineData(45, 50, 0.786398, 0.956524)]
    [InlineData(0, 5, 0.000000, 0.434482)]
    [InlineData(10, 10, 0.722467, 1.000000)]
    public void Compute_WorkedValues_MatchReference(int k, int n, double low, double high)
    {
        var w = WilsonInterval.Compute(k, n);
        Assert.Equal(low, w.Low, 6);
        Assert.Equal(high, w.High, 6);
        Assert.Equal(k / (double)n, w.Estimate, 12);
    }

    [Fact]
    public void Compute_RoundedZ_ShiftsSixthDecimal()
    {
        // check-values §7: with z = 1.96 the 8/10 interval is [0.490157, 0.943319]; pinning z matters.
        var w = WilsonInterval.Compute(8, 10, 1.96);
        Assert.Equal(0.490157, w.Low, 6);
        Assert.Equal(0.943319, w.High, 6);
        Assert.Equal(1.959963984540054, WilsonInterval.Z95);
    }

    [Fact]
    public void Compute_ZeroSuccesses_UpperIsZSquaredOverNPlusZSquared()
    {
        // check-values §7: for k = 0 the upper bound is z²/(n + z²) (derived).
        double z2 = WilsonInterval.Z95 * WilsonInterval.Z95;
        Assert.Equal(z2 / (5 + z2), WilsonInterval.Compute(0, 5).High, 12);
    }

    [Fact]
    public void Compute_Invalid_Throws()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => WilsonInterval.Compute(6, 5));
        Assert.Throws<ArgumentOutOfRangeException>(() => WilsonInterval.Compute(-1, 5));
    }
}
