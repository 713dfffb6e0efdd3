namespace Triage.Core.Sky;

/// <summary>A time interval [StartUtc, EndUtc] in UTC.</summary>
public readonly record struct TimeWindow(DateTimeOffset StartUtc, DateTimeOffset EndUtc)
{
    /// <summary>Length of the window.</summary>
    public TimeSpan Duration => EndUtc - StartUtc;

    /// <summary>Whether <paramref name="utc"/> lies inside the window (ends included).</summary>
    public bool Contains(DateTimeOffset utc) => utc >= StartUtc && utc <= EndUtc;
}

/// <summary>Options of a <see cref="NightModel"/>.</summary>
public sealed record NightOptions
{
    /// <summary>
    /// Depression of the Sun's centre below the horizon that makes the sky dark, degrees. Default 18
    /// (astronomical twilight): the dark-sky brightness the exposure model assumes only holds once the
    /// Sun is 18° down. 12 (nautical) gains about an hour per night for bright targets. Range 0–30.
    /// </summary>
    public double TwilightDepthDeg { get; init; } = 18;

    /// <summary>Step of the precomputed grid, minutes, in (0, 5]. Default 5. Crossings are then refined by bisection to 0.02 s.</summary>
    public double GridStepMinutes { get; init; } = 5;

    /// <summary>
    /// When true (default) the Moon-avoidance angle applies only while the Moon's centre is above the
    /// horizon; a set Moon cannot light the pointing. When false it applies all night.
    /// </summary>
    public bool MoonAvoidanceOnlyWhenMoonUp { get; init; } = true;

    /// <summary>Depression angles reported by <see cref="NightModel.Twilights"/>, degrees. Default 0.833 (sunset/sunrise), 6, 12, 18.</summary>
    public IReadOnlyList<double> ReportedDepressionsDeg { get; init; } = [0.833, 6, 12, 18];
}

/// <summary>How dark a night gets at the chosen twilight depth.</summary>
public enum Darkness
{
    /// <summary>The Sun goes below the depth in the evening and comes back up in the morning.</summary>
    Normal,

    /// <summary>The Sun never goes below the depth (midnight Sun or bright summer twilight at high latitude).</summary>
    NeverDark,

    /// <summary>The Sun stays below the depth for the whole 24 h span (polar night): the window is the whole span.</summary>
    AlwaysDark,
}

/// <summary>The dark part of a night.</summary>
/// <param name="Kind">Normal, never dark, or always dark.</param>
/// <param name="Window">The dark interval, null when <see cref="Darkness.NeverDark"/>.</param>
/// <param name="TwilightDepthDeg">The Sun depression that defines darkness, degrees.</param>
public sealed record DarkWindow(Darkness Kind, TimeWindow? Window, double TwilightDepthDeg);

/// <summary>The Sun crossing one altitude on a night.</summary>
/// <param name="DepressionDeg">Depression of the Sun's centre below the horizon, degrees (0.833 = sunset/sunrise).</param>
/// <param name="EveningUtc">When the Sun goes down through it; null when it does not in the night's span.</param>
/// <param name="MorningUtc">When the Sun comes up through it; null when it does not in the night's span.</param>
public sealed record TwilightTimes(double DepressionDeg, DateTimeOffset? EveningUtc, DateTimeOffset? MorningUtc);

/// <summary>Why a target has (or has no) visibility windows.</summary>
public enum VisibilityReason
{
    /// <summary>At least one window.</summary>
    Visible,

    /// <summary>The night has no dark time at the chosen twilight depth.</summary>
    NoDarkTime,

    /// <summary>The target never reaches the altitude/airmass limit during the dark time (includes never rising).</summary>
    NeverAboveLimit,

    /// <summary>It is high enough at some dark time, but always too near the Sun or the Moon then.</summary>
    BlockedByAvoidance,
}

/// <summary>A target's observable intervals on one night.</summary>
/// <param name="Reason">Why there are (no) windows.</param>
/// <param name="Windows">Disjoint windows in time order; empty unless <see cref="VisibilityReason.Visible"/>.</param>
/// <param name="AltitudeLimitDeg">Altitude limit used: the larger of the site limit and the airmass limit.</param>
/// <param name="MaxAltitudeInDarkDeg">Highest airless altitude on the grid during the dark time, degrees (NaN when there is no dark time).</param>
public sealed record TargetVisibility(
    VisibilityReason Reason,
    IReadOnlyList<TimeWindow> Windows,
    double AltitudeLimitDeg,
    double MaxAltitudeInDarkDeg)
{
    /// <summary>Total observable time.</summary>
    public TimeSpan TotalDuration => Windows.Aggregate(TimeSpan.Zero, (sum, w) => sum + w.Duration);
}

/// <summary>Whether the Moon rises or sets.</summary>
public enum MoonEventKind
{
    Rise,
    Set,
}

/// <summary>A moonrise or moonset.</summary>
/// <param name="Kind">Rise or set.</param>
/// <param name="Utc">When the Moon's centre crosses −0.833° topocentric altitude.</param>
public readonly record struct MoonEvent(MoonEventKind Kind, DateTimeOffset Utc);
