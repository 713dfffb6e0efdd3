using System.Text.Json;
using Microsoft.AspNetCore.Diagnostics;
using Microsoft.AspNetCore.Http.Features;
using Microsoft.AspNetCore.Http.Metadata;
using Microsoft.AspNetCore.Mvc;

namespace Triage.Api.Errors;

/// <summary>
/// Every error leaves as RFC 9457 <c>application/problem+json</c>. Body-binding failures
/// (malformed JSON, wrong types, NaN, unknown enum values or properties, oversize bodies)
/// become 4xx problems that name the offending field; nothing else ever leaks a stack trace.
/// </summary>
public static class ProblemSetup
{
    public static IServiceCollection AddTriageProblems(this IServiceCollection services)
    {
        services.AddProblemDetails(o => o.CustomizeProblemDetails = ctx =>
        {
            ctx.ProblemDetails.Extensions["requestId"] = ctx.HttpContext.TraceIdentifier;
            if (ctx.ProblemDetails.Type is null || ctx.ProblemDetails.Type.StartsWith("https://tools.ietf.org/", StringComparison.Ordinal))
            {
                ctx.ProblemDetails.Type = ProblemTypes.For(ctx.ProblemDetails.Status ?? ctx.HttpContext.Response.StatusCode);
            }
            if (ctx.ProblemDetails.Status == StatusCodes.Status415UnsupportedMediaType && !ctx.ProblemDetails.Extensions.ContainsKey("field"))
            {
                ctx.ProblemDetails.Detail ??= "Send the body as application/json.";
                ctx.ProblemDetails.Extensions["field"] = "Content-Type";
            }
        });
        services.AddExceptionHandler<BadRequestProblemHandler>();
        services.Configure<RouteHandlerOptions>(o => o.ThrowOnBadRequest = true);
        return services;
    }

    public static WebApplication UseTriageProblems(this WebApplication app)
    {
        app.UseExceptionHandler();
        app.UseStatusCodePages();
        return app;
    }
}

/// <summary>Turns request-binding exceptions into field-naming 4xx problems.</summary>
internal sealed class BadRequestProblemHandler(IProblemDetailsService problems, ILogger<BadRequestProblemHandler> log) : IExceptionHandler
{
    public async ValueTask<bool> TryHandleAsync(HttpContext http, Exception exception, CancellationToken ct)
    {
        if (exception is OperationCanceledException && http.RequestAborted.IsCancellationRequested)
        {
            // The caller went away; there is nobody to answer.
            log.LogInformation("Request on {Route} abandoned by the caller", http.Request.Path.Value);
            return true;
        }
        if (IsOverload(exception))
        {
            // Too busy to get a database connection in time: say so, and when to come back, instead of a 500.
            log.LogWarning("Database busy on {Route}: {Reason}", http.Request.Path.Value, exception.Message);
            http.Response.Headers.RetryAfter = "1";
            return await WriteAsync(http, StatusCodes.Status503ServiceUnavailable, "Service busy",
                "The database could not take the request in time; nothing was stored. Retry after a second.");
        }
        if (exception is not BadHttpRequestException bad)
        {
            log.LogError(exception, "Unhandled error on {Route}", http.Request.Path.Value);
            return await WriteAsync(http, StatusCodes.Status500InternalServerError, "Internal error",
                "The request could not be completed; nothing was changed by the failing step. The request id identifies it in the logs.");
        }

        var (field, message) = Describe(bad);
        var status = bad.StatusCode;
        long? limit = status == StatusCodes.Status413PayloadTooLarge
            ? http.Items[BodySizeLimitMiddleware.LimitItem] as long?
              ?? http.Features.Get<IHttpMaxRequestBodySizeFeature>()?.MaxRequestBodySize
            : null;
        if (limit is { } max)
        {
            message = string.Create(System.Globalization.CultureInfo.InvariantCulture,
                $"is larger than the {max:N0} bytes ({max / 1048576.0:0.##} MiB) this endpoint accepts");
        }
        var title = status switch
        {
            StatusCodes.Status413PayloadTooLarge => "Request body too large",
            StatusCodes.Status415UnsupportedMediaType => "Unsupported media type",
            _ => "Invalid request body",
        };
        var details = new ValidationProblemDetails(new Dictionary<string, string[]> { [field] = [message] })
        {
            Status = status,
            Title = title,
            Detail = $"{field}: {message}",
        };
        if (limit is { } bytes)
        {
            details.Extensions["limitBytes"] = bytes;
        }
        http.Response.StatusCode = status;
        return await problems.TryWriteAsync(new ProblemDetailsContext { HttpContext = http, ProblemDetails = details });
    }

    private ValueTask<bool> WriteAsync(HttpContext http, int status, string title, string detail)
    {
        http.Response.StatusCode = status;
        return problems.TryWriteAsync(new ProblemDetailsContext
        {
            HttpContext = http,
            ProblemDetails = new ProblemDetails { Status = status, Title = title, Detail = detail },
        });
    }

    /// <summary>Connection pool exhausted, connection attempt timed out, or the server out of connection slots.</summary>
    private static bool IsOverload(Exception exception) => exception switch
    {
        Npgsql.PostgresException pg => pg.SqlState is Npgsql.PostgresErrorCodes.TooManyConnections or Npgsql.PostgresErrorCodes.CannotConnectNow,
        Npgsql.NpgsqlException npgsql => npgsql.InnerException is TimeoutException,
        _ => false,
    };

    private static (string Field, string Message) Describe(BadHttpRequestException bad)
    {
        for (Exception? e = bad; e is not null; e = e.InnerException)
        {
            if (e is JsonException json)
            {
                var field = JsonPath.ToField(json.Path);
                var message = json.Message.Contains("could not be mapped", StringComparison.Ordinal)
                    ? "is not a known property"
                    : json.Message.Contains("NaN", StringComparison.Ordinal) || json.Message.Contains("Infinity", StringComparison.Ordinal)
                        ? "must be a finite number (NaN and Infinity are not JSON numbers)"
                        : SimplifyJsonMessage(json);
                return (field, message);
            }
        }
        return bad.StatusCode switch
        {
            StatusCodes.Status413PayloadTooLarge => ("body", "is larger than this endpoint accepts"),
            StatusCodes.Status415UnsupportedMediaType => ("Content-Type", "must be application/json"),
            _ when bad.Message.Contains("was not provided", StringComparison.Ordinal) => ("body", "is required"),
            _ => ("body", bad.Message),
        };
    }

    private static string SimplifyJsonMessage(JsonException json)
    {
        var m = json.Message;
        var cut = m.IndexOf(" Path:", StringComparison.Ordinal);
        m = cut > 0 ? m[..cut] : m;
        if (m.StartsWith("The JSON value could not be converted", StringComparison.Ordinal))
        {
            return "has the wrong type or an unknown value";
        }
        return m;
    }
}

/// <summary>
/// The <c>type</c> of every problem: the definition of its HTTP status (RFC 9110 section 15 for
/// the standard codes, RFC 6585 for 428 and 429), so a client can tell kinds apart without parsing text.
/// </summary>
public static class ProblemTypes
{
    public static string For(int status) => status switch
    {
        400 => "https://www.rfc-editor.org/rfc/rfc9110#section-15.5.1",
        401 => "https://www.rfc-editor.org/rfc/rfc9110#section-15.5.2",
        403 => "https://www.rfc-editor.org/rfc/rfc9110#section-15.5.4",
        404 => "https://www.rfc-editor.org/rfc/rfc9110#section-15.5.5",
        405 => "https://www.rfc-editor.org/rfc/rfc9110#section-15.5.6",
        406 => "https://www.rfc-editor.org/rfc/rfc9110#section-15.5.7",
        408 => "https://www.rfc-editor.org/rfc/rfc9110#section-15.5.9",
        409 => "https://www.rfc-editor.org/rfc/rfc9110#section-15.5.10",
        412 => "https://www.rfc-editor.org/rfc/rfc9110#section-15.5.13",
        413 => "https://www.rfc-editor.org/rfc/rfc9110#section-15.5.14",
        415 => "https://www.rfc-editor.org/rfc/rfc9110#section-15.5.16",
        422 => "https://www.rfc-editor.org/rfc/rfc9110#section-15.5.21",
        428 => "https://www.rfc-editor.org/rfc/rfc6585#section-3",
        429 => "https://www.rfc-editor.org/rfc/rfc6585#section-4",
        500 => "https://www.rfc-editor.org/rfc/rfc9110#section-15.6.1",
        503 => "https://www.rfc-editor.org/rfc/rfc9110#section-15.6.4",
        _ => "about:blank",
    };
}

/// <summary>Converts System.Text.Json paths (<c>$.sites[0].name</c>) to field names (<c>sites[0].name</c>).</summary>
internal static class JsonPath
{
    public static string ToField(string? path)
    {
        if (string.IsNullOrEmpty(path) || path == "$")
        {
            return "body";
        }
        var p = path.StartsWith("$.", StringComparison.Ordinal) ? path[2..] : path.TrimStart('$');
        return p.Replace("['", ".", StringComparison.Ordinal).Replace("']", "", StringComparison.Ordinal).TrimStart('.');
    }
}

/// <summary>
/// Enforces the endpoint's <see cref="IRequestSizeLimitMetadata"/> from Content-Length before
/// the body is read, so that the answer is a 413 problem on every server, test host included.
/// </summary>
public sealed class BodySizeLimitMiddleware(RequestDelegate next)
{
    /// <summary>Key in <see cref="HttpContext.Items"/> of the endpoint's body limit, bytes (the 413 problem states it).</summary>
    public const string LimitItem = "triage.bodyLimitBytes";

    public async Task InvokeAsync(HttpContext http)
    {
        var limit = http.GetEndpoint()?.Metadata.GetMetadata<IRequestSizeLimitMetadata>()?.MaxRequestBodySize;
        if (limit is { } max)
        {
            http.Items[LimitItem] = max;
            if (http.Request.ContentLength > max)
            {
                throw new BadHttpRequestException($"The body is larger than {max} bytes.", StatusCodes.Status413PayloadTooLarge);
            }
            var feature = http.Features.Get<IHttpMaxRequestBodySizeFeature>();
            if (feature is { IsReadOnly: false })
            {
                feature.MaxRequestBodySize = max;
            }
        }
        await next(http);
    }
}

/// <summary>Per-endpoint body limits, enforced by <see cref="BodySizeLimitMiddleware"/> and Kestrel.</summary>
public static class BodyLimitExtensions
{
    public static RouteHandlerBuilder WithBodyLimit(this RouteHandlerBuilder builder, long bytes) =>
        builder.WithMetadata(new RequestSizeLimitAttribute(bytes));
}
