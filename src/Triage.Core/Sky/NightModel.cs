// One site's night: dark window, twilights and per-target visibility windows, fast for many targets.
//
//   Span: local mean noon of the date (12:00 UTC − λ_east/15 h) to the next local mean noon.
//   Grid: nodes every Δ ≤ 5 min; at each node the topocentric Sun and Moon directions (true equator of
//   date) and the apparent sidereal time are tabulated once. Between nodes the directions are linearly
//   interpolated and renormalised (Moon chord error < 0.01″) and LAST(x) = LAST₀ + ω x.
//   A target's apparent place is frozen at the middle of the span (drift < 0.3″ per 12 h).
//   Constraint margins (all ≥ 0 when allowed): sin h − sin h_lim, cos θ_Sun,lim − û·û☉, cos θ_Moon,lim − û·û☾.
//   Runs of non-negative margin on the grid are refined by bisection (16 halvings: 0.005 s) on the allowed
//   side; a local minimum (maximum) near zero is searched by golden section for a hidden dip (window).
//
// References
//   1. J. Meeus, Astronomical Algorithms, 2nd ed. (1998), ch. 13, 15 (rising, transit, setting by interpolation), 25, 47.
//   2. R. P. Brent, Algorithms for Minimization without Derivatives (1973), ch. 5 (golden-section search).
using Triage.Core.Roster;

namespace Triage.Core.Sky;

/// <summary>
/// The sky over one site for one night: twilights, the dark window and fast visibility windows of
/// fixed targets under the site's altitude, Sun- and Moon-avoidance limits.
/// </summary>
/// <remarks>
/// <para>The night of local date D runs from local mean noon of D to local mean noon of D+1
/// (mean solar time of the site's longitude; no time zones).</para>
/// <para>Conventions: altitudes are airless, topocentric, of the body's centre; azimuth from North
/// through East; airmass is Kasten &amp; Young (1989) of the airless altitude; separations are topocentric.</para>
/// <para>Accuracy: alt/az of fixed targets within 1″ of ERFA/astropy; Sun 0.01°; Moon 0.01°; window
/// boundaries within 1 s of the exact crossing of the model. Polar days and nights give
/// <see cref="Darkness.NeverDark"/>/<see cref="Darkness.AlwaysDark"/>, never an exception.</para>
/// <para>Instances are immutable and thread-safe.</para>
/// </remarks>
public sealed class NightModel
{
    private const double MinutesPerDay = 1440.0;
    private const double SiderealRadPerMinute = 2 * Math.PI * 1.00273790935 / MinutesPerDay;
    private const int BisectionSteps = 16;
    private const double NearZeroMargin = 0.05;

    private readonly Observer _observer;
    private readonly double _sinLat;
    private readonly double _cosLat;
    private readonly double _stepMinutes;
    private readonly double _spanMinutes;
    private readonly double _last0Rad;
    private readonly ApparentPlace.Transform _stars;
    private readonly Vec3[] _sun;
    private readonly Vec3[] _moon;
    private readonly double[] _cosLast;
    private readonly double[] _sinLast;
    private readonly double[] _sunSinAlt;
    private readonly double[] _moonSinAlt;
    private readonly double _cosSunLimit;
    private readonly double _cosMoonLimit;
    private readonly int _darkFirstNode;
    private readonly int _darkLastNode;
    private readonly double _darkStartX;
    private readonly double _darkEndX;

    private NightModel(Site site, DateOnly localDate, NightOptions options)
    {
        Site = site;
        LocalDate = localDate;
        Options = options;
        _observer = Observer.FromSite(site);
        _sinLat = Math.Sin(site.LatitudeDeg * Angles.DegToRad);
        _cosLat = Math.Cos(site.LatitudeDeg * Angles.DegToRad);

        var noon = new DateTimeOffset(localDate.ToDateTime(new TimeOnly(12, 0), DateTimeKind.Utc));
        StartUtc = noon.AddHours(-Angles.Normalize180(site.LongitudeDeg) / 15.0);
        EndUtc = StartUtc.AddDays(1);
        _spanMinutes = MinutesPerDay;
        int intervals = (int)Math.Ceiling(MinutesPerDay / options.GridStepMinutes - 1e-9);
        _stepMinutes = MinutesPerDay / intervals;
        int n = intervals + 1;

        double jd0 = AstroTime.JulianDate(StartUtc);
        double tt = AstroTime.TtMinusUtcSeconds / 86400.0;
        _stars = ApparentPlace.Transform.At(jd0 + 0.5 + tt);
        _sun = new Vec3[n];
        _moon = new Vec3[n];
        _cosLast = new double[n];
        _sinLast = new double[n];
        _sunSinAlt = new double[n];
        _moonSinAlt = new double[n];
        for (int i = 0; i < n; i++)
        {
            double jd = jd0 + i * _stepMinutes / MinutesPerDay;
            var snap = SkyPositions.Snapshot.At(_observer, jd, jd + tt, _stars);
            if (i == 0)
            {
                _last0Rad = snap.LastDeg * Angles.DegToRad;
            }

            double last = _last0Rad + SiderealRadPerMinute * i * _stepMinutes;
            _cosLast[i] = Math.Cos(last);
            _sinLast[i] = Math.Sin(last);
            _sun[i] = snap.SunTopocentric();
            _moon[i] = snap.MoonTopocentric();
            _sunSinAlt[i] = SinAltitude(_sun[i], _cosLast[i], _sinLast[i]);
            _moonSinAlt[i] = SinAltitude(_moon[i], _cosLast[i], _sinLast[i]);
        }

        _cosSunLimit = Math.Cos(site.SunAvoidanceDeg * Angles.DegToRad);
        _cosMoonLimit = Math.Cos(site.MoonAvoidanceDeg * Angles.DegToRad);

        Twilights = options.ReportedDepressionsDeg.Select(TwilightAt).ToArray();
        DarkWindow = FindDarkWindow(options.TwilightDepthDeg, out _darkStartX, out _darkEndX);
        _darkFirstNode = (int)Math.Floor(_darkStartX / _stepMinutes);
        _darkLastNode = Math.Min(n - 1, (int)Math.Ceiling(_darkEndX / _stepMinutes));
    }

    /// <summary>The site the night belongs to.</summary>
    public Site Site { get; }

    /// <summary>The local date whose evening starts the night.</summary>
    public DateOnly LocalDate { get; }

    /// <summary>The options in force.</summary>
    public NightOptions Options { get; }

    /// <summary>Start of the modelled span: local mean noon of <see cref="LocalDate"/>, UTC.</summary>
    public DateTimeOffset StartUtc { get; }

    /// <summary>End of the modelled span: 24 h after <see cref="StartUtc"/>.</summary>
    public DateTimeOffset EndUtc { get; }

    /// <summary>The dark part of the night at <see cref="NightOptions.TwilightDepthDeg"/>.</summary>
    public DarkWindow DarkWindow { get; }

    /// <summary>Evening and morning crossings of each depression in <see cref="NightOptions.ReportedDepressionsDeg"/>.</summary>
    public IReadOnlyList<TwilightTimes> Twilights { get; }

    /// <summary>Builds the night model of a site for the night starting on the evening of <paramref name="localDate"/>.</summary>
    /// <exception cref="ArgumentOutOfRangeException">A site coordinate or limit, or an option, is out of range.</exception>
    public static NightModel For(Site site, DateOnly localDate, NightOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(site);
        options ??= new NightOptions();
        if (!(options.GridStepMinutes > 0 && options.GridStepMinutes <= 5))
        {
            throw new ArgumentOutOfRangeException(nameof(options), options.GridStepMinutes, "GridStepMinutes must be in (0, 5].");
        }

        if (!(options.TwilightDepthDeg >= 0 && options.TwilightDepthDeg <= 30))
        {
            throw new ArgumentOutOfRangeException(nameof(options), options.TwilightDepthDeg, "TwilightDepthDeg must be in [0, 30].");
        }

        if (options.ReportedDepressionsDeg.Any(d => !(d >= -5 && d <= 30)))
        {
            throw new ArgumentOutOfRangeException(nameof(options), "ReportedDepressionsDeg must lie in [−5, 30].");
        }

        RequireRange(site.MinAltitudeDeg, 0, 90, nameof(Site.MinAltitudeDeg));
        RequireRange(site.SunAvoidanceDeg, 0, 180, nameof(Site.SunAvoidanceDeg));
        RequireRange(site.MoonAvoidanceDeg, 0, 180, nameof(Site.MoonAvoidanceDeg));
        return new NightModel(site, localDate, options);
    }

    /// <summary>
    /// Visibility windows of a target: dark (Sun below the twilight depth), altitude ≥ the site limit,
    /// airmass ≤ <paramref name="maxAirmass"/>, and Sun/Moon separations ≥ the site's avoidance angles.
    /// </summary>
    /// <param name="target">ICRS position.</param>
    /// <param name="maxAirmass">Airmass limit (e.g. the spectrograph's), ≥ 1.</param>
    /// <exception cref="ArgumentOutOfRangeException">Bad coordinates or an airmass limit below 1.</exception>
    public TargetVisibility VisibilityWindows(SkyTarget target, double maxAirmass)
    {
        double altLimit = AltitudeLimitDeg(maxAirmass);
        target.Validated();
        if (DarkWindow.Kind == Darkness.NeverDark)
        {
            return new TargetVisibility(VisibilityReason.NoDarkTime, [], altLimit, double.NaN);
        }

        var margin = new TargetMargin(this, _stars.Apply(target.UnitVector), Math.Sin(altLimit * Angles.DegToRad));
        int count = _darkLastNode - _darkFirstNode + 1;
        Span<double> nodes = count <= 512 ? stackalloc double[count] : new double[count];
        double maxSinAlt = -2;
        for (int k = 0; k < count; k++)
        {
            int i = _darkFirstNode + k;
            nodes[k] = margin.AtNode(i, out double sinAlt);
            double x = i * _stepMinutes;
            if (x >= _darkStartX && x <= _darkEndX)
            {
                maxSinAlt = Math.Max(maxSinAlt, sinAlt);
            }
        }

        maxSinAlt = Math.Max(maxSinAlt, Math.Max(margin.SinAltitude(_darkStartX), margin.SinAltitude(_darkEndX)));
        var found = FindIntervals(nodes, _darkFirstNode, ref margin);
        var windows = new List<TimeWindow>(found.Count);
        foreach (var (s, e) in found)
        {
            double a = Math.Max(s, _darkStartX), b = Math.Min(e, _darkEndX);
            if (b > a)
            {
                windows.Add(new TimeWindow(ToUtc(a), ToUtc(b)));
            }
        }

        double maxAlt = Math.Asin(Math.Clamp(maxSinAlt, -1, 1)) * Angles.RadToDeg;
        var reason = windows.Count > 0 ? VisibilityReason.Visible
            : maxAlt < altLimit ? VisibilityReason.NeverAboveLimit
            : VisibilityReason.BlockedByAvoidance;
        return new TargetVisibility(reason, windows, altLimit, maxAlt);
    }

    /// <summary>The altitude limit for an airmass limit: the larger of the site minimum and the Kasten–Young altitude of <paramref name="maxAirmass"/>.</summary>
    public double AltitudeLimitDeg(double maxAirmass) => Math.Max(Site.MinAltitudeDeg, Sky.Airmass.AltitudeForAirmassDeg(maxAirmass));

    /// <summary>Airless altitude of a target at an instant, degrees (exact, not from the grid).</summary>
    public double AltitudeDeg(SkyTarget target, DateTimeOffset utc) => Horizontal(target, utc).AltitudeDeg;

    /// <summary>Airless altitude and azimuth (North through East) of a target at an instant.</summary>
    public HorizontalPosition Horizontal(SkyTarget target, DateTimeOffset utc) => SkyPositions.TargetHorizontal(target, _observer, utc);

    /// <summary>Kasten–Young airmass of a target at an instant; null when it is below the horizon.</summary>
    public double? Airmass(SkyTarget target, DateTimeOffset utc) => Sky.Airmass.KastenYoung(AltitudeDeg(target, utc));

    /// <summary>Illuminated fraction of the Moon (0…1) at an instant.</summary>
    public double MoonIlluminationAt(DateTimeOffset utc) => MoonPhase.At(utc).IlluminatedFraction;

    /// <summary>Topocentric target–Moon angle at an instant, degrees.</summary>
    public double MoonSeparationDeg(SkyTarget target, DateTimeOffset utc) => SkyPositions.MoonSeparationDeg(target, _observer, utc);

    /// <summary>Topocentric target–Sun angle at an instant, degrees.</summary>
    public double SunSeparationDeg(SkyTarget target, DateTimeOffset utc) => SkyPositions.SunSeparationDeg(target, _observer, utc);

    /// <summary>Airless topocentric altitude of the Sun's centre, degrees.</summary>
    public double SunAltitudeDeg(DateTimeOffset utc) => SkyPositions.SunHorizontal(_observer, utc).AltitudeDeg;

    /// <summary>Airless topocentric altitude and azimuth of the Moon's centre.</summary>
    public HorizontalPosition MoonHorizontal(DateTimeOffset utc) => SkyPositions.MoonHorizontal(_observer, utc);

    /// <summary>Moonlight geometry (phase angle, Moon altitude, separation) for the exposure model.</summary>
    public MoonlightGeometry Moonlight(SkyTarget target, DateTimeOffset utc) => SkyPositions.Moonlight(target, _observer, utc);

    /// <summary>Evening and morning crossings of the Sun's centre through altitude −<paramref name="depressionDeg"/>.</summary>
    public TwilightTimes TwilightAt(double depressionDeg)
    {
        var sunMargin = new BelowMargin(this, _sun, Math.Sin(-depressionDeg * Angles.DegToRad));
        var found = FindIntervals(BelowNodes(_sunSinAlt, sunMargin.SinLimit), 0, ref sunMargin);
        DateTimeOffset? evening = null, morning = null;
        if (found.Count > 0)
        {
            if (found[0].Start > 0)
            {
                evening = ToUtc(found[0].Start);
            }

            if (found[^1].End < _spanMinutes)
            {
                morning = ToUtc(found[^1].End);
            }
        }

        return new TwilightTimes(depressionDeg, evening, morning);
    }

    /// <summary>
    /// Moonrise and moonset inside the span: the topocentric altitude of the Moon's centre crossing −0.833°
    /// (standard refraction 34′ plus a 16′ semidiameter; parallax is already in the topocentric altitude).
    /// Several events can occur in 24 h; all are listed in time order.
    /// </summary>
    public IReadOnlyList<MoonEvent> MoonRiseSet()
    {
        var margin = new BelowMargin(this, _moon, Math.Sin(-0.833 * Angles.DegToRad));
        var below = FindIntervals(BelowNodes(_moonSinAlt, margin.SinLimit), 0, ref margin);
        var events = new List<MoonEvent>();
        foreach (var (start, end) in below)
        {
            if (start > 0)
            {
                events.Add(new MoonEvent(MoonEventKind.Set, ToUtc(start)));
            }

            if (end < _spanMinutes)
            {
                events.Add(new MoonEvent(MoonEventKind.Rise, ToUtc(end)));
            }
        }

        return events;
    }

    private DarkWindow FindDarkWindow(double depthDeg, out double startX, out double endX)
    {
        var sunMargin = new BelowMargin(this, _sun, Math.Sin(-depthDeg * Angles.DegToRad));
        var found = FindIntervals(BelowNodes(_sunSinAlt, sunMargin.SinLimit), 0, ref sunMargin);
        if (found.Count == 0)
        {
            startX = endX = 0;
            return new DarkWindow(Darkness.NeverDark, null, depthDeg);
        }

        (startX, endX) = found.MaxBy(w => w.End - w.Start);
        var kind = startX <= 0 && endX >= _spanMinutes ? Darkness.AlwaysDark : Darkness.Normal;
        return new DarkWindow(kind, new TimeWindow(ToUtc(startX), ToUtc(endX)), depthDeg);
    }

    private static double[] BelowNodes(double[] sinAltitudes, double sinLimit)
    {
        var nodes = new double[sinAltitudes.Length];
        for (int i = 0; i < nodes.Length; i++)
        {
            nodes[i] = sinLimit - sinAltitudes[i];
        }

        return nodes;
    }

    private DateTimeOffset ToUtc(double minutes) => StartUtc.AddTicks((long)Math.Round(minutes * TimeSpan.TicksPerMinute));

    private double SinAltitude(Vec3 u, double cosLast, double sinLast) =>
        _sinLat * u.Z + _cosLat * (u.X * cosLast + u.Y * sinLast);

    private double SinAltitudeAt(Vec3 u, double x)
    {
        double last = _last0Rad + SiderealRadPerMinute * x;
        return _sinLat * u.Z + _cosLat * (u.X * Math.Cos(last) + u.Y * Math.Sin(last));
    }

    private Vec3 Interpolate(Vec3[] table, double x)
    {
        double f = x / _stepMinutes;
        int i = Math.Clamp((int)Math.Floor(f), 0, table.Length - 2);
        double w = f - i;
        return ((1 - w) * table[i] + w * table[i + 1]).Normalized();
    }

    /// <summary>
    /// Intervals (minutes from the span start) where the margin is ≥ 0, from node values
    /// <paramref name="nodes"/> (node index <paramref name="first"/> onwards) refined on the continuous margin.
    /// </summary>
    private List<(double Start, double End)> FindIntervals<TMargin>(ReadOnlySpan<double> nodes, int first, ref TMargin margin)
        where TMargin : struct, IMargin
    {
        var result = new List<(double, double)>();
        double? open = null;
        int count = nodes.Length;
        for (int k = 0; k < count; k++)
        {
            double x = (first + k) * _stepMinutes;
            bool ok = nodes[k] >= 0;
            if (ok && open is null)
            {
                open = k == 0 ? x : Bisect(ref margin, x - _stepMinutes, x);
            }
            else if (!ok && open is not null)
            {
                result.Add((open.Value, Bisect(ref margin, x, x - _stepMinutes)));
                open = null;
            }

            bool interior = k > 0 && k < count - 1;
            if (interior && ok && nodes[k] <= nodes[k - 1] && nodes[k] <= nodes[k + 1] && nodes[k] < NearZeroMargin)
            {
                // A short dip below zero between three allowed nodes.
                double xm = GoldenSection(ref margin, x - _stepMinutes, x + _stepMinutes, minimise: true);
                if (margin.At(xm) < 0)
                {
                    result.Add((open!.Value, Bisect(ref margin, xm, x - _stepMinutes)));
                    open = Bisect(ref margin, xm, x + _stepMinutes);
                }
            }
            else if (interior && !ok && nodes[k] >= nodes[k - 1] && nodes[k] >= nodes[k + 1] && nodes[k] > -NearZeroMargin)
            {
                // A short allowed peak between three forbidden nodes.
                double xm = GoldenSection(ref margin, x - _stepMinutes, x + _stepMinutes, minimise: false);
                if (margin.At(xm) >= 0)
                {
                    result.Add((Bisect(ref margin, x - _stepMinutes, xm), Bisect(ref margin, x + _stepMinutes, xm)));
                }
            }
        }

        if (open is not null)
        {
            result.Add((open.Value, (first + count - 1) * _stepMinutes));
        }

        result.RemoveAll(w => w.Item2 <= w.Item1);
        return result;
    }

    /// <summary>Bisection between a forbidden point and an allowed point; returns a point on the allowed side.</summary>
    private static double Bisect<TMargin>(ref TMargin margin, double forbidden, double allowed)
        where TMargin : struct, IMargin
    {
        for (int i = 0; i < BisectionSteps; i++)
        {
            double mid = 0.5 * (forbidden + allowed);
            if (margin.At(mid) >= 0)
            {
                allowed = mid;
            }
            else
            {
                forbidden = mid;
            }
        }

        return allowed;
    }

    private static double GoldenSection<TMargin>(ref TMargin margin, double a, double b, bool minimise)
        where TMargin : struct, IMargin
    {
        const double InvPhi = 0.6180339887498949;
        double sign = minimise ? 1 : -1;
        double c = b - InvPhi * (b - a), d = a + InvPhi * (b - a);
        double fc = sign * margin.At(c), fd = sign * margin.At(d);
        for (int i = 0; i < 30; i++)
        {
            if (fc < fd)
            {
                b = d;
                d = c;
                fd = fc;
                c = b - InvPhi * (b - a);
                fc = sign * margin.At(c);
            }
            else
            {
                a = c;
                c = d;
                fc = fd;
                d = a + InvPhi * (b - a);
                fd = sign * margin.At(d);
            }
        }

        return fc < fd ? c : d;
    }

    private static void RequireRange(double value, double min, double max, string name)
    {
        if (!(value >= min && value <= max))
        {
            throw new ArgumentOutOfRangeException(name, value, $"{name} must be in [{min}, {max}].");
        }
    }

    private interface IMargin
    {
        double At(double x);
    }

    /// <summary>Margin of a tabulated body (Sun or Moon) being below an altitude.</summary>
    private readonly struct BelowMargin(NightModel night, Vec3[] table, double sinLimit) : IMargin
    {
        public double SinLimit => sinLimit;

        public double At(double x) => sinLimit - night.SinAltitudeAt(night.Interpolate(table, x), x);
    }

    private readonly struct TargetMargin(NightModel night, Vec3 target, double sinAltLimit) : IMargin
    {
        public double AtNode(int i, out double sinAlt)
        {
            sinAlt = night.SinAltitude(target, night._cosLast[i], night._sinLast[i]);
            return Combine(sinAlt, target.Dot(night._sun[i]), target.Dot(night._moon[i]), night._moonSinAlt[i]);
        }

        public double SinAltitude(double x) => night.SinAltitudeAt(target, x);

        public double At(double x)
        {
            var moon = night.Interpolate(night._moon, x);
            return Combine(
                night.SinAltitudeAt(target, x),
                target.Dot(night.Interpolate(night._sun, x)),
                target.Dot(moon),
                night.SinAltitudeAt(moon, x));
        }

        private double Combine(double sinAlt, double cosSun, double cosMoon, double moonSinAlt)
        {
            double m = Math.Min(sinAlt - sinAltLimit, night._cosSunLimit - cosSun);
            bool moonCounts = !night.Options.MoonAvoidanceOnlyWhenMoonUp || moonSinAlt >= 0;
            return moonCounts ? Math.Min(m, night._cosMoonLimit - cosMoon) : m;
        }
    }
}
