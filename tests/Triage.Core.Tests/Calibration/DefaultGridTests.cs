using System.Globalization;
using Triage.Core.Calibration;

namespace Triage.Core.Tests.Calibration;

/// <summary>
/// The default calibration grid (issue 11): it must reach the highest resolving power a roster is expected to bring
/// (R = 4000 exactly, so that unit is calibrated, not clamped), start at R = 5, and carry numeric S/N levels only.
/// </summary>
public class DefaultGridTests
{
    [Theory]
    [InlineData(6000)]
    [InlineData(4000)]
    [InlineData(100000)]
    public void DefaultResolutions_LibraryAtOrAbove4000_Spans5To4000Exactly(double libraryR)
    {
        var r = CalibrationSettings.DefaultResolutions(libraryR);
        Assert.Equal(12, r.Count);
        Assert.Equal(5, r[0]);
        Assert.Equal(4000, r[^1]);
        Assert.Contains(4000.0, r);
        Assert.All(r.Zip(r.Skip(1)), p => Assert.True(p.Second > p.First));
        // Log-spaced: every ratio of neighbours within rounding (2–3 significant digits) of (4000/5)^(1/11) ≈ 1.836.
        double ratio = Math.Pow(4000 / 5.0, 1 / 11.0);
        Assert.All(r.Zip(r.Skip(1)), p => Assert.InRange(p.Second / p.First, ratio * 0.95, ratio * 1.05));
    }

    [Fact]
    public void DefaultResolutions_LibraryBelow4000_TopsAtTheLibrarysR()
    {
        var r = CalibrationSettings.DefaultResolutions(1500);
        Assert.Equal(5, r[0]);
        Assert.Equal(1500, r[^1]);
        Assert.All(r, v => Assert.InRange(v, 5, 1500));
    }

    [Fact]
    public void DefaultResolutions_AreShortDecimals()
    {
        // Rounded values print as written (9.2, not 9.200000000000001) in the calibration JSON and the CLI table.
        foreach (double v in CalibrationSettings.DefaultResolutions(6000))
            Assert.True(v.ToString("R", CultureInfo.InvariantCulture).Length <= 4, v.ToString("R", CultureInfo.InvariantCulture));
    }

    [Fact]
    public void DefaultSnrLevels_AreNumericOnly()
    {
        Assert.Equal([5.0, 10.0, 20.0], new CalibrationSettings().SnrLevels.Select(s => s!.Value));
        Assert.DoesNotContain(null, new CalibrationSettings().SnrLevels);
    }
}
