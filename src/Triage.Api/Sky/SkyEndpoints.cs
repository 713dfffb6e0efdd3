using System.Globalization;
using Microsoft.AspNetCore.Http.HttpResults;
using Triage.Api.Access;
using Triage.Api.Errors;
using Triage.Core.Exposure;
using Triage.Core.Roster;
using Triage.Core.Sky;
using Triage.Storage.Roster;

namespace Triage.Api.Sky;

/// <summary>
/// Read-only sky and exposure answers for the registered network: a site's night (darkness, twilights, Moon),
/// visibility windows of posted targets, and exposure estimates for a registered spectrograph. Any valid key.
/// </summary>
public static class SkyEndpoints
{
    /// <summary>Most targets one visibility request may carry.</summary>
    public const int MaxTargets = 5_000;

    /// <summary>Airmass limit when the request gives none and the site has no available spectrograph.</summary>
    public const double FallbackMaxAirmass = 3.0;

    /// <summary>Depths accepted for <c>twilightDepthDeg</c>: civil (6) to astronomical (18) twilight.</summary>
    public const double MinTwilightDepthDeg = 6, MaxTwilightDepthDeg = 18;

    /// <summary>The S/N convention, stated in every exposure answer.</summary>
    public const string SnrConvention =
        "per resolution element (Δλ = λ/R) at the stated wavelength, on the continuum of a flat-f_ν source, "
        + "summed over the element's spectral pixels and the extraction length along the slit";

    private const long VisibilityBodyLimitBytes = 1024 * 1024;
    private const long ExposureBodyLimitBytes = 16 * 1024;
    private const int MaxTargetsWithErrorsListed = 100;

    public static IServiceCollection AddSky(this IServiceCollection services) => services;

    public static IEndpointRouteBuilder MapSky(this IEndpointRouteBuilder app)
    {
        var nights = app.MapGroup("/api/sites/{id:guid}/nights").WithTags("Sky");
        nights.MapGet("/{date}", GetNight).RequireAuthorization(Policies.AnyKey).WithName("GetSiteNight");
        nights.MapPost("/{date}/visibility", PostVisibility).RequireAuthorization(Policies.AnyKey)
            .WithBodyLimit(VisibilityBodyLimitBytes).WithName("GetTargetVisibility");
        app.MapGroup("/api/spectrographs").WithTags("Sky")
            .MapPost("/{id:guid}/exposure", PostExposure).RequireAuthorization(Policies.AnyKey)
            .WithBodyLimit(ExposureBodyLimitBytes).WithName("EstimateExposure");
        return app;
    }

    // ---- night -----------------------------------------------------------------------------

    public static async Task<Results<Ok<NightResponse>, ProblemHttpResult>> GetNight(
        Guid id, string date, string? twilightDepthDeg, RosterStore store, CancellationToken ct)
    {
        if (!TryQuery(date, twilightDepthDeg, out var night, out var depth, out var bad))
        {
            return bad;
        }
        var site = await store.GetSiteAsync(id, ct);
        if (site is null)
        {
            return Problems.NotFound("id", $"No site {id}.");
        }
        if (!TryModel(site.Value, night, depth, out var model, out bad))
        {
            return bad;
        }

        var dark = model.DarkWindow;
        var (at, atName) = dark.Window is { } w
            ? (w.StartUtc + w.Duration / 2, "dark-window-middle")
            : (model.StartUtc.AddHours(12), "local-midnight");
        var phase = MoonPhase.At(at);
        var moon = new NightMoonResponse(
            Math.Round(phase.IlluminatedFraction, 4), Math.Round(phase.PhaseAngleDeg, 3), SkyText.Nearest(at)!.Value, atName,
            model.MoonRiseSet().Select(e => new MoonEventResponse(SkyText.Of(e.Kind), SkyText.Nearest(e.Utc)!.Value)).ToList());
        return TypedResults.Ok(new NightResponse(
            id, night.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture), SkyText.Nearest(model.StartUtc)!.Value, SkyText.Nearest(model.EndUtc)!.Value,
            SkyText.Of(dark),
            model.Twilights.Select(t => new TwilightResponse(t.DepressionDeg, SkyText.Nearest(t.EveningUtc), SkyText.Nearest(t.MorningUtc))).ToList(),
            moon));
    }

    // ---- visibility ------------------------------------------------------------------------

    public static async Task<Results<Ok<VisibilityResponse>, ValidationProblem, ProblemHttpResult>> PostVisibility(
        Guid id, string date, string? twilightDepthDeg, VisibilityRequest request, RosterStore store, CancellationToken ct)
    {
        if (!TryQuery(date, twilightDepthDeg, out var night, out var depth, out var bad))
        {
            return bad;
        }
        var checks = new FieldChecks();
        var targets = ReadTargets(request, checks);
        double? maxAirmass = request.MaxAirmass is null ? null : checks.Number("maxAirmass", request.MaxAirmass, 1, 40);
        if (!checks.IsValid)
        {
            return TypedResults.ValidationProblem(checks.ToDictionary());
        }
        var site = await store.GetSiteAsync(id, ct);
        if (site is null)
        {
            return Problems.NotFound("id", $"No site {id}.");
        }
        var source = "request";
        if (maxAirmass is null)
        {
            var available = await store.ListSpectrographsAsync(new SpectrographFilter(id, SpectrographStatus.Available), ct);
            maxAirmass = available.Count > 0 ? available.Max(s => s.Value.MaxAirmass) : FallbackMaxAirmass;
            source = available.Count > 0 ? "spectrograph" : "default";
        }
        if (!TryModel(site.Value, night, depth, out var model, out bad))
        {
            return bad;
        }

        var answers = new List<TargetVisibilityResponse>(targets.Count);
        foreach (var (targetId, target) in targets)
        {
            ct.ThrowIfCancellationRequested();
            var v = model.VisibilityWindows(target, maxAirmass.Value);
            answers.Add(new TargetVisibilityResponse(
                targetId, target.RaDeg, target.DecDeg, SkyText.Of(v.Reason),
                v.Windows.Select(SkyText.Inward).ToList(),
                Math.Round(v.TotalDuration.TotalHours, 4),
                double.IsFinite(v.MaxAltitudeInDarkDeg) ? Math.Round(v.MaxAltitudeInDarkDeg, 4) : null));
        }
        var s = site.Value;
        return TypedResults.Ok(new VisibilityResponse(
            id, night.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture), SkyText.Of(model.DarkWindow),
            maxAirmass.Value, source, Math.Round(model.AltitudeLimitDeg(maxAirmass.Value), 4),
            s.SunAvoidanceDeg, s.MoonAvoidanceDeg, answers));
    }

    private static List<(string Id, SkyTarget Target)> ReadTargets(VisibilityRequest request, FieldChecks checks)
    {
        var list = new List<(string, SkyTarget)>();
        if (request.Targets is null)
        {
            checks.Fail("targets", "is required: an array of { id, raDeg, decDeg }");
            return list;
        }
        if (request.Targets.Count == 0 || request.Targets.Count > MaxTargets)
        {
            checks.Fail("targets", $"must hold 1 to {MaxTargets} targets; got {request.Targets.Count}");
            return list;
        }
        var seen = new Dictionary<string, int>(StringComparer.Ordinal);
        var badTargets = 0;
        for (var i = 0; i < request.Targets.Count && badTargets < MaxTargetsWithErrorsListed; i++)
        {
            var path = $"targets[{i}]";
            if (request.Targets[i] is not { } t)
            {
                checks.Fail(path, "must be an object { id, raDeg, decDeg }");
                badTargets++;
                continue;
            }
            var wasValid = checks.IsValid;
            var targetId = checks.Text(path + ".id", t.Id);
            var ra = checks.Number(path + ".raDeg", t.RaDeg, 0, 360, maxExclusive: true);
            var dec = checks.Number(path + ".decDeg", t.DecDeg, -90, 90);
            if (targetId.Length > 0 && !seen.TryAdd(targetId, i))
            {
                checks.Fail(path + ".id", $"repeats targets[{seen[targetId]}].id");
            }
            if (wasValid && !checks.IsValid)
            {
                badTargets++;
            }
            list.Add((targetId, new SkyTarget(ra, dec)));
        }
        return list;
    }

    // ---- exposure --------------------------------------------------------------------------

    public static async Task<Results<Ok<ExposureResponse>, ValidationProblem, ProblemHttpResult>> PostExposure(
        Guid id, ExposureRequest request, RosterStore store, CancellationToken ct)
    {
        var checks = new FieldChecks();
        var mag = checks.Number("magnitudeAb", request.MagnitudeAb, -5, 40, minExclusive: true, maxExclusive: true);
        if (request.Snr is null == request.Seconds is null)
        {
            const string message = "give exactly one of snr (time for this S/N) and seconds (S/N in this time)";
            checks.Fail("snr", message);
            checks.Fail("seconds", message);
        }
        double? snr = request.Snr is null ? null : checks.Number("snr", request.Snr, 0, 1e5, minExclusive: true);
        double? seconds = request.Seconds is null ? null : checks.Number("seconds", request.Seconds, 0, 1e7, minExclusive: true);
        var airmass = Optional(checks, "airmass", request.Airmass, 1, 40) ?? 1;
        var illumination = Optional(checks, "moonIllumination", request.MoonIllumination, 0, 1) ?? 0;
        var moonSeparation = Optional(checks, "moonSeparationDeg", request.MoonSeparationDeg, 0, 180) ?? 90;
        var moonAltitude = Optional(checks, "moonAltitudeDeg", request.MoonAltitudeDeg, -90, 90) ?? 45;
        var seeing = request.SeeingArcsec is null ? (double?)null
            : checks.Number("seeingArcsec", request.SeeingArcsec, 0, 30, minExclusive: true, maxExclusive: true);
        if (!checks.IsValid)
        {
            return TypedResults.ValidationProblem(checks.ToDictionary());
        }

        var sp = await store.GetSpectrographAsync(id, ct);
        if (sp is null)
        {
            return Problems.NotFound("id", $"No spectrograph {id}.");
        }
        var site = await store.GetSiteAsync(sp.Value.SiteId, ct);
        if (site is null)
        {
            return Problems.NotFound("id", $"The site of spectrograph {id} no longer exists.");
        }

        ExposureCalculator calculator;
        try
        {
            calculator = ExposureCalculator.For(sp.Value, site.Value);
        }
        catch (ArgumentOutOfRangeException ex)
        {
            return StoredFieldProblem(ex, "The registered spectrograph or its site is outside what the exposure model accepts.");
        }

        MoonlightGeometry? moon = illumination > 0
            ? new MoonlightGeometry(PhaseAngleDegFor(illumination), moonAltitude, moonSeparation)
            : null;
        var conditions = new ObservingConditions { Airmass = airmass, SeeingArcsec = seeing, Moon = moon, WavelengthAngstrom = request.WavelengthAngstrom };
        ExposureEstimate e;
        try
        {
            e = snr is { } wanted ? calculator.TimeFor(mag, wanted, conditions) : calculator.SignalToNoiseFor(mag, seconds!.Value, conditions);
        }
        catch (ArgumentOutOfRangeException ex)
        {
            var field = ExposureFields.GetValueOrDefault(ex.ParamName ?? "", ex.ParamName ?? "body");
            return TypedResults.ValidationProblem(new Dictionary<string, string[]> { [field] = [CoreMessage(ex, sp.Value)] });
        }

        var r = e.Rates;
        var b = e.Electrons;
        return TypedResults.Ok(new ExposureResponse(
            id, sp.Value.Name, sp.Value.ResolvingPower, SnrConvention, mag, snr, seconds,
            e.Reachable, e.SignalToNoise, e.ExposureSeconds, e.ExposureCount, e.SubExposureSeconds, e.ElapsedSeconds,
            conditions.MaxTotalSeconds,
            new ElectronBudgetResponse(b.SourceElectrons, b.SkyElectrons, b.DarkElectrons, b.ReadNoiseElectrons, b.ReadNoiseVariance, b.NoiseElectrons),
            new ExposureConditionsResponse(
                airmass, seeing ?? site.Value.SeeingArcsec, r.WavelengthAngstrom, r.ResolutionElementAngstrom, r.SpatialPixels,
                illumination, moon?.MoonAltitudeDeg, moon?.SeparationDeg, r.SkyMagArcsec2, site.Value.ExtinctionMagPerAirmass)));
    }

    /// <summary>Phase angle i of a Moon whose illuminated fraction is k = (1 + cos i)/2 (Meeus eq. 48.1), degrees.</summary>
    internal static double PhaseAngleDegFor(double illumination) => Math.Acos(2 * illumination - 1) * 180 / Math.PI;

    /// <summary>The core's parameter names (<c>ArgumentException.ParamName</c>) as the request's JSON fields.</summary>
    private static readonly IReadOnlyDictionary<string, string> ExposureFields = new Dictionary<string, string>(StringComparer.Ordinal)
    {
        ["magAB"] = "magnitudeAb",
        ["signalToNoise"] = "snr",
        ["exposureSeconds"] = "seconds",
        [nameof(ObservingConditions.Airmass)] = "airmass",
        [nameof(ObservingConditions.SeeingArcsec)] = "seeingArcsec",
        [nameof(ObservingConditions.WavelengthAngstrom)] = "wavelengthAngstrom",
    };

    private static string CoreMessage(ArgumentOutOfRangeException ex, Spectrograph sp) =>
        ex.ParamName == nameof(ObservingConditions.WavelengthAngstrom)
            ? $"must lie inside this spectrograph's range [{sp.MinWavelengthAngstrom}, {sp.MaxWavelengthAngstrom}] Å"
            : ex.Message.Split(" (Parameter", 2)[0];

    // ---- shared ----------------------------------------------------------------------------

    private static double? Optional(FieldChecks checks, string field, double? value, double min, double max) =>
        value is null ? null : checks.Number(field, value, min, max);

    private static bool TryQuery(string date, string? depthText, out DateOnly night, out double depth, out ProblemHttpResult problem)
    {
        problem = null!;
        depth = 18;
        if (!DateOnly.TryParseExact(date, "yyyy-MM-dd", CultureInfo.InvariantCulture, DateTimeStyles.None, out night)
            || night.Year is < 1900 or > 2100)
        {
            problem = Problems.BadQuery("date", $"must be the local date of the evening as YYYY-MM-DD, years 1900–2100; got '{date}'");
            return false;
        }
        if (depthText is not null
            && (!double.TryParse(depthText, NumberStyles.Float, CultureInfo.InvariantCulture, out depth)
                || !(depth >= MinTwilightDepthDeg && depth <= MaxTwilightDepthDeg)))
        {
            problem = Problems.BadQuery("twilightDepthDeg", $"must be a number of degrees in [{MinTwilightDepthDeg}, {MaxTwilightDepthDeg}]; got '{depthText}'");
            return false;
        }
        return true;
    }

    private static bool TryModel(Site site, DateOnly night, double depth, out NightModel model, out ProblemHttpResult problem)
    {
        problem = null!;
        try
        {
            model = NightModel.For(site, night, new NightOptions { TwilightDepthDeg = depth });
            return true;
        }
        catch (ArgumentOutOfRangeException ex)
        {
            model = null!;
            problem = StoredFieldProblem(ex, "The registered site is outside what the night model accepts.");
            return false;
        }
    }

    /// <summary>A stored roster field the science core refuses: 422, naming the field in camelCase.</summary>
    private static ProblemHttpResult StoredFieldProblem(ArgumentOutOfRangeException ex, string detail)
    {
        var name = ex.ParamName ?? "id";
        var field = name.Length > 0 ? char.ToLowerInvariant(name[0]) + name[1..] : "id";
        return TypedResults.Problem(detail: $"{detail} {ex.Message.Split(" (Parameter", 2)[0]}", statusCode: StatusCodes.Status422UnprocessableEntity,
            title: "Registered data out of the model's range", extensions: new Dictionary<string, object?> { ["field"] = field });
    }
}
