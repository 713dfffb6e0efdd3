// Bounded candidate pool for a night flooded with candidates. Before any light curve is fitted,
// every waiting candidate c gets a bound on the value per hour of spectrograph time it could earn:
//   bound_c = max over units u on which c can rise above u's altitude limit in u's dark time of
//             w_c · Vmax(u) / (overhead_u + t_u(m_c − Δm, n_min, airmass 1, no Moon)) · 3600
//   Vmax(u) = the largest recall of any subtype at any S/N and phase of the surface at R_u (accuracy:
//             A = Σₛ p(s) Σ_b w_b r̂ₛ is a convex combination of recalls), or log₂ K bits
//             (information: I(S;J) ≤ H(S) ≤ log₂ K [1]).
//   Every option the builder makes has value ≤ w·Vmax(u) and lasts at least the overhead plus the
//   exposure of the lowest S/N level at airmass 1 without moonlight for a source brighter than the
//   builder's (the exposure grows with magnitude, S/N and airmass [3]), so its value per hour is
//   below bound_c — provided the source is not brighter than m_c − Δm (m_c: the brightest
//   magnitude seen or predicted; Δm: margin).
//   Visibility: sin h = sin φ sin δ + cos φ cos δ cos H [2, eq. 13.6], so h ≥ h₀ while
//   |H| ≤ acos((sin h₀ − sin φ sin δ)/(cos φ cos δ)); H = LST − α sweeps the dark window's sidereal
//   span. h₀ is lowered by a slack that covers refraction and precession of ICRS to date.
// The pool is the candidates that must stay (in the latest version: stable replans), then the rest
// by bound, highest first, up to the cap; ties by id so the same input always gives the same pool.
//
// References
// [1] T. M. Cover, J. A. Thomas, Elements of Information Theory, 2nd ed., Wiley 2006, eqs. 2.28, 2.45, thm. 2.6.4.
// [2] J. Meeus, Astronomical Algorithms, 2nd ed., Willmann-Bell 1998, ch. 13 (eq. 13.6) and ch. 12 (sidereal time).
// [3] S. B. Howell, Handbook of CCD Astronomy, 2nd ed., Cambridge 2006, §4.4 (the CCD equation).
using Triage.Core.Exposure;
using Triage.Core.Roster;
using Triage.Core.Sky;

namespace Triage.Core.Planning;

/// <summary>What the pool needs to know of a waiting candidate (no photometry, no fit).</summary>
/// <param name="Id">Candidate id.</param>
/// <param name="RaDeg">ICRS right ascension, degrees [0, 360).</param>
/// <param name="DecDeg">ICRS declination, degrees [−90, 90].</param>
/// <param name="ScienceWeight">Science weight, ≥ 0.</param>
/// <param name="BrightestMagnitudeAB">The brightest AB magnitude seen in its photometry or predicted by its stored fit; null when it has no detection.</param>
public sealed record PoolCandidate(string Id, double RaDeg, double DecDeg, double ScienceWeight, double? BrightestMagnitudeAB);

/// <summary>Settings of the pool.</summary>
public sealed record CandidatePoolSettings
{
    /// <summary>Most candidates handed to the planner (those that must stay count too unless they alone exceed it), ≥ 1. Default 2,000.</summary>
    public int MaxCandidates { get; init; } = 2000;

    /// <summary>The bound assumes the source gets this much brighter than the brightest magnitude known, mag ≥ 0. Default 1.</summary>
    public double MagnitudeMargin { get; init; } = 1;

    /// <summary>The altitude limit is lowered by this much for the visibility test (refraction, precession), degrees ≥ 0. Default 1.</summary>
    public double AltitudeSlackDeg { get; init; } = 1;
}

/// <summary>The pool and the record of the cut.</summary>
/// <param name="Kept">Ids handed to the planner: those that must stay (by id), then the rest in order of decreasing bound.</param>
/// <param name="Report">How many were considered, kept and left out, and why.</param>
public sealed record CandidatePoolSelection(IReadOnlyList<string> Kept, CandidatePoolReport Report);

/// <summary>The cut made before planning, stored in the plan.</summary>
/// <param name="Waiting">Candidates waiting for a spectrum when the plan was computed.</param>
/// <param name="Kept">Candidates handed to the planner.</param>
/// <param name="KeptFromPreviousVersion">Of those, kept because the latest version planned them (whatever their bound).</param>
/// <param name="NeverVisible">Left out: below every open unit's altitude limit through its dark time.</param>
/// <param name="NoMagnitude">Left out: no detection, so no exposure can be sized.</param>
/// <param name="TooFaint">Left out: even at the margin brighter, no unit reaches the lowest S/N level within the longest observation.</param>
/// <param name="BelowCut">Left out: bound below the cut.</param>
/// <param name="CutValuePerHour">Bound of the last candidate kept by bound (null when no cut was needed).</param>
/// <param name="Reason">The cut in words.</param>
/// <param name="SameTransient">Left out before the cut: another broker's post of a transient already in the pool, being observed or observed (see <see cref="Triage.Core.Candidates.SameTransient"/>).</param>
public sealed record CandidatePoolReport(
    int Waiting,
    int Kept,
    int KeptFromPreviousVersion,
    int NeverVisible,
    int NoMagnitude,
    int TooFaint,
    int BelowCut,
    double? CutValuePerHour,
    string Reason,
    int SameTransient = 0)
{
    /// <summary>
    /// This report with <paramref name="leftOut"/> posts counted as waiting but left out before the cut as another
    /// broker's post of the same transient.
    /// </summary>
    public CandidatePoolReport WithSameTransient(int leftOut, Triage.Core.Candidates.SameTransientSettings settings)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(leftOut);
        ArgumentNullException.ThrowIfNull(settings);
        return leftOut == 0 ? this : this with
        {
            Waiting = Waiting + leftOut,
            SameTransient = SameTransient + leftOut,
            Reason = Reason + string.Create(System.Globalization.CultureInfo.InvariantCulture,
                $" {leftOut} more {(leftOut == 1 ? "was another broker's post" : "were other brokers' posts")} of a transient already planned, being observed or observed (within {settings.RadiusArcsec:0.##}″ and {settings.MaxDiscoveryGapDays:0.#} days of discovery), so not planned twice."),
        };
    }
}

/// <summary>Pre-selects the candidates worth a light-curve fit and a place in the planning problem.</summary>
public static class CandidatePool
{
    private const double MagnitudeStep = 0.02;
    private const double BrightestTabulated = 5;
    private const double SiderealDegPerSecond = 360.98564736629 / 86400;

    /// <summary>Ranks <paramref name="candidates"/> by their bound and keeps the best.</summary>
    /// <param name="sites">Sites of the network.</param>
    /// <param name="spectrographs">Spectrographs (closed ones and those at closed sites are ignored).</param>
    /// <param name="surface">The active calibration.</param>
    /// <param name="night">Local date of the evening the night starts.</param>
    /// <param name="nowUtc">Nothing is planned before this instant.</param>
    /// <param name="candidates">The waiting candidates (ids unique).</param>
    /// <param name="mustKeep">Ids kept whatever their bound (the latest version's assignments), may be empty.</param>
    /// <param name="objective">What the plan maximises.</param>
    /// <param name="build">The builder's settings (twilight, longest observation).</param>
    /// <param name="settings">Pool settings.</param>
    /// <exception cref="ArgumentException">A setting is out of range.</exception>
    public static CandidatePoolSelection Select(
        IReadOnlyList<Site> sites,
        IReadOnlyList<Spectrograph> spectrographs,
        AccuracySurface surface,
        DateOnly night,
        DateTimeOffset nowUtc,
        IReadOnlyList<PoolCandidate> candidates,
        IReadOnlySet<string> mustKeep,
        PlanObjective objective,
        NightBuildSettings? build = null,
        CandidatePoolSettings? settings = null)
    {
        ArgumentNullException.ThrowIfNull(candidates);
        ArgumentNullException.ThrowIfNull(mustKeep);
        ArgumentNullException.ThrowIfNull(surface);
        build ??= new NightBuildSettings();
        settings ??= new CandidatePoolSettings();
        var (bounds, why) = Evaluate(sites, spectrographs, surface, night, nowUtc, candidates, objective, build, settings);

        // Those that must stay first; then the cap's worth of the rest, found by the bound at the
        // cap's rank (a sort of plain numbers), ties at that bound broken by id.
        var kept = new List<string>();
        var eligible = new List<int>();
        for (var c = 0; c < candidates.Count; c++)
        {
            if (mustKeep.Contains(candidates[c].Id))
            {
                kept.Add(candidates[c].Id);
            }
            else if (why[c] == Exclusion.None)
            {
                eligible.Add(c);
            }
        }

        kept.Sort(StringComparer.Ordinal);
        var fromPrevious = kept.Count;
        var room = Math.Max(0, settings.MaxCandidates - kept.Count);
        var chosen = eligible;
        if (eligible.Count > room)
        {
            var sorted = eligible.Select(c => bounds[c]).ToArray();
            Array.Sort(sorted);
            var threshold = room == 0 ? double.PositiveInfinity : sorted[^room];
            var above = eligible.Where(c => bounds[c] > threshold).ToList();
            var ties = eligible.Where(c => bounds[c] == threshold).OrderBy(c => candidates[c].Id, StringComparer.Ordinal).Take(room - above.Count);
            chosen = [.. above, .. ties];
        }

        var ranked = chosen.OrderByDescending(c => bounds[c]).ThenBy(c => candidates[c].Id, StringComparer.Ordinal).ToList();
        kept.AddRange(ranked.Select(c => candidates[c].Id));
        double? cut = ranked.Count > 0 ? bounds[ranked[^1]] : null;
        var belowCut = eligible.Count - ranked.Count;

        var counts = new int[4];
        for (var c = 0; c < candidates.Count; c++)
        {
            if (why[c] != Exclusion.None && !mustKeep.Contains(candidates[c].Id))
            {
                counts[(int)why[c]]++;
            }
        }

        int Count(Exclusion e) => counts[(int)e];
        var neverVisible = Count(Exclusion.NeverVisible);
        var noMagnitude = Count(Exclusion.NoMagnitude);
        var tooFaint = Count(Exclusion.TooFaint);
        var inv = System.Globalization.CultureInfo.InvariantCulture;
        var reason = belowCut == 0
            ? string.Create(inv, $"All {kept.Count} candidates that could be observed tonight were planned ({neverVisible} never above an altitude limit in dark time, {noMagnitude} without a detection, {tooFaint} too faint even {settings.MagnitudeMargin:F1} mag brighter).")
            : string.Create(inv, $"{candidates.Count} candidates were waiting; {kept.Count} were planned: {fromPrevious} from the latest version, the others with the highest upper bound of value per hour (cut at {cut:G4} per hour, assuming each {settings.MagnitudeMargin:F1} mag brighter than the brightest seen or predicted, at airmass 1, no Moon, the lowest S/N level). Left out: {belowCut} below the cut, {neverVisible} never above an altitude limit in dark time, {noMagnitude} without a detection, {tooFaint} too faint.");
        return new CandidatePoolSelection(kept, new CandidatePoolReport(candidates.Count, kept.Count, fromPrevious, neverVisible, noMagnitude, tooFaint,
            belowCut, belowCut == 0 ? null : cut, reason));
    }

    /// <summary>
    /// The upper bound of value per hour of spectrograph time of each candidate (same order), 0 for
    /// one that can never be planned tonight (never visible, no detection, too faint). Value is in
    /// the objective's units (weighted expected accuracy, or weighted bits).
    /// </summary>
    /// <exception cref="ArgumentException">A setting is out of range.</exception>
    public static double[] UpperBoundsPerHour(
        IReadOnlyList<Site> sites,
        IReadOnlyList<Spectrograph> spectrographs,
        AccuracySurface surface,
        DateOnly night,
        DateTimeOffset nowUtc,
        IReadOnlyList<PoolCandidate> candidates,
        PlanObjective objective,
        NightBuildSettings? build = null,
        CandidatePoolSettings? settings = null)
        => Evaluate(sites, spectrographs, surface, night, nowUtc, candidates, objective, build ?? new NightBuildSettings(), settings ?? new CandidatePoolSettings()).Bounds;

    private static (double[] Bounds, Exclusion[] Why) Evaluate(
        IReadOnlyList<Site> sites, IReadOnlyList<Spectrograph> spectrographs, AccuracySurface surface, DateOnly night, DateTimeOffset nowUtc,
        IReadOnlyList<PoolCandidate> candidates, PlanObjective objective, NightBuildSettings build, CandidatePoolSettings settings)
    {
        ArgumentNullException.ThrowIfNull(sites);
        ArgumentNullException.ThrowIfNull(spectrographs);
        ArgumentNullException.ThrowIfNull(surface);
        ArgumentNullException.ThrowIfNull(candidates);
        if (settings.MaxCandidates < 1 || !(settings.MagnitudeMargin >= 0) || !(settings.AltitudeSlackDeg >= 0))
        {
            throw new ArgumentException("MaxCandidates must be ≥ 1, MagnitudeMargin and AltitudeSlackDeg ≥ 0.", nameof(settings));
        }

        var units = Units(sites, spectrographs, surface, night, nowUtc, objective, build, settings);
        var bounds = new double[candidates.Count];
        var why = new Exclusion[candidates.Count];
        Parallel.For(0, candidates.Count, c => (bounds[c], why[c]) = Bound(candidates[c], units, settings));
        return (bounds, why);
    }

    private enum Exclusion : byte
    {
        None,
        NeverVisible,
        NoMagnitude,
        TooFaint,
    }

    private sealed record PoolUnit(
        double LatitudeDeg,
        double AltitudeLimitDeg,
        double LstStartDeg,
        double LstSpanDeg,
        double BestValue,
        double[] SecondsByMagnitude);

    private static List<PoolUnit> Units(
        IReadOnlyList<Site> sites, IReadOnlyList<Spectrograph> spectrographs, AccuracySurface surface, DateOnly night, DateTimeOffset nowUtc,
        PlanObjective objective, NightBuildSettings build, CandidatePoolSettings settings)
    {
        var siteById = sites.ToDictionary(s => s.Id);
        var nights = new Dictionary<Guid, NightModel>();
        var units = new List<PoolUnit>();
        var lowestSnr = surface.SnrAxis[0];
        var bits = Math.Log2(Math.Max(2, surface.Subtypes.Count));
        foreach (var sg in spectrographs)
        {
            if (!siteById.TryGetValue(sg.SiteId, out var site) || site.Status != SiteStatus.Open || sg.Status != SpectrographStatus.Available)
            {
                continue;
            }

            if (!nights.TryGetValue(site.Id, out var model))
            {
                model = NightModel.For(site, night, build.Night);
                nights[site.Id] = model;
            }

            if (model.DarkWindow.Window is not { } dark)
            {
                continue;
            }

            var from = dark.StartUtc > nowUtc ? dark.StartUtc : nowUtc;
            if (from >= dark.EndUtc)
            {
                continue;
            }

            var best = objective == PlanObjective.Accuracy ? surface.AtResolution(sg.ResolvingPower).MaxRecall() : bits;
            var calculator = ExposureCalculator.For(sg, site);
            var conditions = new ObservingConditions { Airmass = 1, MaxTotalSeconds = Math.Max(1, build.MaxObservationSeconds) };
            var table = new double[(int)Math.Round((NightProblemBuilder.MaxPlannableMagnitude - BrightestTabulated) / MagnitudeStep) + 1];
            for (var i = 0; i < table.Length; i++)
            {
                var estimate = calculator.TimeFor(BrightestTabulated + i * MagnitudeStep, lowestSnr, conditions);
                table[i] = estimate.Reachable ? estimate.ElapsedSeconds : double.PositiveInfinity;
            }

            units.Add(new PoolUnit(site.LatitudeDeg, model.AltitudeLimitDeg(sg.MaxAirmass) - settings.AltitudeSlackDeg,
                SiderealTime.LocalMeanDeg(from, site.LongitudeDeg), (dark.EndUtc - from).TotalSeconds * SiderealDegPerSecond, best, table));
        }

        return units;
    }

    private static (double Bound, Exclusion Why) Bound(PoolCandidate c, List<PoolUnit> units, CandidatePoolSettings settings)
    {
        var visible = false;
        var reachable = false;
        var bound = 0.0;
        foreach (var u in units)
        {
            if (!RisesAbove(c.RaDeg, c.DecDeg, u))
            {
                continue;
            }

            visible = true;
            if (c.BrightestMagnitudeAB is not { } m || !double.IsFinite(m))
            {
                continue;
            }

            // The table's entry at or brighter than the magnitude: never longer than the true exposure.
            var index = (int)Math.Floor((m - settings.MagnitudeMargin - BrightestTabulated) / MagnitudeStep);
            var seconds = u.SecondsByMagnitude[Math.Clamp(index, 0, u.SecondsByMagnitude.Length - 1)];
            if (!double.IsFinite(seconds))
            {
                continue;
            }

            reachable = true;
            bound = Math.Max(bound, c.ScienceWeight * u.BestValue / seconds * 3600);
        }

        if (!visible)
        {
            return (0, Exclusion.NeverVisible);
        }

        if (c.BrightestMagnitudeAB is null || !double.IsFinite(c.BrightestMagnitudeAB.Value))
        {
            return (0, Exclusion.NoMagnitude);
        }

        return reachable ? (bound, Exclusion.None) : (0, Exclusion.TooFaint);
    }

    /// <summary>True when the target is above the unit's (slackened) altitude limit at some instant of its dark time.</summary>
    private static bool RisesAbove(double raDeg, double decDeg, PoolUnit u)
    {
        double phi = u.LatitudeDeg * Angles.DegToRad, delta = decDeg * Angles.DegToRad;
        var denominator = Math.Cos(phi) * Math.Cos(delta);
        var numerator = Math.Sin(u.AltitudeLimitDeg * Angles.DegToRad) - Math.Sin(phi) * Math.Sin(delta);
        if (Math.Abs(denominator) < 1e-12)
        {
            // At a pole (of the sky or of the Earth) the altitude does not change.
            return numerator <= 0;
        }

        var cosLimit = numerator / denominator;
        if (cosLimit > 1)
        {
            return false;
        }

        if (cosLimit <= -1 || u.LstSpanDeg >= 360)
        {
            return cosLimit <= 1;
        }

        var halfWidth = Math.Acos(cosLimit) * Angles.RadToDeg;
        // Hour angle at the window's start, shifted so the visible arc is [0, 2·halfWidth].
        var start = Angles.Normalize360(u.LstStartDeg - raDeg + halfWidth);
        return start <= 2 * halfWidth || start + u.LstSpanDeg >= 360;
    }
}
