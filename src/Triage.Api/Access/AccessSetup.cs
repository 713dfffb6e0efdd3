using System.Threading.RateLimiting;
using Microsoft.AspNetCore.Authentication;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.RateLimiting;
using Triage.Storage.Access;

namespace Triage.Api.Access;

/// <summary>Authorization policy names: one per scope. Admin keys satisfy every policy.</summary>
public static class Policies
{
    public const string Broker = "scope:broker";
    public const string Observatory = "scope:observatory";
    public const string Scheduler = "scope:scheduler";
    public const string Admin = "scope:admin";
    /// <summary>Any valid key.</summary>
    public const string AnyKey = "scope:any";
}

/// <summary>Rate-limit settings per key (section <c>Triage:RateLimit</c>).</summary>
public sealed record RateLimitOptions
{
    /// <summary>Sustained requests per second per key (default 500: a broker posting single candidates in a burst).</summary>
    public int PermitsPerSecond { get; init; } = 500;

    /// <summary>Bucket size: how far above the sustained rate a key may burst (default 1,000).</summary>
    public int Burst { get; init; } = 1000;
}

public static class AccessSetup
{
    public static IServiceCollection AddAccess(this IServiceCollection services, IConfiguration config)
    {
        services.AddSingleton<KeyStore>();
        services.AddSingleton(config.GetSection("Triage:Access").Get<KeyCacheOptions>() ?? new KeyCacheOptions());
        services.AddSingleton<KeyCache>();
        services.AddSingleton(config.GetSection("Triage:Access").Get<FailedAuthenticationOptions>() ?? new FailedAuthenticationOptions());
        services.AddSingleton<FailedAuthenticationLimit>();
        services.AddAuthentication(ApiKeyAuthenticationHandler.SchemeName)
            .AddScheme<AuthenticationSchemeOptions, ApiKeyAuthenticationHandler>(ApiKeyAuthenticationHandler.SchemeName, null);
        services.AddAuthorizationBuilder()
            .AddPolicy(Policies.Broker, p => p.RequireClaim(TriageClaims.Scope, "broker", "admin"))
            .AddPolicy(Policies.Observatory, p => p.RequireClaim(TriageClaims.Scope, "observatory", "admin"))
            .AddPolicy(Policies.Scheduler, p => p.RequireClaim(TriageClaims.Scope, "scheduler", "admin"))
            .AddPolicy(Policies.Admin, p => p.RequireClaim(TriageClaims.Scope, "admin"))
            .AddPolicy(Policies.AnyKey, p => p.RequireAuthenticatedUser());

        var limits = config.GetSection("Triage:RateLimit").Get<RateLimitOptions>() ?? new RateLimitOptions();
        services.AddRateLimiter(o =>
        {
            o.GlobalLimiter = PartitionedRateLimiter.Create<HttpContext, string>(http =>
            {
                var partition = http.User.FindFirst(TriageClaims.PublicId)?.Value
                    ?? "ip:" + (http.Connection.RemoteIpAddress?.ToString() ?? "unknown");
                return RateLimitPartition.GetTokenBucketLimiter(partition, _ => new TokenBucketRateLimiterOptions
                {
                    TokenLimit = limits.Burst,
                    TokensPerPeriod = limits.PermitsPerSecond,
                    ReplenishmentPeriod = TimeSpan.FromSeconds(1),
                    QueueLimit = 0,
                    AutoReplenishment = true,
                });
            });
            o.RejectionStatusCode = StatusCodes.Status429TooManyRequests;
            o.OnRejected = async (ctx, ct) =>
            {
                var problems = ctx.HttpContext.RequestServices.GetRequiredService<IProblemDetailsService>();
                ctx.HttpContext.Response.StatusCode = StatusCodes.Status429TooManyRequests;
                ctx.HttpContext.Response.Headers.RetryAfter = "1";
                await problems.WriteAsync(new ProblemDetailsContext
                {
                    HttpContext = ctx.HttpContext,
                    ProblemDetails = new ProblemDetails
                    {
                        Status = 429,
                        Title = "Too many requests",
                        Detail = $"This key may send {limits.PermitsPerSecond} requests per second (bursts up to {limits.Burst}). Retry after a second.",
                    },
                });
            };
        });
        return services;
    }
}
