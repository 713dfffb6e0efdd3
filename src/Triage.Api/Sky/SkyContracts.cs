using Triage.Core.Sky;

namespace Triage.Api.Sky;

/// <summary>A site's night: darkness, twilights and the Moon. Times are UTC, angles degrees.</summary>
public sealed record NightResponse(
    Guid SiteId,
    string LocalDate,
    DateTimeOffset SpanStartUtc,
    DateTimeOffset SpanEndUtc,
    DarkWindowResponse DarkWindow,
    IReadOnlyList<TwilightResponse> Twilights,
    NightMoonResponse Moon);

/// <summary>
/// The dark part of the night at <paramref name="TwilightDepthDeg"/>. <paramref name="Kind"/> is <c>normal</c>,
/// <c>never-dark</c> (no window: midnight Sun or bright summer twilight) or <c>always-dark</c> (polar night: the
/// whole 24 h span).
/// </summary>
public sealed record DarkWindowResponse(string Kind, double TwilightDepthDeg, DateTimeOffset? StartUtc, DateTimeOffset? EndUtc, double Hours);

/// <summary>The Sun's centre crossing −<paramref name="DepressionDeg"/> (0.833 = sunset/sunrise); null when it does not.</summary>
public sealed record TwilightResponse(double DepressionDeg, DateTimeOffset? EveningUtc, DateTimeOffset? MorningUtc);

/// <summary>
/// The Moon on the night: illuminated fraction and phase angle at <paramref name="AtUtc"/> (the middle of the dark
/// window, or local mean midnight when the night has no dark time; <paramref name="At"/> says which), and every
/// moonrise and moonset in the 24 h span.
/// </summary>
public sealed record NightMoonResponse(double Illumination, double PhaseAngleDeg, DateTimeOffset AtUtc, string At, IReadOnlyList<MoonEventResponse> RiseSet);

/// <summary>A moonrise (<c>rise</c>) or moonset (<c>set</c>): the Moon's centre crossing −0.833° topocentric altitude.</summary>
public sealed record MoonEventResponse(string Kind, DateTimeOffset Utc);

/// <summary>Targets whose visibility is asked for, and an optional airmass limit.</summary>
public sealed record VisibilityRequest(IReadOnlyList<VisibilityTargetRequest?>? Targets, double? MaxAirmass);

/// <summary>A target: the caller's id and its ICRS position in degrees.</summary>
public sealed record VisibilityTargetRequest(string? Id, double? RaDeg, double? DecDeg);

/// <summary>Visibility of each posted target on one night at one site.</summary>
/// <param name="MaxAirmassSource"><c>request</c>, <c>spectrograph</c> (the most permissive available spectrograph at the site) or <c>default</c> (3).</param>
/// <param name="AltitudeLimitDeg">The larger of the site's minimum altitude and the altitude of <paramref name="MaxAirmass"/>.</param>
public sealed record VisibilityResponse(
    Guid SiteId,
    string LocalDate,
    DarkWindowResponse DarkWindow,
    double MaxAirmass,
    string MaxAirmassSource,
    double AltitudeLimitDeg,
    double SunAvoidanceDeg,
    double MoonAvoidanceDeg,
    IReadOnlyList<TargetVisibilityResponse> Targets);

/// <summary>
/// One target's windows. <paramref name="Reason"/> is <c>visible</c>, <c>no-dark-time</c>, <c>never-above-limit</c>
/// (includes never rising) or <c>blocked-by-avoidance</c> (high enough, but too near the Sun or the Moon whenever it is).
/// <paramref name="MaxAltitudeInDarkDeg"/> is the highest airless altitude during the dark time (null without dark time).
/// </summary>
public sealed record TargetVisibilityResponse(
    string Id,
    double RaDeg,
    double DecDeg,
    string Reason,
    IReadOnlyList<WindowResponse> Windows,
    double ObservableHours,
    double? MaxAltitudeInDarkDeg);

/// <summary>An observable interval; the start is rounded up and the end down to the second, so it never grows.</summary>
public sealed record WindowResponse(DateTimeOffset StartUtc, DateTimeOffset EndUtc);

/// <summary>
/// An exposure estimate request: exactly one of <paramref name="Snr"/> (time for this S/N) and <paramref name="Seconds"/>
/// (S/N in this open-shutter time). Conditions default to airmass 1, the site's seeing, no moonlight and the
/// spectrograph's reference wavelength.
/// </summary>
public sealed record ExposureRequest(
    double? MagnitudeAb,
    double? Snr,
    double? Seconds,
    double? Airmass,
    double? MoonIllumination,
    double? MoonSeparationDeg,
    double? MoonAltitudeDeg,
    double? SeeingArcsec,
    double? WavelengthAngstrom);

/// <summary>An exposure estimate for one registered spectrograph; S/N per resolution element (see <paramref name="SnrConvention"/>).</summary>
/// <param name="Reachable">False when the requested S/N needs more than <paramref name="MaxTotalSeconds"/>; the figures then give the best S/N within that time.</param>
/// <param name="Seconds">Total open-shutter time, split into <paramref name="ExposureCount"/> equal sub-exposures.</param>
/// <param name="ElapsedSeconds">Open-shutter time plus the spectrograph's overhead (once per observation).</param>
public sealed record ExposureResponse(
    Guid SpectrographId,
    string SpectrographName,
    double ResolvingPower,
    string SnrConvention,
    double MagnitudeAb,
    double? RequestedSnr,
    double? RequestedSeconds,
    bool Reachable,
    double Snr,
    double Seconds,
    int ExposureCount,
    double SubExposureSeconds,
    double ElapsedSeconds,
    double MaxTotalSeconds,
    ElectronBudgetResponse Electrons,
    ExposureConditionsResponse Conditions);

/// <summary>Electrons in one resolution element over the whole integration; read noise in e⁻ rms over all readouts.</summary>
public sealed record ElectronBudgetResponse(double Source, double Sky, double Dark, double ReadNoise, double ReadNoiseVariance, double Noise);

/// <summary>The conditions the estimate used, defaults filled in.</summary>
public sealed record ExposureConditionsResponse(
    double Airmass,
    double SeeingArcsec,
    double WavelengthAngstrom,
    double ResolutionElementAngstrom,
    int SpatialPixels,
    double MoonIllumination,
    double? MoonAltitudeDeg,
    double? MoonSeparationDeg,
    double SkyMagArcsec2,
    double ExtinctionMagPerAirmass);

/// <summary>Wire names of the core's sky enums (lower-case, hyphenated like the rest of the API).</summary>
internal static class SkyText
{
    public static string Of(Darkness d) => d switch
    {
        Darkness.Normal => "normal",
        Darkness.NeverDark => "never-dark",
        _ => "always-dark",
    };

    public static string Of(VisibilityReason r) => r switch
    {
        VisibilityReason.Visible => "visible",
        VisibilityReason.NoDarkTime => "no-dark-time",
        VisibilityReason.NeverAboveLimit => "never-above-limit",
        _ => "blocked-by-avoidance",
    };

    public static string Of(MoonEventKind k) => k == MoonEventKind.Rise ? "rise" : "set";

    public static DarkWindowResponse Of(DarkWindow d) => new(
        Of(d.Kind), d.TwilightDepthDeg, Nearest(d.Window?.StartUtc), Nearest(d.Window?.EndUtc),
        Math.Round(d.Window?.Duration.TotalHours ?? 0, 4));

    /// <summary>To the nearest whole second (event times; the models are good to a few seconds).</summary>
    public static DateTimeOffset? Nearest(DateTimeOffset? t) =>
        t is { } v ? new DateTimeOffset((v.UtcTicks + TimeSpan.TicksPerSecond / 2) / TimeSpan.TicksPerSecond * TimeSpan.TicksPerSecond, TimeSpan.Zero) : null;

    /// <summary>A window shrunk to whole seconds; kept unrounded when it is shorter than that allows.</summary>
    public static WindowResponse Inward(TimeWindow w)
    {
        const long tick = TimeSpan.TicksPerSecond;
        var start = new DateTimeOffset((w.StartUtc.UtcTicks + tick - 1) / tick * tick, TimeSpan.Zero);
        var end = new DateTimeOffset(w.EndUtc.UtcTicks / tick * tick, TimeSpan.Zero);
        return end > start ? new WindowResponse(start, end) : new WindowResponse(w.StartUtc.ToUniversalTime(), w.EndUtc.ToUniversalTime());
    }
}
