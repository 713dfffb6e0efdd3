using Triage.Core.Exposure;
using Triage.Core.Sky;

namespace Triage.Core.Tests.Exposure;

/// <summary>
/// Krisciunas &amp; Schaefer (1991) model. No published check value was available here, so these are property
/// tests of the model's documented behaviour plus the exact nL ↔ mag relation (K&amp;S eq. 1).
/// </summary>
public class MoonlitSkyTests
{
    [Fact]
    public void NanolambertsFromMag_RoundTrip_IsExact()
    {
        Assert.Equal(21.3, MoonlitSky.MagFromNanolamberts(MoonlitSky.NanolambertsFromMag(21.3)), 10);
    }

    [Fact]
    public void SkyMagArcsec2_ZenithNoMoon_IsTheDarkSky()
    {
        Assert.Equal(21.5, MoonlitSky.SkyMagArcsec2(21.5, 0.15, 0, null), 10);
    }

    [Fact]
    public void SkyMagArcsec2_MoonBelowHorizon_AddsNothing()
    {
        var moon = new MoonlightGeometry(0, -5, 40);
        Assert.Equal(MoonlitSky.SkyMagArcsec2(21.5, 0.15, 30, null), MoonlitSky.SkyMagArcsec2(21.5, 0.15, 30, moon), 10);
    }

    [Fact]
    public void SkyMagArcsec2_FullerAndCloserMoon_IsBrighter()
    {
        double Sky(double phase, double sep) => MoonlitSky.SkyMagArcsec2(21.5, 0.15, 30, new MoonlightGeometry(phase, 45, sep));
        Assert.True(Sky(10, 40) < Sky(90, 40));
        Assert.True(Sky(90, 40) < Sky(150, 40));
        Assert.True(Sky(10, 20) < Sky(10, 90));
        // A full Moon brightens a dark site by several magnitudes (common practice: ~3 mag in V).
        Assert.InRange(Sky(0, 45) - 21.5, -4.5, -1.5);
    }

    [Fact]
    public void SkyMagArcsec2_LowerPointing_IsBrighterWithoutMoon()
    {
        // K&S eq. 2: B₀(Z) = B_zen 10^(−0.4k(X−1)) X grows with Z for small k.
        Assert.True(MoonlitSky.SkyMagArcsec2(21.5, 0.15, 60, null) < MoonlitSky.SkyMagArcsec2(21.5, 0.15, 0, null));
    }
}
