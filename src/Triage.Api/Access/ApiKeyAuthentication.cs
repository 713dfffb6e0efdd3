using System.Security.Claims;
using System.Text.Encodings.Web;
using Microsoft.AspNetCore.Authentication;
using Microsoft.AspNetCore.Mvc;
using Microsoft.Extensions.Options;
using Triage.Storage.Access;

namespace Triage.Api.Access;

/// <summary>Claim types Triage puts on an authenticated key.</summary>
public static class TriageClaims
{
    public const string KeyId = "triage:key-id";
    public const string PublicId = "triage:key-public-id";
    public const string Scope = "triage:scope";
    public const string Observatory = "triage:observatory";
}

/// <summary>
/// Authenticates <c>Authorization: Bearer trk_…</c> keys against their stored hashes.
/// A missing or unknown key is a 401 problem; a known key without the scope is a 403 problem.
/// </summary>
public sealed class ApiKeyAuthenticationHandler(
    IOptionsMonitor<AuthenticationSchemeOptions> options,
    ILoggerFactory logger,
    UrlEncoder encoder,
    KeyCache keys,
    FailedAuthenticationLimit failures,
    IProblemDetailsService problems)
    : AuthenticationHandler<AuthenticationSchemeOptions>(options, logger, encoder)
{
    public const string SchemeName = "TriageKey";

    protected override async Task<AuthenticateResult> HandleAuthenticateAsync()
    {
        var header = Request.Headers.Authorization.ToString();
        if (string.IsNullOrEmpty(header) || Context.GetEndpoint()?.Metadata.GetMetadata<Microsoft.AspNetCore.Authorization.IAllowAnonymous>() is not null)
        {
            // Open endpoints (the health checks) never look at a key, so they never touch the database for one.
            return AuthenticateResult.NoResult();
        }
        if (!header.StartsWith("Bearer ", StringComparison.OrdinalIgnoreCase))
        {
            return Refuse("The Authorization header must read 'Bearer <key>'.");
        }
        var presented = header["Bearer ".Length..].Trim();
        var key = await keys.AuthenticateAsync(presented, Context.RequestAborted);
        if (key is null)
        {
            return Refuse("Unknown or revoked key.");
        }
        var claims = new List<Claim>
        {
            new(TriageClaims.KeyId, key.Id.ToString()),
            new(TriageClaims.PublicId, key.PublicId),
            new(ClaimTypes.Name, key.Name),
        };
        claims.AddRange(key.Scopes.Select(s => new Claim(TriageClaims.Scope, KeyStore.ScopeText(s))));
        if (key.Observatory is not null)
        {
            claims.Add(new Claim(TriageClaims.Observatory, key.Observatory));
        }
        var identity = new ClaimsIdentity(claims, SchemeName);
        return AuthenticateResult.Success(new AuthenticationTicket(new ClaimsPrincipal(identity), SchemeName));
    }

    private AuthenticateResult Refuse(string reason)
    {
        if (!failures.RecordFailure(FailedAuthenticationLimit.AddressOf(Context)))
        {
            // Only an address's first failure in its window gets a request-log line; a burst is logged by the limit.
            Context.Items[FailedAuthenticationLimit.QuietItem] = true;
        }
        return AuthenticateResult.Fail(reason);
    }

    protected override async Task HandleChallengeAsync(AuthenticationProperties properties)
    {
        Response.StatusCode = StatusCodes.Status401Unauthorized;
        Response.Headers.WWWAuthenticate = "Bearer";
        await problems.WriteAsync(new ProblemDetailsContext
        {
            HttpContext = Context,
            ProblemDetails = new ProblemDetails
            {
                Status = 401,
                Title = "API key required",
                Detail = "Send a valid key as 'Authorization: Bearer <key>'. Missing, unknown and revoked keys are refused.",
                Extensions = { ["field"] = "Authorization" },
            },
        });
    }

    protected override async Task HandleForbiddenAsync(AuthenticationProperties properties)
    {
        Response.StatusCode = StatusCodes.Status403Forbidden;
        await problems.WriteAsync(new ProblemDetailsContext
        {
            HttpContext = Context,
            ProblemDetails = new ProblemDetails
            {
                Status = 403,
                Title = "Not allowed for this key",
                Detail = "The key is valid but lacks the scope this operation needs.",
                Extensions = { ["field"] = "Authorization" },
            },
        });
    }
}
