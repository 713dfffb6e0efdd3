using Microsoft.AspNetCore.Http.HttpResults;
using Triage.Api.Errors;
using Triage.Storage.Access;

namespace Triage.Api.Access;

/// <summary>Body of a key request.</summary>
public sealed record KeyRequest(string? Name, IReadOnlyList<string>? Scopes, string? Observatory);

/// <summary>A key as listed (never with its secret).</summary>
public sealed record KeyResponse(Guid Id, string PublicId, string Name, IReadOnlyList<string> Scopes, string? Observatory, DateTimeOffset CreatedAt, DateTimeOffset? RevokedAt)
{
    public static KeyResponse From(ApiKeyRow k) =>
        new(k.Id, k.PublicId, k.Name, k.Scopes.Select(KeyStore.ScopeText).ToList(), k.Observatory, k.CreatedAt, k.RevokedAt);
}

/// <summary>A new key: <see cref="Secret"/> is shown this once and never again.</summary>
public sealed record IssuedKeyResponse(KeyResponse Key, string Secret);

public static class KeyEndpoints
{
    public static IEndpointRouteBuilder MapKeys(this IEndpointRouteBuilder app)
    {
        var g = app.MapGroup("/api/keys").WithTags("Access").RequireAuthorization(Policies.Admin);
        g.MapPost("/", IssueKey).WithName("IssueKey").WithBodyLimit(16 * 1024);
        g.MapGet("/", ListKeys).WithName("ListKeys");
        g.MapDelete("/{id:guid}", RevokeKey).WithName("RevokeKey");
        return app;
    }

    public static async Task<Results<Created<IssuedKeyResponse>, ValidationProblem>> IssueKey(
        KeyRequest request, KeyStore keys, TimeProvider clock, CancellationToken ct)
    {
        var checks = new FieldChecks();
        var name = checks.Text("name", request.Name);
        var scopes = new List<Scope>();
        if (request.Scopes is null || request.Scopes.Count == 0)
        {
            checks.Fail("scopes", "needs at least one of: broker, observatory, scheduler, admin");
        }
        else
        {
            for (var i = 0; i < request.Scopes.Count; i++)
            {
                if (KeyStore.TryParseScope(request.Scopes[i] ?? "", out var s))
                {
                    scopes.Add(s);
                }
                else
                {
                    checks.Fail($"scopes[{i}]", $"must be one of: broker, observatory, scheduler, admin; got '{request.Scopes[i]}'");
                }
            }
        }
        string? observatory = null;
        if (scopes.Contains(Scope.Observatory))
        {
            observatory = checks.Text("observatory", request.Observatory);
        }
        else if (request.Observatory is not null)
        {
            checks.Fail("observatory", "only applies to keys with the observatory scope");
        }
        if (!checks.IsValid)
        {
            return TypedResults.ValidationProblem(checks.ToDictionary());
        }
        var issued = await keys.IssueAsync(name, scopes, observatory, clock.GetUtcNow(), ct);
        var body = new IssuedKeyResponse(KeyResponse.From(issued.Key), issued.Secret);
        return TypedResults.Created($"/api/keys/{issued.Key.Id}", body);
    }

    public static async Task<Ok<IReadOnlyList<KeyResponse>>> ListKeys(KeyStore keys, CancellationToken ct) =>
        TypedResults.Ok<IReadOnlyList<KeyResponse>>((await keys.ListAsync(ct)).Select(KeyResponse.From).ToList());

    public static async Task<Results<NoContent, NotFound>> RevokeKey(Guid id, KeyStore keys, KeyCache cache, TimeProvider clock, CancellationToken ct)
    {
        bool revoked = await keys.RevokeAsync(id, clock.GetUtcNow(), ct);
        cache.Forget(id);
        return revoked ? TypedResults.NoContent() : TypedResults.NotFound();
    }
}
