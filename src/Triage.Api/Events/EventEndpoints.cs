using System.Globalization;
using System.Security.Cryptography;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.Extensions.Options;
using Triage.Api.Access;
using Triage.Api.Errors;
using Triage.Storage.Events;

namespace Triage.Api.Events;

/// <summary>Body of a webhook subscription request. <c>secret</c>: at least 16 characters, or omitted to have one generated.</summary>
public sealed record WebhookRequest(string? Url, string? Secret);

/// <summary>A webhook subscription; the secret is shown only in the answer that created it.</summary>
public sealed record WebhookResponse(Guid Id, string? Observatory, string Url, bool Active, DateTimeOffset CreatedAt, string? Secret);

/// <summary>One entry of a subscription's delivery log.</summary>
public sealed record WebhookDeliveryResponse(long Id, long EventId, string Status, int Attempts, DateTimeOffset NextAttemptAt,
    DateTimeOffset? LastAttemptAt, int? LastStatusCode, string? LastError, DateTimeOffset? DeliveredAt);

/// <summary>
/// Plan changes pushed to schedulers: a server-sent-event stream of new versions per night (any key), and webhook
/// subscriptions per observatory with a signed POST per new version, retries with backoff and a delivery log.
/// </summary>
public static class EventEndpoints
{
    public static IServiceCollection AddPlanEvents(this IServiceCollection services, IConfiguration configuration)
    {
        services.Configure<PlanEventOptions>(configuration.GetSection("Triage:Events"));
        services.AddSingleton<PlanEventStore>();
        services.AddSingleton<PlanEventHub>();
        services.AddSingleton<IPlanEventSignal>(sp => sp.GetRequiredService<PlanEventHub>());
        services.AddSingleton<Triage.Api.Operations.IDatabaseNotificationHandler, PlanEventWakeup>();
        services.AddSingleton<WebhookSender>();
        services.AddHttpClient("webhooks");
        services.AddHostedService<PlanEventRelay>();
        return services;
    }

    public static IEndpointRouteBuilder MapPlanEvents(this IEndpointRouteBuilder app)
    {
        app.MapGet("/api/plans/{night}/events", StreamNight).RequireAuthorization(Policies.AnyKey).WithTags("Plans").WithName("StreamPlanEvents");
        app.MapGet("/api/plan-events", StreamAll).RequireAuthorization(Policies.AnyKey).WithTags("Plans").WithName("StreamAllPlanEvents");
        var hooks = app.MapGroup("/api/webhooks").WithTags("Webhooks");
        hooks.MapPost("/", Subscribe).RequireAuthorization(Policies.Observatory).WithBodyLimit(4 * 1024).WithName("CreateWebhook");
        hooks.MapGet("/", ListSubscriptions).RequireAuthorization(Policies.Observatory).WithName("ListWebhooks");
        hooks.MapDelete("/{id:guid}", Unsubscribe).RequireAuthorization(Policies.Observatory).WithName("DeleteWebhook");
        hooks.MapGet("/{id:guid}/deliveries", Deliveries).RequireAuthorization(Policies.Observatory).WithName("ListWebhookDeliveries");
        return app;
    }

    /// <summary>
    /// <c>text/event-stream</c> of the night's new versions: <c>event: plan-version</c>, <c>id:</c> the outbox id,
    /// <c>data:</c> the event JSON. A client that reconnects with <c>Last-Event-ID</c> (or <c>?after=</c>) first gets
    /// what it missed from the outbox.
    /// </summary>
    public static Task StreamNight(string night, HttpContext http, PlanEventStore store, PlanEventHub hub, IOptions<PlanEventOptions> options, CancellationToken ct)
    {
        if (!DateOnly.TryParseExact(night, "yyyy-MM-dd", CultureInfo.InvariantCulture, DateTimeStyles.None, out var date))
        {
            return Problems.BadQuery("night", $"must be a date as YYYY-MM-DD; got '{night}'").ExecuteAsync(http);
        }

        return StreamAsync(http, date, store, hub, options.Value, ct);
    }

    /// <summary>The same stream for every night.</summary>
    public static Task StreamAll(HttpContext http, PlanEventStore store, PlanEventHub hub, IOptions<PlanEventOptions> options, CancellationToken ct) =>
        StreamAsync(http, null, store, hub, options.Value, ct);

    private static async Task StreamAsync(HttpContext http, DateOnly? night, PlanEventStore store, PlanEventHub hub, PlanEventOptions options, CancellationToken ct)
    {
        var resumeText = http.Request.Headers["Last-Event-ID"].FirstOrDefault() ?? http.Request.Query["after"].FirstOrDefault();
        long? after = null;
        if (resumeText is not null)
        {
            if (!long.TryParse(resumeText, NumberStyles.None, CultureInfo.InvariantCulture, out var parsed))
            {
                await Problems.BadQuery("after", "must be a whole event id (Last-Event-ID)").ExecuteAsync(http);
                return;
            }

            after = parsed;
        }

        // Subscribe before reading the backlog, so nothing falls between the two; duplicates are skipped by id.
        using var subscription = hub.Subscribe();
        http.Response.Headers.ContentType = "text/event-stream";
        http.Response.Headers.CacheControl = "no-cache";
        http.Response.Headers["X-Accel-Buffering"] = "no";
        await http.Response.WriteAsync($"retry: 3000\n: plan events{(night is { } n ? " for " + n.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture) : "")}\n\n", ct);
        await http.Response.Body.FlushAsync(ct);
        var sent = after ?? await store.LatestIdAsync(ct);
        if (after is not null)
        {
            foreach (var row in await store.AfterAsync(sent, night, 1000, ct))
            {
                await WriteAsync(http, PlanEventBody.Deserialize(row.Id, row.BodyJson), ct);
                sent = row.Id;
            }
        }

        try
        {
            while (!ct.IsCancellationRequested)
            {
                using var wait = CancellationTokenSource.CreateLinkedTokenSource(ct);
                wait.CancelAfter(options.KeepAlive);
                PlanEventMessage? message = null;
                try
                {
                    message = await subscription.Reader.ReadAsync(wait.Token);
                }
                catch (OperationCanceledException) when (!ct.IsCancellationRequested)
                {
                    await http.Response.WriteAsync(": keep-alive\n\n", ct);
                    await http.Response.Body.FlushAsync(ct);
                    continue;
                }

                if (message.Id <= sent || (night is { } only && message.Night != only))
                {
                    continue;
                }

                await WriteAsync(http, message, ct);
                sent = message.Id;
            }
        }
        catch (OperationCanceledException)
        {
            // the client went away
        }
    }

    private static async Task WriteAsync(HttpContext http, PlanEventMessage message, CancellationToken ct)
    {
        await http.Response.WriteAsync(string.Create(CultureInfo.InvariantCulture,
            $"id: {message.Id}\nevent: {message.Type}\ndata: {PlanEventBody.ToJson(message)}\n\n"), ct);
        await http.Response.Body.FlushAsync(ct);
    }

    public static async Task<Results<Created<WebhookResponse>, ValidationProblem>> Subscribe(
        WebhookRequest request, PlanEventStore store, System.Security.Claims.ClaimsPrincipal user, TimeProvider clock, CancellationToken ct)
    {
        var checks = new FieldChecks();
        if (request.Url is null || !Uri.TryCreate(request.Url, UriKind.Absolute, out var url) || (url.Scheme != Uri.UriSchemeHttp && url.Scheme != Uri.UriSchemeHttps))
        {
            checks.Fail("url", "is required: an absolute http or https URL");
        }
        else if (request.Url.Length > 2000)
        {
            checks.Fail("url", "must be at most 2,000 characters");
        }

        if (request.Secret is not null && (request.Secret.Length < 16 || request.Secret.Length > 200))
        {
            checks.Fail("secret", "must be 16 to 200 characters (or omitted to have one generated)");
        }

        if (!checks.IsValid)
        {
            return TypedResults.ValidationProblem(checks.ToDictionary());
        }

        var caller = Caller.From(user);
        var secret = request.Secret ?? Convert.ToHexStringLower(RandomNumberGenerator.GetBytes(32));
        var s = new WebhookSubscription(Guid.CreateVersion7(clock.GetUtcNow()), caller.Observatory, request.Url!, secret, true,
            clock.GetUtcNow(), caller.PublicId);
        await store.AddSubscriptionAsync(s, ct);
        return TypedResults.Created($"/api/webhooks/{s.Id}", new WebhookResponse(s.Id, s.Observatory, s.Url, s.Active, s.CreatedAt, secret));
    }

    public static async Task<Ok<IReadOnlyList<WebhookResponse>>> ListSubscriptions(PlanEventStore store, System.Security.Claims.ClaimsPrincipal user, CancellationToken ct)
    {
        var caller = Caller.From(user);
        var rows = await store.SubscriptionsAsync(caller.Observatory, caller.IsAdmin, ct);
        return TypedResults.Ok<IReadOnlyList<WebhookResponse>>(rows.Select(s => new WebhookResponse(s.Id, s.Observatory, s.Url, s.Active, s.CreatedAt, null)).ToList());
    }

    public static async Task<Results<NoContent, ProblemHttpResult>> Unsubscribe(Guid id, PlanEventStore store, System.Security.Claims.ClaimsPrincipal user, CancellationToken ct)
    {
        var s = await store.SubscriptionAsync(id, ct);
        if (s is null)
        {
            return Problems.NotFound("id", $"No webhook subscription {id}.");
        }

        if (!Caller.From(user).Manages(s.Observatory))
        {
            return Problems.Forbidden("id", "This subscription belongs to another observatory.");
        }

        await store.DeleteSubscriptionAsync(id, ct);
        return TypedResults.NoContent();
    }

    public static async Task<Results<Ok<IReadOnlyList<WebhookDeliveryResponse>>, ProblemHttpResult>> Deliveries(
        Guid id, int? limit, PlanEventStore store, System.Security.Claims.ClaimsPrincipal user, CancellationToken ct)
    {
        var s = await store.SubscriptionAsync(id, ct);
        if (s is null)
        {
            return Problems.NotFound("id", $"No webhook subscription {id}.");
        }

        if (!Caller.From(user).Manages(s.Observatory))
        {
            return Problems.Forbidden("id", "This subscription belongs to another observatory.");
        }

        var rows = await store.DeliveriesAsync(id, Math.Clamp(limit ?? 100, 1, 1000), ct);
        return TypedResults.Ok<IReadOnlyList<WebhookDeliveryResponse>>(rows.Select(d => new WebhookDeliveryResponse(d.Id, d.EventId, d.Status, d.Attempts,
            d.NextAttemptAt, d.LastAttemptAt, d.LastStatusCode, d.LastError, d.DeliveredAt)).ToList());
    }
}
