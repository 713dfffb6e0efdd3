using System.Security.Claims;
using Microsoft.AspNetCore.Http.HttpResults;
using Triage.Api.Access;
using Triage.Api.Errors;
using Triage.Core.Roster;
using Triage.Storage;
using Triage.Storage.Roster;

namespace Triage.Api.Roster;

/// <summary>
/// Sites and spectrographs. Any key reads; observatory keys manage their own observatory's
/// sites and spectrographs; admins manage all. Writes are conditional on <c>If-Match</c>.
/// </summary>
public static class RosterEndpoints
{
    private const long BodyLimitBytes = 64 * 1024;

    public static IServiceCollection AddRoster(this IServiceCollection services)
    {
        services.AddSingleton<RosterStore>();
        return services;
    }

    public static IEndpointRouteBuilder MapRoster(this IEndpointRouteBuilder app)
    {
        var sites = app.MapGroup("/api/sites").WithTags("Roster");
        sites.MapGet("/", ListSites).RequireAuthorization(Policies.AnyKey).WithName("ListSites");
        sites.MapGet("/{id:guid}", GetSite).RequireAuthorization(Policies.AnyKey).WithName("GetSite");
        sites.MapPost("/", CreateSite).RequireAuthorization(Policies.Observatory).WithBodyLimit(BodyLimitBytes).WithName("CreateSite");
        sites.MapPut("/{id:guid}", ReplaceSite).RequireAuthorization(Policies.Observatory).WithBodyLimit(BodyLimitBytes).WithName("ReplaceSite");
        sites.MapDelete("/{id:guid}", DeleteSite).RequireAuthorization(Policies.Observatory).WithName("DeleteSite");
        sites.MapPost("/{siteId:guid}/spectrographs", CreateSpectrograph).RequireAuthorization(Policies.Observatory).WithBodyLimit(BodyLimitBytes).WithName("CreateSpectrograph");

        var spectrographs = app.MapGroup("/api/spectrographs").WithTags("Roster");
        spectrographs.MapGet("/", ListSpectrographs).RequireAuthorization(Policies.AnyKey).WithName("ListSpectrographs");
        spectrographs.MapGet("/{id:guid}", GetSpectrograph).RequireAuthorization(Policies.AnyKey).WithName("GetSpectrograph");
        spectrographs.MapPut("/{id:guid}", ReplaceSpectrograph).RequireAuthorization(Policies.Observatory).WithBodyLimit(BodyLimitBytes).WithName("ReplaceSpectrograph");
        spectrographs.MapDelete("/{id:guid}", DeleteSpectrograph).RequireAuthorization(Policies.Observatory).WithName("DeleteSpectrograph");

        app.MapGet("/api/network", GetNetwork).WithTags("Roster").RequireAuthorization(Policies.AnyKey).WithName("GetNetwork");
        return app;
    }

    // ---- sites -----------------------------------------------------------------------------

    public static async Task<Results<Ok<IReadOnlyList<SiteResponse>>, ProblemHttpResult>> ListSites(
        RosterStore store, string? status, string? observatory, string? name, CancellationToken ct)
    {
        SiteStatus? s = null;
        if (status is not null)
        {
            if (!RosterText.SiteStatuses.TryGetValue(status, out var parsed))
            {
                return Problems.BadQuery("status", $"must be one of: open, closed; got '{status}'");
            }
            s = parsed;
        }
        var rows = await store.ListSitesAsync(new SiteFilter(s, observatory, name), ct);
        return TypedResults.Ok<IReadOnlyList<SiteResponse>>(rows.Select(SiteResponse.From).ToList());
    }

    public static async Task<Results<Ok<SiteResponse>, ProblemHttpResult>> GetSite(Guid id, RosterStore store, HttpResponse response, CancellationToken ct)
    {
        var site = await store.GetSiteAsync(id, ct);
        if (site is null)
        {
            return Problems.NotFound("id", $"No site {id}.");
        }
        response.Headers.ETag = ETags.Of(site.Version);
        return TypedResults.Ok(SiteResponse.From(site));
    }

    public static async Task<Results<Created<SiteResponse>, ValidationProblem, ProblemHttpResult>> CreateSite(
        SiteRequest request, RosterStore store, ClaimsPrincipal user, TimeProvider clock, HttpResponse response, CancellationToken ct)
    {
        var caller = Caller.From(user);
        if (!TryOwner(caller, request.Observatory, out var owner, out var refusal))
        {
            return refusal;
        }
        var checks = new FieldChecks();
        var site = RosterValidation.ToSite(request, Guid.NewGuid(), owner, checks);
        if (site is null)
        {
            return TypedResults.ValidationProblem(checks.ToDictionary());
        }
        var result = await store.InsertSiteAsync(site, clock.GetUtcNow(), ct);
        if (result.Outcome != WriteOutcome.Done)
        {
            return Problems.Conflict("name", result.Detail ?? "The site exists already.");
        }
        var stored = (await store.GetSiteAsync(site.Id, ct))!;
        response.Headers.ETag = ETags.Of(stored.Version);
        return TypedResults.Created($"/api/sites/{site.Id}", SiteResponse.From(stored));
    }

    public static async Task<Results<Ok<SiteResponse>, ValidationProblem, ProblemHttpResult>> ReplaceSite(
        Guid id, SiteRequest request, RosterStore store, ClaimsPrincipal user, TimeProvider clock,
        HttpRequest http, HttpResponse response, CancellationToken ct)
    {
        if (!ETags.TryReadIfMatch(http, out var ifMatch, out var badCondition))
        {
            return badCondition;
        }
        var current = await store.GetSiteAsync(id, ct);
        if (current is null)
        {
            return Problems.NotFound("id", $"No site {id}.");
        }
        var expected = ifMatch.Expected(current.Version);
        var caller = Caller.From(user);
        if (!caller.Manages(current.Value.Observatory))
        {
            return Problems.Forbidden("id", "This site belongs to another observatory.");
        }
        if (!TryOwner(caller, request.Observatory ?? current.Value.Observatory, out var owner, out var refusal))
        {
            return refusal;
        }
        var checks = new FieldChecks();
        var site = RosterValidation.ToSite(request, id, owner, checks);
        if (site is null)
        {
            return TypedResults.ValidationProblem(checks.ToDictionary());
        }
        var result = await store.UpdateSiteAsync(site, expected, clock.GetUtcNow(), ct);
        return await AfterWrite(result, "name", async () =>
        {
            var stored = (await store.GetSiteAsync(id, ct))!;
            response.Headers.ETag = ETags.Of(stored.Version);
            return TypedResults.Ok(SiteResponse.From(stored));
        });
    }

    public static async Task<Results<NoContent, ProblemHttpResult>> DeleteSite(
        Guid id, RosterStore store, ClaimsPrincipal user, HttpRequest http, CancellationToken ct)
    {
        if (!ETags.TryReadIfMatch(http, out var ifMatch, out var badCondition))
        {
            return badCondition;
        }
        var current = await store.GetSiteAsync(id, ct);
        if (current is null)
        {
            return Problems.NotFound("id", $"No site {id}.");
        }
        var expected = ifMatch.Expected(current.Version);
        if (!Caller.From(user).Manages(current.Value.Observatory))
        {
            return Problems.Forbidden("id", "This site belongs to another observatory.");
        }
        var result = await store.DeleteSiteAsync(id, expected, ct);
        return await AfterWrite(result, "id", () => Task.FromResult(TypedResults.NoContent()));
    }

    // ---- spectrographs ---------------------------------------------------------------------

    public static async Task<Results<Ok<IReadOnlyList<SpectrographResponse>>, ProblemHttpResult>> ListSpectrographs(
        RosterStore store, Guid? siteId, string? status, double? minResolvingPower, double? maxResolvingPower, CancellationToken ct)
    {
        SpectrographStatus? s = null;
        if (status is not null)
        {
            if (!RosterText.SpectrographStatuses.TryGetValue(status, out var parsed))
            {
                return Problems.BadQuery("status", $"must be one of: available, closed; got '{status}'");
            }
            s = parsed;
        }
        if (minResolvingPower is { } lo && (!double.IsFinite(lo) || lo < 0))
        {
            return Problems.BadQuery("minResolvingPower", "must be a finite number ≥ 0");
        }
        if (maxResolvingPower is { } hi && (!double.IsFinite(hi) || hi < 0))
        {
            return Problems.BadQuery("maxResolvingPower", "must be a finite number ≥ 0");
        }
        var rows = await store.ListSpectrographsAsync(new SpectrographFilter(siteId, s, minResolvingPower, maxResolvingPower), ct);
        return TypedResults.Ok<IReadOnlyList<SpectrographResponse>>(rows.Select(SpectrographResponse.From).ToList());
    }

    public static async Task<Results<Ok<SpectrographResponse>, ProblemHttpResult>> GetSpectrograph(
        Guid id, RosterStore store, HttpResponse response, CancellationToken ct)
    {
        var sp = await store.GetSpectrographAsync(id, ct);
        if (sp is null)
        {
            return Problems.NotFound("id", $"No spectrograph {id}.");
        }
        response.Headers.ETag = ETags.Of(sp.Version);
        return TypedResults.Ok(SpectrographResponse.From(sp));
    }

    public static async Task<Results<Created<SpectrographResponse>, ValidationProblem, ProblemHttpResult>> CreateSpectrograph(
        Guid siteId, SpectrographRequest request, RosterStore store, ClaimsPrincipal user, TimeProvider clock,
        HttpResponse response, CancellationToken ct)
    {
        var site = await store.GetSiteAsync(siteId, ct);
        if (site is null)
        {
            return Problems.NotFound("siteId", $"No site {siteId}.");
        }
        if (!Caller.From(user).Manages(site.Value.Observatory))
        {
            return Problems.Forbidden("siteId", "This site belongs to another observatory.");
        }
        var checks = new FieldChecks();
        if (request.SiteId is { } bodySite && bodySite != siteId)
        {
            checks.Fail("siteId", "must match the site in the path (or be omitted)");
        }
        var sp = RosterValidation.ToSpectrograph(request, Guid.NewGuid(), siteId, checks);
        if (sp is null || !checks.IsValid)
        {
            return TypedResults.ValidationProblem(checks.ToDictionary());
        }
        var result = await store.InsertSpectrographAsync(sp, clock.GetUtcNow(), ct);
        if (result.Outcome == WriteOutcome.NotFound)
        {
            return Problems.NotFound("siteId", $"No site {siteId}.");
        }
        if (result.Outcome != WriteOutcome.Done)
        {
            return Problems.Conflict("name", result.Detail ?? "The spectrograph exists already.");
        }
        var stored = (await store.GetSpectrographAsync(sp.Id, ct))!;
        response.Headers.ETag = ETags.Of(stored.Version);
        return TypedResults.Created($"/api/spectrographs/{sp.Id}", SpectrographResponse.From(stored));
    }

    public static async Task<Results<Ok<SpectrographResponse>, ValidationProblem, ProblemHttpResult>> ReplaceSpectrograph(
        Guid id, SpectrographRequest request, RosterStore store, ClaimsPrincipal user, TimeProvider clock,
        HttpRequest http, HttpResponse response, CancellationToken ct)
    {
        if (!ETags.TryReadIfMatch(http, out var ifMatch, out var badCondition))
        {
            return badCondition;
        }
        var current = await store.GetSpectrographAsync(id, ct);
        if (current is null)
        {
            return Problems.NotFound("id", $"No spectrograph {id}.");
        }
        var expected = ifMatch.Expected(current.Version);
        var caller = Caller.From(user);
        var site = await store.GetSiteAsync(current.Value.SiteId, ct);
        if (site is null || !caller.Manages(site.Value.Observatory))
        {
            return Problems.Forbidden("id", "This spectrograph belongs to another observatory.");
        }
        var targetSiteId = request.SiteId ?? current.Value.SiteId;
        if (targetSiteId != current.Value.SiteId)
        {
            var target = await store.GetSiteAsync(targetSiteId, ct);
            if (target is null)
            {
                return TypedResults.ValidationProblem(new Dictionary<string, string[]> { ["siteId"] = [$"no site {targetSiteId}"] });
            }
            if (!caller.Manages(target.Value.Observatory))
            {
                return Problems.Forbidden("siteId", "The target site belongs to another observatory.");
            }
        }
        var checks = new FieldChecks();
        var sp = RosterValidation.ToSpectrograph(request, id, targetSiteId, checks);
        if (sp is null)
        {
            return TypedResults.ValidationProblem(checks.ToDictionary());
        }
        var result = await store.UpdateSpectrographAsync(sp, expected, clock.GetUtcNow(), ct);
        return await AfterWrite(result, "name", async () =>
        {
            var stored = (await store.GetSpectrographAsync(id, ct))!;
            response.Headers.ETag = ETags.Of(stored.Version);
            return TypedResults.Ok(SpectrographResponse.From(stored));
        });
    }

    public static async Task<Results<NoContent, ProblemHttpResult>> DeleteSpectrograph(
        Guid id, RosterStore store, ClaimsPrincipal user, HttpRequest http, CancellationToken ct)
    {
        if (!ETags.TryReadIfMatch(http, out var ifMatch, out var badCondition))
        {
            return badCondition;
        }
        var current = await store.GetSpectrographAsync(id, ct);
        if (current is null)
        {
            return Problems.NotFound("id", $"No spectrograph {id}.");
        }
        var expected = ifMatch.Expected(current.Version);
        var site = await store.GetSiteAsync(current.Value.SiteId, ct);
        if (site is null || !Caller.From(user).Manages(site.Value.Observatory))
        {
            return Problems.Forbidden("id", "This spectrograph belongs to another observatory.");
        }
        var result = await store.DeleteSpectrographAsync(id, expected, ct);
        return await AfterWrite(result, "id", () => Task.FromResult(TypedResults.NoContent()));
    }

    // ---- network ---------------------------------------------------------------------------

    public static async Task<Ok<IReadOnlyList<NetworkSiteResponse>>> GetNetwork(RosterStore store, CancellationToken ct)
    {
        var sites = await store.ListSitesAsync(new SiteFilter(), ct);
        var instruments = (await store.ListSpectrographsAsync(new SpectrographFilter(), ct))
            .ToLookup(s => s.Value.SiteId);
        return TypedResults.Ok<IReadOnlyList<NetworkSiteResponse>>(sites
            .Select(s => new NetworkSiteResponse(SiteResponse.From(s), instruments[s.Value.Id].Select(SpectrographResponse.From).ToList()))
            .ToList());
    }

    // ---- helpers ---------------------------------------------------------------------------

    /// <summary>Who will own a site: an observatory key always writes its own observatory.</summary>
    private static bool TryOwner(Caller caller, string? requested, out string? owner, out ProblemHttpResult refusal)
    {
        refusal = null!;
        if (caller.IsAdmin)
        {
            owner = string.IsNullOrWhiteSpace(requested) ? null : requested.Trim();
            return true;
        }
        owner = caller.Observatory;
        if (requested is not null && requested != caller.Observatory)
        {
            refusal = Problems.Forbidden("observatory", $"This key manages observatory '{caller.Observatory}' only.");
            return false;
        }
        return true;
    }

    private static async Task<Results<TOk, ValidationProblem, ProblemHttpResult>> AfterWrite<TOk>(
        WriteResult result, string conflictField, Func<Task<TOk>> onDone)
        where TOk : IResult
    {
        return result.Outcome switch
        {
            WriteOutcome.Done => await onDone(),
            WriteOutcome.NotFound => Problems.NotFound("id", "The resource no longer exists."),
            WriteOutcome.VersionMismatch => Problems.Stale(),
            _ => Problems.Conflict(conflictField, result.Detail ?? "Conflict."),
        };
    }

    private static async Task<Results<NoContent, ProblemHttpResult>> AfterWrite(
        WriteResult result, string conflictField, Func<Task<NoContent>> onDone)
    {
        return result.Outcome switch
        {
            WriteOutcome.Done => await onDone(),
            WriteOutcome.NotFound => Problems.NotFound("id", "The resource no longer exists."),
            WriteOutcome.VersionMismatch => Problems.Stale(),
            _ => Problems.Conflict(conflictField, result.Detail ?? "Conflict."),
        };
    }
}
