using System.Security.Claims;
using Microsoft.AspNetCore.Http.HttpResults;
using Triage.Api.Access;
using Triage.Api.Errors;
using Triage.Api.Replanning;
using Triage.Storage.NightOperations;
using Triage.Storage.Roster;

namespace Triage.Api.NightOperations;

/// <summary>Body of a closure: the whole site, or one spectrograph of it, closed from <c>fromUtc</c> to <c>toUtc</c>.</summary>
public sealed record ClosureRequest(Guid? SpectrographId, DateTimeOffset? FromUtc, DateTimeOffset? ToUtc, string? Reason, string? Note);

/// <summary>A stored closure.</summary>
public sealed record ClosureResponse(Guid Id, Guid SiteId, Guid? SpectrographId, DateTimeOffset FromUtc, DateTimeOffset ToUtc, string Reason, string? Note, DateTimeOffset CreatedAt)
{
    public static ClosureResponse From(ClosureRow r) => new(r.Id, r.SiteId, r.SpectrographId, r.FromUtc, r.ToUtc, r.Reason, r.Note, r.CreatedAt);
}

/// <summary>Body of a conditions report; at least one of seeing, extinction offset or sky brightness.</summary>
public sealed record ConditionsRequest(DateTimeOffset? MeasuredUtc, DateTimeOffset? ValidUntilUtc, double? SeeingArcsec, double? ExtinctionOffsetMag, double? SkyBrightnessMagArcsec2);

/// <summary>Stored conditions of a site.</summary>
public sealed record ConditionsResponse(Guid Id, Guid SiteId, DateTimeOffset MeasuredUtc, DateTimeOffset ValidUntilUtc, double? SeeingArcsec, double? ExtinctionOffsetMag, double? SkyBrightnessMagArcsec2)
{
    public static ConditionsResponse From(ConditionsRow r) => new(r.Id, r.SiteId, r.MeasuredAt, r.ValidUntil, r.SeeingArcsec, r.ExtinctionOffsetMag, r.SkyBrightnessMagArcsec2);
}

/// <summary>
/// Closures (weather, engineering, another programme) and current conditions, posted by the observatory that owns the
/// site. A closure is a hard constraint of the planner; conditions enter the exposure model. Both replan the affected
/// night from now (event-driven, debounced).
/// </summary>
public static class NightOperationsEndpoints
{
    private static readonly string[] Reasons = ["weather", "engineering", "programme", "other"];

    public static IServiceCollection AddNightOperations(this IServiceCollection services, IConfiguration configuration)
    {
        services.AddSingleton<NightOperationsStore>();
        services.Configure<ReplanOptions>(configuration.GetSection("Triage:Replanning"));
        services.AddSingleton<ReplanScheduler>();
        services.AddHostedService(sp => sp.GetRequiredService<ReplanScheduler>());
        services.AddSingleton<ArrivalWatch>();
        services.AddHostedService(sp => sp.GetRequiredService<ArrivalWatch>());
        return services;
    }

    public static IEndpointRouteBuilder MapNightOperations(this IEndpointRouteBuilder app)
    {
        var sites = app.MapGroup("/api/sites/{siteId:guid}").WithTags("Night operations");
        sites.MapPost("/closures", AddClosure).RequireAuthorization(Policies.Observatory).WithBodyLimit(4 * 1024).WithName("AddClosure");
        sites.MapPost("/conditions", AddConditions).RequireAuthorization(Policies.Observatory).WithBodyLimit(4 * 1024).WithName("AddConditions");
        sites.MapGet("/conditions", CurrentConditions).RequireAuthorization(Policies.AnyKey).WithName("GetConditions");
        var closures = app.MapGroup("/api/closures").WithTags("Night operations");
        closures.MapGet("/", ListClosures).RequireAuthorization(Policies.AnyKey).WithName("ListClosures");
        closures.MapDelete("/{id:guid}", DeleteClosure).RequireAuthorization(Policies.Observatory).WithName("DeleteClosure");
        return app;
    }

    public static async Task<Results<Created<ClosureResponse>, ValidationProblem, ProblemHttpResult>> AddClosure(
        Guid siteId, ClosureRequest request, RosterStore roster, NightOperationsStore store, ReplanScheduler replans,
        ClaimsPrincipal user, TimeProvider clock, CancellationToken ct)
    {
        var (site, refusal) = await OwnedSiteAsync(siteId, roster, user, ct);
        if (refusal is not null)
        {
            return refusal;
        }

        var caller = Caller.From(user);

        var checks = new FieldChecks();
        if (request.FromUtc is null)
        {
            checks.Fail("fromUtc", "is required (ISO 8601 with an offset)");
        }

        if (request.ToUtc is null)
        {
            checks.Fail("toUtc", "is required (ISO 8601 with an offset)");
        }
        else if (request.FromUtc is { } f && request.ToUtc is { } t && (t <= f || t - f > TimeSpan.FromDays(14)))
        {
            checks.Fail("toUtc", "must be after fromUtc and at most 14 days later");
        }

        var reason = request.Reason ?? "other";
        if (!Reasons.Contains(reason, StringComparer.Ordinal))
        {
            checks.Fail("reason", "must be one of " + string.Join(", ", Reasons));
        }
        var note = request.Note is null ? null : checks.Text("note", request.Note, 500);
        if (request.SpectrographId is { } sgId)
        {
            var sg = await roster.GetSpectrographAsync(sgId, ct);
            if (sg is null || sg.Value.SiteId != siteId)
            {
                checks.Fail("spectrographId", "must be a spectrograph of this site (or omitted to close the whole site)");
            }
        }

        if (!checks.IsValid)
        {
            return TypedResults.ValidationProblem(checks.ToDictionary());
        }

        var now = clock.GetUtcNow();
        var row = await store.AddClosureAsync(new ClosureRow(Guid.CreateVersion7(now), siteId, request.SpectrographId, request.FromUtc!.Value.ToUniversalTime(),
            request.ToUtc!.Value.ToUniversalTime(), reason, note, now, caller.PublicId), ct);
        RequestReplans(replans, site.Value.LongitudeDeg, row.FromUtc, row.ToUtc, "closure",
            $"{site.Value.Name}{(row.SpectrographId is null ? "" : " (one unit)")} closed {row.FromUtc:HH:mm}–{row.ToUtc:HH:mm} UTC ({reason})");
        return TypedResults.Created($"/api/closures/{row.Id}", ClosureResponse.From(row));
    }

    /// <summary>The site, or the problem: 404 when unknown, 403 when the key's observatory does not own it.</summary>
    private static async Task<(Triage.Storage.Versioned<Triage.Core.Roster.Site> Site, ProblemHttpResult? Refusal)> OwnedSiteAsync(
        Guid siteId, RosterStore roster, ClaimsPrincipal user, CancellationToken ct)
    {
        var site = await roster.GetSiteAsync(siteId, ct);
        if (site is null)
        {
            return (null!, Problems.NotFound("siteId", $"No site {siteId}."));
        }

        return Caller.From(user).Manages(site.Value.Observatory)
            ? (site, null)
            : (site, Problems.Forbidden("siteId", "This site belongs to another observatory."));
    }

    private static void RequestReplans(ReplanScheduler replans, double longitudeDeg, DateTimeOffset from, DateTimeOffset to, string kind, string detail)
    {
        for (var night = ReplanScheduler.NightOf(from, longitudeDeg); night <= ReplanScheduler.NightOf(to, longitudeDeg); night = night.AddDays(1))
        {
            replans.Request(night, kind, detail);
        }
    }

    public static async Task<Results<Ok<IReadOnlyList<ClosureResponse>>, ProblemHttpResult>> ListClosures(
        DateTimeOffset? fromUtc, DateTimeOffset? toUtc, Guid? siteId, NightOperationsStore store, TimeProvider clock, CancellationToken ct)
    {
        var now = clock.GetUtcNow();
        var from = fromUtc ?? now.AddDays(-1);
        var to = toUtc ?? now.AddDays(2);
        if (to <= from)
        {
            return Problems.BadQuery("toUtc", "must be after fromUtc");
        }

        var rows = await store.ClosuresAsync(from, to, siteId, ct);
        return TypedResults.Ok<IReadOnlyList<ClosureResponse>>(rows.Select(ClosureResponse.From).ToList());
    }

    public static async Task<Results<NoContent, ProblemHttpResult>> DeleteClosure(
        Guid id, RosterStore roster, NightOperationsStore store, ReplanScheduler replans, ClaimsPrincipal user, CancellationToken ct)
    {
        var row = await store.GetClosureAsync(id, ct);
        if (row is null)
        {
            return Problems.NotFound("id", $"No closure {id}.");
        }

        var site = await roster.GetSiteAsync(row.SiteId, ct);
        if (site is null || !Caller.From(user).Manages(site.Value.Observatory))
        {
            return Problems.Forbidden("id", "This closure belongs to another observatory's site.");
        }

        await store.DeleteClosureAsync(id, ct);
        RequestReplans(replans, site.Value.LongitudeDeg, row.FromUtc, row.ToUtc, "closure", $"{site.Value.Name} reopened {row.FromUtc:HH:mm}–{row.ToUtc:HH:mm} UTC");
        return TypedResults.NoContent();
    }

    public static async Task<Results<Created<ConditionsResponse>, ValidationProblem, ProblemHttpResult>> AddConditions(
        Guid siteId, ConditionsRequest request, RosterStore roster, NightOperationsStore store, ReplanScheduler replans,
        ClaimsPrincipal user, TimeProvider clock, CancellationToken ct)
    {
        var (site, refusal) = await OwnedSiteAsync(siteId, roster, user, ct);
        if (refusal is not null)
        {
            return refusal;
        }

        var caller = Caller.From(user);

        var checks = new FieldChecks();
        var seeing = request.SeeingArcsec is null ? (double?)null : checks.Number("seeingArcsec", request.SeeingArcsec, 0, 30, minExclusive: true, maxExclusive: true);
        var extinction = request.ExtinctionOffsetMag is null ? (double?)null : checks.Number("extinctionOffsetMag", request.ExtinctionOffsetMag, -1, 10);
        var sky = request.SkyBrightnessMagArcsec2 is null ? (double?)null : checks.Number("skyBrightnessMagArcsec2", request.SkyBrightnessMagArcsec2, 10, 25);
        if (request.SeeingArcsec is null && request.ExtinctionOffsetMag is null && request.SkyBrightnessMagArcsec2 is null)
        {
            checks.Fail("seeingArcsec", "give at least one of seeingArcsec, extinctionOffsetMag or skyBrightnessMagArcsec2");
        }

        var now = clock.GetUtcNow();
        var measured = request.MeasuredUtc?.ToUniversalTime() ?? now;
        var until = request.ValidUntilUtc?.ToUniversalTime() ?? measured.AddHours(2);
        if (until <= measured || until - measured > TimeSpan.FromDays(2))
        {
            checks.Fail("validUntilUtc", "must be after measuredUtc and at most 2 days later");
        }

        if (!checks.IsValid)
        {
            return TypedResults.ValidationProblem(checks.ToDictionary());
        }

        var row = await store.AddConditionsAsync(new ConditionsRow(Guid.CreateVersion7(now), siteId, measured, until, seeing, extinction, sky, now, caller.PublicId), ct);
        RequestReplans(replans, site.Value.LongitudeDeg, measured, measured, "conditions", $"{site.Value.Name} reported conditions at {measured:HH:mm} UTC");
        return TypedResults.Created($"/api/sites/{siteId}/conditions", ConditionsResponse.From(row));
    }

    public static async Task<Results<Ok<ConditionsResponse>, ProblemHttpResult>> CurrentConditions(
        Guid siteId, DateTimeOffset? atUtc, NightOperationsStore store, TimeProvider clock, CancellationToken ct)
    {
        var rows = await store.ConditionsAtAsync(atUtc ?? clock.GetUtcNow(), siteId, ct);
        return rows.Count == 0
            ? Problems.NotFound("siteId", "No conditions reported for this site at that time; the site's typical values apply.")
            : TypedResults.Ok(ConditionsResponse.From(rows[0]));
    }
}
