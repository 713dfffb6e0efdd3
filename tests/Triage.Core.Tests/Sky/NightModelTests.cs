using Triage.Core.Roster;
using Triage.Core.Sky;

namespace Triage.Core.Tests.Sky;

public class NightModelTests
{
    // The window model interpolates Sun/Moon on the grid and freezes the apparent place at mid-span; the exact
    // functions do neither. Both agree to < 1″, so the fine-grid checks allow 0.001° (3.6″).
    private const double Tol = 0.001;

    private static Site Polar(double minAlt = 20) => new(
        Guid.Empty, "polar test site", 78.0, 15.0, 50, minAlt, 45, 30, 1.5, 21.0, 5500, 0.2, SiteStatus.Open);

    [Theory]
    [InlineData("2026-01-15", 18.0, 11)]
    [InlineData("2026-06-21", 18.0, 12)]
    [InlineData("2026-10-10", 12.0, 13)]
    [InlineData("2027-07-18", 18.0, 14)]
    public void VisibilityWindows_SeededRandomTargets_NeverIncludeForbiddenMinutes(string night, double depth, int seed)
    {
        var site = ReferenceSite.Site(minAltitudeDeg: 25, sunAvoidanceDeg: 45, moonAvoidanceDeg: 30);
        var model = NightModel.For(site, DateOnly.Parse(night), new NightOptions { TwilightDepthDeg = depth });
        var observer = ReferenceSite.Observer;
        var rng = new Random(seed);
        const double MaxAirmass = 2.0;
        double altLimit = model.AltitudeLimitDeg(MaxAirmass);
        int checkedMinutes = 0;
        for (int k = 0; k < 25; k++)
        {
            var target = new SkyTarget(rng.NextDouble() * 360, Math.Asin(2 * rng.NextDouble() - 1) * 180 / Math.PI);
            var vis = model.VisibilityWindows(target, MaxAirmass);
            foreach (var w in vis.Windows)
            {
                Assert.True(w.StartUtc >= model.DarkWindow.Window!.Value.StartUtc && w.EndUtc <= model.DarkWindow.Window!.Value.EndUtc);
                for (var t = w.StartUtc; t <= w.EndUtc; t = t.AddMinutes(1))
                {
                    AssertAllowed(model, observer, target, t, altLimit, depth, site);
                    checkedMinutes++;
                }

                AssertAllowed(model, observer, target, w.EndUtc, altLimit, depth, site);
            }
        }

        Assert.True(checkedMinutes > 1000, $"only {checkedMinutes} minutes were checked");
    }

    [Theory]
    [InlineData("2026-03-20", 21)]
    [InlineData("2026-08-28", 22)]
    public void VisibilityWindows_SeededRandomTargets_CoverEveryClearlyAllowedMinute(string night, int seed)
    {
        // Oracle: scan the night minute by minute with the exact functions; every minute that passes every limit
        // by more than 0.01° must lie inside a window (the grid search may not miss time).
        var site = ReferenceSite.Site(minAltitudeDeg: 25, sunAvoidanceDeg: 45, moonAvoidanceDeg: 30);
        var model = NightModel.For(site, DateOnly.Parse(night));
        var dark = model.DarkWindow.Window!.Value;
        var rng = new Random(seed);
        for (int k = 0; k < 12; k++)
        {
            var target = new SkyTarget(rng.NextDouble() * 360, -90 + rng.NextDouble() * 120);
            var vis = model.VisibilityWindows(target, 2.0);
            double altLimit = vis.AltitudeLimitDeg;
            for (var t = dark.StartUtc.AddMinutes(1); t < dark.EndUtc; t = t.AddMinutes(3))
            {
                var moon = model.MoonHorizontal(t);
                bool clearlyAllowed = model.AltitudeDeg(target, t) > altLimit + 0.01
                    && model.SunSeparationDeg(target, t) > 45.01
                    && (moon.AltitudeDeg < -0.01 || model.MoonSeparationDeg(target, t) > 30.01);
                if (clearlyAllowed)
                {
                    Assert.Contains(vis.Windows, w => w.Contains(t));
                }
            }
        }
    }

    private static void AssertAllowed(NightModel model, Observer observer, SkyTarget target, DateTimeOffset t, double altLimit, double depth, Site site)
    {
        double alt = model.AltitudeDeg(target, t);
        Assert.True(alt >= altLimit - Tol, $"{target} at {t:O}: altitude {alt:F4} < {altLimit:F4}");
        double sunAlt = model.SunAltitudeDeg(t);
        Assert.True(sunAlt <= -depth + Tol, $"{t:O}: Sun at {sunAlt:F4}° above −{depth}°");
        double sunSep = model.SunSeparationDeg(target, t);
        Assert.True(sunSep >= site.SunAvoidanceDeg - Tol, $"{target} at {t:O}: Sun separation {sunSep:F3}");
        if (SkyPositions.MoonHorizontal(observer, t).AltitudeDeg > 0.01)
        {
            double moonSep = model.MoonSeparationDeg(target, t);
            Assert.True(moonSep >= site.MoonAvoidanceDeg - Tol, $"{target} at {t:O}: Moon separation {moonSep:F3}");
        }
    }

    [Fact]
    public void DarkWindow_ReferenceNight_MatchesAstronomicalTwilight()
    {
        // check-values §2a, night 2026-01-15: eve −18° 01:23:03, morn −18° 08:22:50 UTC. Tolerance 5 s (see twilight tests).
        var model = NightModel.For(ReferenceSite.Site(), new DateOnly(2026, 1, 15));
        Assert.Equal(Darkness.Normal, model.DarkWindow.Kind);
        var w = model.DarkWindow.Window!.Value;
        Assert.InRange((w.StartUtc - DateTimeOffset.Parse("2026-01-16T01:23:03Z")).TotalSeconds, -5, 5);
        Assert.InRange((w.EndUtc - DateTimeOffset.Parse("2026-01-16T08:22:50Z")).TotalSeconds, -5, 5);
    }

    [Theory]
    [InlineData("2026-03-20")]
    [InlineData("2026-06-21")]
    public void Twilights_GridRefinedTimes_AgreeWithExactSunAltitude(string night)
    {
        // Oracle: the exact (non-grid) Sun altitude at each reported time equals −depression within 0.002°
        // (the Sun moves ≤ 0.25°/min, so 0.002° is 0.5 s; the grid interpolation error is far smaller).
        var model = NightModel.For(ReferenceSite.Site(), DateOnly.Parse(night));
        foreach (var tw in model.Twilights)
        {
            Assert.InRange(model.SunAltitudeDeg(tw.EveningUtc!.Value) + tw.DepressionDeg, -0.002, 0.002);
            Assert.InRange(model.SunAltitudeDeg(tw.MorningUtc!.Value) + tw.DepressionDeg, -0.002, 0.002);
        }
    }

    [Fact]
    public void VisibilityWindows_CaseC1Target_IsVisibleAtTheReferenceInstant()
    {
        // check-values §2b C1: 05h00m −30° is at altitude 77.46° at 2026-01-16T03:00Z with the Sun at −31.85°
        // and the Moon below the horizon, so a window must contain that instant.
        var model = NightModel.For(ReferenceSite.Site(30, 45, 30), new DateOnly(2026, 1, 15));
        var vis = model.VisibilityWindows(new SkyTarget(75, -30), 2.0);
        Assert.Equal(VisibilityReason.Visible, vis.Reason);
        Assert.Contains(vis.Windows, w => w.Contains(DateTimeOffset.Parse("2026-01-16T03:00:00Z")));
    }

    [Fact]
    public void For_PolarSiteInJune_HasNoDarkTimeAndNoWindows()
    {
        // 78° N at the June solstice: midnight Sun (Sun's lowest altitude ≈ 90 − 78 − 23.4 + … > 0; common practice).
        var model = NightModel.For(Polar(), new DateOnly(2026, 6, 21));
        Assert.Equal(Darkness.NeverDark, model.DarkWindow.Kind);
        Assert.Null(model.DarkWindow.Window);
        var sunset = model.Twilights.Single(t => t.DepressionDeg == 0.833);
        Assert.Null(sunset.EveningUtc);
        Assert.Null(sunset.MorningUtc);
        var vis = model.VisibilityWindows(new SkyTarget(180, 60), 3.0);
        Assert.Equal(VisibilityReason.NoDarkTime, vis.Reason);
        Assert.Empty(vis.Windows);
    }

    [Fact]
    public void For_PolarSiteInDecemberShallowDepth_IsAlwaysDarkAndCircumpolarTargetIsUpAllNight()
    {
        // 78° N at the December solstice: the Sun peaks near −11.4° (90 − 78 − 23.4), below a 6° depth all day.
        var model = NightModel.For(Polar(), new DateOnly(2026, 12, 21), new NightOptions { TwilightDepthDeg = 6 });
        Assert.Equal(Darkness.AlwaysDark, model.DarkWindow.Kind);
        Assert.Equal(model.StartUtc, model.DarkWindow.Window!.Value.StartUtc);
        Assert.Equal(model.EndUtc, model.DarkWindow.Window!.Value.EndUtc);
        var sunrise = model.Twilights.Single(t => t.DepressionDeg == 0.833);
        Assert.Null(sunrise.EveningUtc);
        Assert.Null(sunrise.MorningUtc);

        // Dec +85° stays 73°–83° high: circumpolar, so apart from Moon avoidance it is observable all 24 h.
        var vis = model.VisibilityWindows(new SkyTarget(100, 85), 3.0);
        Assert.Equal(VisibilityReason.Visible, vis.Reason);
        Assert.True(vis.TotalDuration > TimeSpan.FromHours(10));
    }

    [Fact]
    public void For_PolarSiteInDecemberAstronomicalDepth_HasAShortenedNormalNight()
    {
        // With an 18° depth the noon Sun (−11.4°) is too high, so darkness is interrupted around local noon.
        var model = NightModel.For(Polar(), new DateOnly(2026, 12, 21));
        Assert.Equal(Darkness.Normal, model.DarkWindow.Kind);
        Assert.True(model.DarkWindow.Window!.Value.Duration < TimeSpan.FromHours(24));
        Assert.True(model.DarkWindow.Window!.Value.Duration > TimeSpan.FromHours(12));
    }

    [Fact]
    public void VisibilityWindows_TargetThatNeverRises_ReportsNeverAboveLimit()
    {
        // Dec +70° from latitude −30.5° culminates at 90 − 100.5 = −10.5°: it never rises (spherical geometry).
        var model = NightModel.For(ReferenceSite.Site(20, 45, 30), new DateOnly(2026, 3, 20));
        var vis = model.VisibilityWindows(new SkyTarget(150, 70), 2.0);
        Assert.Equal(VisibilityReason.NeverAboveLimit, vis.Reason);
        Assert.Empty(vis.Windows);
        Assert.True(vis.MaxAltitudeInDarkDeg < 0);
    }

    [Fact]
    public void VisibilityWindows_PolarTargetBelowHorizon_ReportsNeverAboveLimit()
    {
        // From 78° N, Dec −20° culminates at 90 − 78 − 20 = −8°.
        var model = NightModel.For(Polar(), new DateOnly(2026, 12, 21));
        var vis = model.VisibilityWindows(new SkyTarget(30, -20), 3.0);
        Assert.Equal(VisibilityReason.NeverAboveLimit, vis.Reason);
    }

    [Fact]
    public void VisibilityWindows_TargetNextToTheSunInTwilightBand_IsBlocked()
    {
        // With a 0° twilight depth and a 90° Sun avoidance, a target 40° from the Sun is always too close.
        var site = ReferenceSite.Site(0, 90, 0);
        var model = NightModel.For(site, new DateOnly(2026, 3, 20), new NightOptions { TwilightDepthDeg = 0 });
        var sun = SolarPosition.Compute(DateTimeOffset.Parse("2026-03-21T04:00:00Z")).Apparent;
        var vis = model.VisibilityWindows(new SkyTarget((sun.RaDeg + 180) % 360, 0), 40);
        var near = model.VisibilityWindows(new SkyTarget(sun.RaDeg, Math.Clamp(sun.DecDeg - 40, -90, 90)), 40);
        Assert.Equal(VisibilityReason.Visible, vis.Reason);
        Assert.NotEqual(VisibilityReason.Visible, near.Reason);
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(6.0)]
    public void For_BadGridStep_Throws(double step)
    {
        Assert.Throws<ArgumentOutOfRangeException>(() =>
            NightModel.For(ReferenceSite.Site(), new DateOnly(2026, 1, 1), new NightOptions { GridStepMinutes = step }));
    }

    [Fact]
    public void VisibilityWindows_FinerGrid_AgreesWithDefaultGrid()
    {
        // Oracle: a 1-minute grid and the 5-minute grid refine to the same crossings (within 2 s).
        var site = ReferenceSite.Site(30, 45, 30);
        var coarse = NightModel.For(site, new DateOnly(2026, 5, 12));
        var fine = NightModel.For(site, new DateOnly(2026, 5, 12), new NightOptions { GridStepMinutes = 1 });
        var rng = new Random(5);
        for (int k = 0; k < 30; k++)
        {
            var target = new SkyTarget(rng.NextDouble() * 360, -90 + rng.NextDouble() * 110);
            var a = coarse.VisibilityWindows(target, 2.5).Windows;
            var b = fine.VisibilityWindows(target, 2.5).Windows;
            Assert.Equal(b.Count, a.Count);
            for (int i = 0; i < a.Count; i++)
            {
                Assert.InRange((a[i].StartUtc - b[i].StartUtc).TotalSeconds, -2, 2);
                Assert.InRange((a[i].EndUtc - b[i].EndUtc).TotalSeconds, -2, 2);
            }
        }
    }
}

public class NightModelMoonTests
{
    [Theory]
    [InlineData("2026-05-12")]
    [InlineData("2026-08-28")]
    [InlineData("2027-02-06")]
    public void MoonRiseSet_Events_AreCrossingsOfMinus0Point833Degrees(string night)
    {
        // Definition check against the exact topocentric Moon: at each event the altitude is −0.833° within 0.002°
        // (the Moon climbs ≤ 0.25°/min, so 0.5 s of timing error is 0.002°), and it rises (sets) through it.
        var model = NightModel.For(ReferenceSite.Site(), DateOnly.Parse(night));
        var events = model.MoonRiseSet();
        Assert.NotEmpty(events);
        foreach (var e in events)
        {
            Assert.InRange(model.MoonHorizontal(e.Utc).AltitudeDeg, -0.835, -0.831);
            double later = model.MoonHorizontal(e.Utc.AddMinutes(5)).AltitudeDeg;
            Assert.Equal(e.Kind == MoonEventKind.Rise, later > -0.833);
        }
    }
}
