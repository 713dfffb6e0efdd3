using Triage.Core.Candidates;

namespace Triage.Core.Tests.Candidates;

public class AbMagnitudeTests
{
    [Fact]
    public void ToMicroJansky_ZeroMagnitude_Is3631Jansky()
    {
        // AB zero point 3631 Jy (check-values §4a, S7: m_AB = −2.5 log f_ν − 48.60).
        // Tolerance 0.05%: the constant 23.9 rounds 2.5·log10(3.631e9) = 23.9001.
        Assert.Equal(3631e6, AbMagnitude.ToMicroJansky(0), 3631e6 * 5e-4);
    }

    [Fact]
    public void FromMicroJansky_InvertsToMicroJansky()
    {
        Assert.Equal(19.37, AbMagnitude.FromMicroJansky(AbMagnitude.ToMicroJansky(19.37)), 12);
        Assert.True(double.IsNaN(AbMagnitude.FromMicroJansky(-3)));
    }

    [Fact]
    public void MagErrorFromFluxError_TenPercent_IsAboutPoint1086()
    {
        // σ_m = 2.5/ln10 · σ_f/f (first-order propagation; common practice).
        Assert.Equal(0.10857, AbMagnitude.MagErrorFromFluxError(100, 10), 5);
    }
}
