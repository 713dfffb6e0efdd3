// From roster, candidates, calibration and night to the planning problem:
//   units: available spectrographs at open sites, available = dark window ∩ [now, ∞), shrunk by a margin;
//   windows: the target's visibility windows (altitude, airmass, Sun, Moon, darkness) ∩ availability,
//            shrunk by the margin and cut into chunks of at most a few hours;
//   per chunk and S/N level n on the calibration axis: exposure t(n) from the CCD equation at the
//            chunk's worst airmass, the Moon at its middle and the magnitude m + k·σ_m (so n is
//            reached with margin), duration = t + overhead; value = w·A or w·I from the accuracy
//            surface at (R, n, phase belief at the chunk's middle).
// The final safety check re-evaluates every planned minute with the exact sky functions.
using System.Globalization;
using Triage.Core.Exposure;
using Triage.Core.Roster;
using Triage.Core.Sky;

namespace Triage.Core.Planning;

/// <summary>Settings of the problem builder.</summary>
public sealed record NightBuildSettings
{
    /// <summary>What the plan maximises. Default accuracy.</summary>
    public PlanObjective Objective { get; init; } = PlanObjective.Accuracy;

    /// <summary>Night model settings (twilight depth etc.). Default: astronomical twilight (18°).</summary>
    public NightOptions Night { get; init; } = new();

    /// <summary>Visibility windows are shrunk by this much at each end, s. Default 60: a safety margin against rounding of the crossing times.</summary>
    public double WindowMarginSeconds { get; init; } = 60;

    /// <summary>Longest chunk a window is cut into, h. Default 3: exposures are computed at the chunk's worst airmass.</summary>
    public double ChunkHours { get; init; } = 3;

    /// <summary>Plan for magnitude + k·σ so the S/N is reached with margin. Default k = 1.</summary>
    public double MagnitudeSigmaMargin { get; init; } = 1;

    /// <summary>Longest total integration of one observation, s. Default 7,200 (2 h).</summary>
    public double MaxObservationSeconds { get; init; } = 7200;

    /// <summary>Value given up per unit of cost. Default 0.</summary>
    public double PricePerCostUnit { get; init; }

    /// <summary>Network cost cap for the night. Default none.</summary>
    public double? NetworkCostCap { get; init; }

    /// <summary>
    /// Spectrographs still busy with an observation kept from an earlier plan version (replanning):
    /// nothing new starts on them before the given instant. Default none.
    /// </summary>
    public IReadOnlyDictionary<Guid, DateTimeOffset>? BusyUntilUtc { get; init; }

    /// <summary>
    /// Replanning: per spectrograph, the part of tonight's budget still free (the nightly budget less what earlier
    /// versions' work under way or over used), s ≥ 0; a unit not listed has its whole nightly budget. Default none.
    /// </summary>
    public IReadOnlyDictionary<Guid, double>? RemainingBudgetSeconds { get; init; }

    /// <summary>Spans when a site or one unit is closed (weather, engineering, another programme): hard constraints. Default none.</summary>
    public IReadOnlyList<UnitClosure> Closures { get; init; } = [];

    /// <summary>Current conditions per site id, used in the exposure model instead of the site's typical values. Default none.</summary>
    public IReadOnlyDictionary<Guid, SiteConditions> Conditions { get; init; } = new Dictionary<Guid, SiteConditions>();

    /// <summary>Assignments of the previous plan version to keep unless moving them gains more than <see cref="StabilityShare"/> (replanning). Default none.</summary>
    public IReadOnlyList<PreviousAssignment> Previous { get; init; } = [];

    /// <summary>
    /// A previous assignment is worth (1 + this) × its value to the solver, so a change must gain more than this share
    /// of the value of every assignment it undoes. 0…1; default 0.1.
    /// </summary>
    public double StabilityShare { get; init; } = 0.1;

    /// <summary>
    /// Replanning: the most changes the new version may make to the previous one's assignments that still fit (see
    /// <see cref="PlanningProblem.ChurnBudget"/>; <see cref="NightReplan.ChurnBudget"/> derives it from the entries
    /// ahead). Null: no limit. Default none.
    /// </summary>
    public int? ChurnBudget { get; init; }

    /// <summary>Settings of <see cref="PlanObjective.Identification"/> (ignored by the other objectives). Default: τ = 0.9, escalation on.</summary>
    public SequentialPlanSettings Sequential { get; init; } = new();
}

/// <summary>Settings of the sequential (identification) objective.</summary>
public sealed record SequentialPlanSettings
{
    /// <summary>Posterior probability τ at which a candidate counts as identified. Default 0.9.</summary>
    public double Confidence { get; init; } = Identification.PosteriorUpdate.DefaultConfidence;

    /// <summary>Value escalating unsettled answers to the sharpest available unit. Default true.</summary>
    public bool Escalate { get; init; } = true;

    /// <summary>S/N per resolution element assumed for the follow-up spectrum. Default 20.</summary>
    public double FollowUpSnr { get; init; } = 20;

    /// <summary>
    /// q: share of unsettled results the remaining high-R capacity can take, 0…1. Default 0.5 (the
    /// season simulator sets it each night from the pool and the capacity).
    /// </summary>
    public double CapacityShare { get; init; } = 0.5;

    /// <summary>Where each unit's confusion channel comes from. Default: the calibration's (no outcome learning).</summary>
    public IUnitChannels? Channels { get; init; }
}

/// <summary>A unit's confusion channel: the calibration's, or the calibration combined with the unit's outcomes.</summary>
public interface IUnitChannels
{
    /// <summary>Fills C(j|k) (K·K) for a spectrum on unit <paramref name="unitId"/> at S/N and phase.</summary>
    /// <returns>True when the calibration grid was clamped.</returns>
    bool Fill(string unitId, ResolutionSlice slice, double snr, PhaseBelief phase, Span<double> channel);
}

/// <summary>A span when a site (all its units) or one spectrograph is closed.</summary>
/// <param name="SiteId">The site.</param>
/// <param name="SpectrographId">One unit of it, or null for the whole site.</param>
/// <param name="FromUtc">Start of the closure.</param>
/// <param name="ToUtc">End of the closure (after the start).</param>
public sealed record UnitClosure(Guid SiteId, Guid? SpectrographId, DateTimeOffset FromUtc, DateTimeOffset ToUtc);

/// <summary>Conditions reported by a site for tonight; a null member keeps the site's typical value.</summary>
/// <param name="SeeingArcsec">Seeing FWHM, arcsec (&gt; 0).</param>
/// <param name="ExtinctionOffsetMag">Extra grey extinction (clouds, dust) added to every target's magnitude, mag (≥ 0 dims).</param>
/// <param name="SkyBrightnessMagArcsec2">Measured dark-sky brightness, AB mag/arcsec², replacing the site's value.</param>
public sealed record SiteConditions(double? SeeingArcsec, double? ExtinctionOffsetMag, double? SkyBrightnessMagArcsec2);

/// <summary>An assignment in the previous plan version (replanning): candidate, unit, start and open-shutter time.</summary>
public sealed record PreviousAssignment(string CandidateId, string SpectrographId, DateTimeOffset StartUtc, double ExposureSeconds);

/// <summary>The problem built for one night, with what the safety check and the report need.</summary>
public sealed class PlanningNight
{
    private readonly Dictionary<Guid, NightModel> _nights;
    private readonly (Site Site, Spectrograph Spectrograph)[] _unitRoster;
    private readonly ITargetForecast[] _targets;

    private readonly SecondsWindow[][] _closed;

    internal PlanningNight(PlanningProblem problem, Dictionary<Guid, NightModel> nights, (Site, Spectrograph)[] unitRoster, ITargetForecast[] targets, List<string> notes, SecondsWindow[][] closed)
    {
        _closed = closed;
        Problem = problem;
        _nights = nights;
        _unitRoster = unitRoster;
        _targets = targets;
        Notes = notes;
    }

    /// <summary>The problem in solver terms.</summary>
    public PlanningProblem Problem { get; }

    /// <summary>Diagnostics of the build (closed sites, polar nights, calibration gaps, clamped values).</summary>
    public IReadOnlyList<string> Notes { get; }

    /// <summary>Airmass of an option's target at <paramref name="seconds"/> from the epoch.</summary>
    public double AirmassAt(int option, double seconds)
    {
        var o = Problem.Options[option];
        var night = _nights[_unitRoster[o.Unit].Site.Id];
        return night.Airmass(_targets[o.Candidate].Position, Problem.EpochUtc.AddSeconds(seconds)) ?? double.PositiveInfinity;
    }

    /// <summary>Angular distance from an option's target to the Moon at <paramref name="seconds"/> from the epoch, degrees.</summary>
    public double MoonSeparationAt(int option, double seconds)
    {
        var o = Problem.Options[option];
        return _nights[_unitRoster[o.Unit].Site.Id].MoonSeparationDeg(_targets[o.Candidate].Position, Problem.EpochUtc.AddSeconds(seconds));
    }

    /// <summary>ICRS position of a candidate (index into the problem's candidates).</summary>
    public SkyTarget PositionOf(int candidate) => _targets[candidate].Position;

    /// <summary>
    /// Independent final check of every observation against its site's Sun avoidance, altitude and
    /// airmass limits, Moon avoidance and dark window, sampled every <paramref name="sampleSeconds"/>
    /// and at both ends with the exact sky functions (not the precomputed windows).
    /// </summary>
    /// <returns>Candidate index → reason, for every observation that breaks a limit.</returns>
    public IReadOnlyDictionary<int, string> SafetyViolations(IReadOnlyList<PlannedObservation> observations, double sampleSeconds = 60)
    {
        var violations = new Dictionary<int, string>();
        foreach (var obs in observations)
        {
            var option = Problem.Options[obs.Option];
            var (site, spectrograph) = _unitRoster[option.Unit];
            var night = _nights[site.Id];
            var target = _targets[option.Candidate].Position;
            var altitudeLimit = night.AltitudeLimitDeg(spectrograph.MaxAirmass);
            var start = Problem.EpochUtc.AddSeconds(obs.StartSeconds);
            var end = start.AddSeconds(option.Levels[obs.Level].DurationSeconds);
            var dark = night.DarkWindow.Window;
            string? why = null;
            if (dark is not { } d || start < d.StartUtc || end > d.EndUtc)
            {
                why = "outside the site's dark window";
            }
            else if (_closed[option.Unit].Any(x => obs.StartSeconds < x.ToSeconds && x.FromSeconds < obs.StartSeconds + option.Levels[obs.Level].DurationSeconds))
            {
                why = "inside a closure of the site or unit";
            }

            for (var t = start; why is null; t = t.AddSeconds(sampleSeconds))
            {
                if (t > end)
                {
                    t = end;
                }

                var inv = CultureInfo.InvariantCulture;
                var altitude = night.AltitudeDeg(target, t);
                var sunSeparation = night.SunSeparationDeg(target, t);
                var sunAltitude = night.SunAltitudeDeg(t);
                if (altitude < altitudeLimit)
                {
                    why = string.Create(inv, $"altitude {altitude:F2}° below the limit {altitudeLimit:F2}° at {t:HH:mm:ss}Z");
                }
                else if (sunSeparation < site.SunAvoidanceDeg)
                {
                    why = string.Create(inv, $"{sunSeparation:F1}° from the Sun, inside the avoidance angle {site.SunAvoidanceDeg:F1}° at {t:HH:mm:ss}Z");
                }
                else if (sunAltitude > -night.Options.TwilightDepthDeg)
                {
                    why = string.Create(inv, $"Sun at {sunAltitude:F2}°, above −{night.Options.TwilightDepthDeg:F0}° at {t:HH:mm:ss}Z");
                }
                else if ((!night.Options.MoonAvoidanceOnlyWhenMoonUp || night.MoonHorizontal(t).AltitudeDeg > 0)
                         && night.MoonSeparationDeg(target, t) < site.MoonAvoidanceDeg)
                {
                    why = string.Create(inv, $"inside the Moon-avoidance angle {site.MoonAvoidanceDeg:F1}° at {t:HH:mm:ss}Z");
                }

                if (t == end)
                {
                    break;
                }
            }

            if (why is not null)
            {
                violations[option.Candidate] = $"Removed by the final safety check on {spectrograph.Name}: {why}.";
            }
        }

        return violations;
    }
}

/// <summary>Builds the night's planning problem from the roster, candidates and calibration.</summary>
public static class NightProblemBuilder
{
    /// <summary>Predicted magnitudes fainter than this (AB) are treated as unobservable by any unit.</summary>
    public const double MaxPlannableMagnitude = 30;

    /// <summary>Builds the problem for the night starting on the local evening of <paramref name="night"/>.</summary>
    /// <param name="sites">Sites of the network.</param>
    /// <param name="spectrographs">Spectrographs (those at closed sites or not available are skipped).</param>
    /// <param name="targets">Candidates with their forecasts.</param>
    /// <param name="surface">The active calibration as an accuracy surface.</param>
    /// <param name="night">Local date of the evening the night starts.</param>
    /// <param name="nowUtc">Nothing is planned before this instant (replanning during the night).</param>
    /// <param name="settings">Builder settings.</param>
    /// <exception cref="ArgumentException">Duplicate ids, or a spectrograph at an unknown site.</exception>
    public static PlanningNight Build(
        IReadOnlyList<Site> sites,
        IReadOnlyList<Spectrograph> spectrographs,
        IReadOnlyList<ITargetForecast> targets,
        AccuracySurface surface,
        DateOnly night,
        DateTimeOffset nowUtc,
        NightBuildSettings? settings = null)
    {
        ArgumentNullException.ThrowIfNull(sites);
        ArgumentNullException.ThrowIfNull(spectrographs);
        ArgumentNullException.ThrowIfNull(targets);
        ArgumentNullException.ThrowIfNull(surface);
        settings ??= new NightBuildSettings();
        var inv = CultureInfo.InvariantCulture;
        var notes = new List<string>(surface.Notes);
        var siteById = sites.ToDictionary(s => s.Id);
        if (targets.Select(t => t.Id).Distinct(StringComparer.Ordinal).Count() != targets.Count)
        {
            throw new ArgumentException("Candidate ids must be unique.", nameof(targets));
        }

        var nights = new Dictionary<Guid, NightModel>();
        var roster = new List<(Site Site, Spectrograph Spectrograph, SecondsWindow Available)>();
        var margin = settings.WindowMarginSeconds;
        foreach (var sg in spectrographs)
        {
            if (!siteById.TryGetValue(sg.SiteId, out var site))
            {
                throw new ArgumentException($"Spectrograph '{sg.Name}' refers to unknown site {sg.SiteId}.", nameof(spectrographs));
            }

            if (site.Status != SiteStatus.Open || sg.Status != SpectrographStatus.Available)
            {
                continue;
            }

            if (!nights.TryGetValue(site.Id, out var model))
            {
                model = NightModel.For(site, night, settings.Night);
                nights[site.Id] = model;
                if (model.DarkWindow.Window is null)
                {
                    notes.Add($"Site '{site.Name}' has no dark time on {night:yyyy-MM-dd} at {settings.Night.TwilightDepthDeg}° twilight.");
                }
            }

            roster.Add((site, sg, default));
        }

        var darkStarts = nights.Values.Where(n => n.DarkWindow.Window is not null).Select(n => n.DarkWindow.Window!.Value.StartUtc).ToList();
        // The epoch is the night's first dark start even when replanning later, so that the start grid of every
        // version of a night is the same and an unchanged assignment keeps its exact start.
        var epoch = darkStarts.Count > 0 ? darkStarts.Min() : nowUtc;

        double Seconds(DateTimeOffset t) => (t - epoch).TotalSeconds;
        var units = new List<PlanningUnit>();
        var unitRoster = new List<(Site, Spectrograph)>();
        var nightSpans = new List<SecondsWindow>();
        var closedSpans = new List<SecondsWindow[]>();
        foreach (var (site, sg, _) in roster)
        {
            var dark = nights[site.Id].DarkWindow.Window;
            if (dark is not { } d)
            {
                continue;
            }

            // The margin keeps new work off the dark window's edges and off "right now"; after an observation kept from
            // the previous version the unit is free at once (the previous version had its next entry back to back).
            var earliest = Math.Max(Seconds(d.StartUtc), Seconds(nowUtc)) + margin;
            if (settings.BusyUntilUtc is { } busy && busy.TryGetValue(sg.Id, out var until))
            {
                earliest = Math.Max(earliest, Seconds(until));
            }
            var available = new SecondsWindow(earliest, Seconds(d.EndUtc) - margin);
            if (available.LengthSeconds <= 0)
            {
                continue;
            }

            var budget = Math.Max(0, sg.NightlyBudgetHours * 3600);
            if (settings.RemainingBudgetSeconds is { } remaining && remaining.TryGetValue(sg.Id, out var left))
            {
                budget = Math.Clamp(left, 0, budget);
            }

            units.Add(new PlanningUnit(sg.Id.ToString(), sg.Name, site.Name, sg.ResolvingPower, available, budget, sg.CostPerHour));
            unitRoster.Add((site, sg));
            nightSpans.Add(new SecondsWindow(Seconds(d.StartUtc) + margin, Seconds(d.EndUtc) - margin));
            closedSpans.Add(settings.Closures
                .Where(x => x.SiteId == site.Id && (x.SpectrographId is null || x.SpectrographId == sg.Id) && x.ToUtc > x.FromUtc)
                .Select(x => new SecondsWindow(Seconds(x.FromUtc) - margin, Seconds(x.ToUtc) + margin))
                .OrderBy(x => x.FromSeconds).ToArray());
        }

        var slices = unitRoster.Select(u => surface.AtResolution(u.Item2.ResolvingPower)).ToArray();
        foreach (var (slice, (_, sg)) in slices.Zip(unitRoster).Where(x => x.First.ResolutionClamped))
        {
            notes.Add(string.Create(inv, $"Spectrograph '{sg.Name}' has R={sg.ResolvingPower:F0}, outside the calibrated R range {surface.Resolutions[0]:F0}–{surface.Resolutions[^1]:F0}; the edge of the grid is used."));
        }

        // Reported conditions replace the site's typical seeing and sky; a transparency loss dims every target.
        var calculators = unitRoster.Select(u => ExposureCalculator.For(u.Item2, WithConditions(u.Item1, settings.Conditions))).ToArray();
        var dimming = unitRoster.Select(u => settings.Conditions.TryGetValue(u.Item1.Id, out var sc) ? sc.ExtinctionOffsetMag ?? 0 : 0).ToArray();
        // Only the measured S/N levels: a noiseless cell is no exposure anyone can take.
        var snrLevels = surface.FiniteSnrLevels;
        var sequential = settings.Objective == PlanObjective.Identification ? settings.Sequential : null;
        var followUnit = sequential is { Escalate: true } && units.Count > 0
            ? Enumerable.Range(0, units.Count).MaxBy(u => units[u].ResolvingPower)
            : -1;

        // Candidates are independent: built in parallel, gathered in input order.
        (PlanningCandidate Candidate, List<PlanOption> Options, bool Clamped) BuildCandidate(int c)
        {
            var target = targets[c];
            var options = new List<PlanOption>();
            var prior = surface.AlignPrior(target.SubtypePrior);
            var anyVisible = false;
            var anyLevel = false;
            var anyWindowTooShort = false;
            var clamped = false;
            var visibilityCache = new Dictionary<(Guid, double), TargetVisibility>();
            var moonCache = new Dictionary<(Guid, DateTimeOffset), MoonlightGeometry>();
            var airmassCache = new Dictionary<(Guid, double, double), double>();
            for (var u = 0; u < units.Count; u++)
            {
                var (site, sg) = unitRoster[u];
                var nightModel = nights[site.Id];
                if (!visibilityCache.TryGetValue((site.Id, sg.MaxAirmass), out var visibility))
                {
                    visibility = nightModel.VisibilityWindows(target.Position, sg.MaxAirmass);
                    visibilityCache[(site.Id, sg.MaxAirmass)] = visibility;
                }

                foreach (var w in visibility.Windows)
                {
                    // Chunks are cut from the whole night's visibility window (not from "now"), so that every
                    // version of a night sizes an observation in the same chunk the same way.
                    var nightWindow = new SecondsWindow(Seconds(w.StartUtc) + margin, Seconds(w.EndUtc) - margin).Intersect(nightSpans[u]);
                    if (nightWindow.LengthSeconds <= 0 || nightWindow.Intersect(units[u].Available).LengthSeconds <= 0)
                    {
                        continue;
                    }

                    var chunks = Math.Max(1, (int)Math.Ceiling(nightWindow.LengthSeconds / (settings.ChunkHours * 3600)));
                    var chunkLength = nightWindow.LengthSeconds / chunks;
                    for (var k = 0; k < chunks; k++)
                    {
                        var chunk = new SecondsWindow(nightWindow.FromSeconds + k * chunkLength, nightWindow.FromSeconds + (k + 1) * chunkLength);
                        var open = OpenPieces(chunk.Intersect(units[u].Available), closedSpans[u]);
                        if (open.Count == 0)
                        {
                            continue;
                        }

                        anyVisible = true;
                        var from = epoch.AddSeconds(chunk.FromSeconds);
                        var mid = epoch.AddSeconds((chunk.FromSeconds + chunk.ToSeconds) / 2);
                        var to = epoch.AddSeconds(chunk.ToSeconds);
                        if (!airmassCache.TryGetValue((site.Id, chunk.FromSeconds, chunk.ToSeconds), out var worstAirmass))
                        {
                            // Airmass has one minimum (transit) per night, so the worst of a chunk is at an end;
                            // the middle is included for chunks that straddle a lower culmination.
                            worstAirmass = Math.Max(
                                nightModel.Airmass(target.Position, from) ?? double.PositiveInfinity,
                                Math.Max(nightModel.Airmass(target.Position, mid) ?? double.PositiveInfinity, nightModel.Airmass(target.Position, to) ?? double.PositiveInfinity));
                            airmassCache[(site.Id, chunk.FromSeconds, chunk.ToSeconds)] = worstAirmass;
                        }

                        if (!double.IsFinite(worstAirmass))
                        {
                            continue;
                        }

                        if (!moonCache.TryGetValue((site.Id, mid), out var moon))
                        {
                            moon = nightModel.Moonlight(target.Position, mid);
                            moonCache[(site.Id, mid)] = moon;
                        }

                        var magnitude = target.MagnitudeAt(mid);
                        var planningMagnitude = magnitude.MagnitudeAB + settings.MagnitudeSigmaMargin * magnitude.SigmaMag + dimming[u];
                        if (!double.IsFinite(planningMagnitude) || planningMagnitude > MaxPlannableMagnitude)
                        {
                            // No usable light curve (or one extrapolated to nothing): the exposure cannot be sized.
                            continue;
                        }

                        var phase = target.PhaseAt(mid);
                        var longest = open.Max(p => p.LengthSeconds);
                        var conditions = new ObservingConditions
                        {
                            Airmass = worstAirmass,
                            Moon = moon,
                            MaxTotalSeconds = Math.Max(1, Math.Min(settings.MaxObservationSeconds, longest - sg.OverheadSeconds)),
                        };
                        var levels = new List<ExposureLevel>();
                        foreach (var snr in snrLevels)
                        {
                            var estimate = conditions.MaxTotalSeconds <= 1 ? null : calculators[u].TimeFor(planningMagnitude, snr, conditions);
                            if (estimate is null || !estimate.Reachable || estimate.ElapsedSeconds > longest)
                            {
                                // "Too faint" only when the S/N cannot be reached at all within the longest observation allowed;
                                // otherwise the window is what is too short.
                                anyWindowTooShort |= levels.Count == 0 && calculators[u].TimeFor(planningMagnitude, snr,
                                    conditions with { MaxTotalSeconds = settings.MaxObservationSeconds }).Reachable;
                                break;
                            }

                            var value = slices[u].Evaluate(prior, snr, phase);
                            clamped |= value.Clamped && !slices[u].ResolutionClamped;
                            string? explanation = null;
                            double unweighted;
                            if (sequential is not null)
                            {
                                var v = SequentialLevelValue(sequential, units, slices, u, followUnit, prior, snr, phase);
                                unweighted = v.Total;
                                explanation = followUnit >= 0 ? Identification.SequentialValuation.Explain(v, surface.Subtypes, units[followUnit].ResolvingPower) : null;
                            }
                            else
                            {
                                unweighted = settings.Objective == PlanObjective.Accuracy ? value.ExpectedAccuracy : value.InformationBits;
                            }

                            levels.Add(new ExposureLevel(snr, estimate.ExposureSeconds, estimate.ElapsedSeconds, value.ExpectedAccuracy,
                                value.InformationBits, target.ScienceWeight * unweighted, estimate.ExposureCount) { Explanation = explanation });
                        }

                        if (levels.Count > 0)
                        {
                            anyLevel = true;
                            options.AddRange(open.Select(piece => new PlanOption(c, u, piece, levels, worstAirmass, magnitude.MagnitudeAB, clamped)));
                        }
                    }
                }
            }

            var standing = anyLevel ? CandidateStanding.Plannable
                : anyWindowTooShort ? CandidateStanding.WindowTooShort
                : anyVisible ? CandidateStanding.TooFaint : CandidateStanding.NeverVisible;
            return (new PlanningCandidate(target.Id, target.ScienceWeight, standing), options, clamped);
        }

        var built = Enumerable.Range(0, targets.Count).AsParallel().AsOrdered().Select(BuildCandidate).ToArray();
        var candidates = built.Select(b => b.Candidate).ToList();
        var options = built.SelectMany(b => b.Options).ToList();
        var clampedCandidates = built.Count(b => b.Clamped);

        if (clampedCandidates > 0)
        {
            notes.Add($"{clampedCandidates} candidates had a phase or S/N outside the calibration grid; the grid's edge values were used for them.");
        }

        var candidateIndex = candidates.Select((x, i) => (x.Id, i)).ToDictionary(x => x.Id, x => x.i, StringComparer.Ordinal);
        var unitIndex = units.Select((x, i) => (x.Id, i)).ToDictionary(x => x.Id, x => x.i, StringComparer.OrdinalIgnoreCase);
        var anchors = settings.Previous
            .Where(p => candidateIndex.ContainsKey(p.CandidateId) && unitIndex.ContainsKey(p.SpectrographId))
            .Select(p => new PlanAnchor(candidateIndex[p.CandidateId], unitIndex[p.SpectrographId], Seconds(p.StartUtc), p.ExposureSeconds))
            .ToArray();
        var problem = new PlanningProblem(epoch, units, candidates, options, settings.Objective, settings.PricePerCostUnit, settings.NetworkCostCap)
        {
            Anchors = anchors,
            StabilityShare = settings.StabilityShare,
            ChurnBudget = anchors.Length == 0 ? null : settings.ChurnBudget,
            IdentificationConfidence = settings.Sequential.Confidence,
        };
        return new PlanningNight(problem, nights, unitRoster.ToArray(), targets.ToArray(), notes, closedSpans.ToArray());
    }

    private static Site WithConditions(Site site, IReadOnlyDictionary<Guid, SiteConditions> conditions) =>
        conditions.TryGetValue(site.Id, out var c)
            ? site with { SeeingArcsec = c.SeeingArcsec ?? site.SeeingArcsec, DarkSkyMagArcsec2 = c.SkyBrightnessMagArcsec2 ?? site.DarkSkyMagArcsec2 }
            : site;

    /// <summary><paramref name="window"/> minus the (sorted) closed spans: the open pieces, in order.</summary>
    private static List<SecondsWindow> OpenPieces(SecondsWindow window, IReadOnlyList<SecondsWindow> closed)
    {
        var pieces = new List<SecondsWindow>();
        var from = window.FromSeconds;
        foreach (var x in closed)
        {
            if (x.ToSeconds <= from || x.FromSeconds >= window.ToSeconds)
            {
                continue;
            }

            if (x.FromSeconds > from)
            {
                pieces.Add(new SecondsWindow(from, x.FromSeconds));
            }

            from = Math.Max(from, x.ToSeconds);
        }

        if (window.ToSeconds > from)
        {
            pieces.Add(new SecondsWindow(from, window.ToSeconds));
        }

        return pieces.Where(p => p.LengthSeconds > 0).ToList();
    }

    private static Identification.SequentialValue SequentialLevelValue(
        SequentialPlanSettings sequential, List<PlanningUnit> units, ResolutionSlice[] slices, int u, int followUnit,
        double[] prior, double snr, PhaseBelief phase)
    {
        var k = prior.Length;
        var channel = new double[k * k];
        Fill(sequential, units[u].Id, slices[u], snr, phase, channel);
        var follow = Array.Empty<double>();
        if (followUnit >= 0 && units[followUnit].ResolvingPower > units[u].ResolvingPower)
        {
            follow = new double[k * k];
            Fill(sequential, units[followUnit].Id, slices[followUnit], sequential.FollowUpSnr, phase, follow);
        }

        return Identification.SequentialValuation.Evaluate(prior, channel, follow, sequential.CapacityShare, sequential.Confidence);
    }

    private static void Fill(SequentialPlanSettings sequential, string unitId, ResolutionSlice slice, double snr, PhaseBelief phase, double[] channel)
    {
        if (sequential.Channels is { } channels)
        {
            channels.Fill(unitId, slice, snr, phase, channel);
        }
        else
        {
            slice.FillChannel(snr, phase, channel);
        }
    }
}
