using System.Text.Json;
using System.Text.RegularExpressions;
using Microsoft.AspNetCore.Diagnostics;
using Microsoft.AspNetCore.Http.Features;
using Microsoft.AspNetCore.Http.Metadata;
using Microsoft.AspNetCore.Mvc;
using Triage.Storage;

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
                // Name what this route accepts (a CSV import is not told to send JSON).
                ctx.ProblemDetails.Detail ??= $"Send the body as {string.Join(" or ", AcceptedMediaTypes(ctx.HttpContext))}.";
                ctx.ProblemDetails.Extensions["field"] = "Content-Type";
            }
        });
        services.AddExceptionHandler<BadRequestProblemHandler>();
        services.Configure<RouteHandlerOptions>(o => o.ThrowOnBadRequest = true);
        return services;
    }

    /// <summary>The media types the endpoints at this request's path and method accept (application/json when none says).</summary>
    internal static IReadOnlyList<string> AcceptedMediaTypes(HttpContext http)
    {
        var path = http.Request.Path.Value ?? "/";
        var accepted = new List<string>();
        foreach (var endpoint in http.RequestServices.GetRequiredService<EndpointDataSource>().Endpoints.OfType<RouteEndpoint>())
        {
            var methods = endpoint.Metadata.GetMetadata<IHttpMethodMetadata>()?.HttpMethods;
            if (methods is not null && !methods.Contains(http.Request.Method, StringComparer.OrdinalIgnoreCase))
            {
                continue;
            }
            var matcher = new Microsoft.AspNetCore.Routing.Template.TemplateMatcher(
                Microsoft.AspNetCore.Routing.Template.TemplateParser.Parse(endpoint.RoutePattern.RawText ?? "/"), new RouteValueDictionary());
            if (matcher.TryMatch(path, new RouteValueDictionary()) && endpoint.Metadata.GetMetadata<IAcceptsMetadata>() is { } accepts)
            {
                accepted.AddRange(accepts.ContentTypes);
            }
        }
        return accepted.Count == 0 ? ["application/json"] : accepted.Distinct(StringComparer.OrdinalIgnoreCase).ToList();
    }

    public static WebApplication UseTriageProblems(this WebApplication app)
    {
        app.UseExceptionHandler();
        app.UseStatusCodePages();
        return app;
    }
}

/// <summary>
/// Turns exceptions into problems: request-binding failures into field-naming 4xx, a database
/// that cannot take the request now into 503 with <c>Retry-After</c>, a write refused by a
/// constraint (a concurrent change) into 409 naming the field; only the unexpected is a 500.
/// </summary>
internal sealed class BadRequestProblemHandler(IProblemDetailsService problems, ILogger<BadRequestProblemHandler> log) : IExceptionHandler
{
    /// <summary>Status logged for a request whose caller went away before the answer (nothing is sent).</summary>
    public const int ClientClosedRequest = 499;

    public async ValueTask<bool> TryHandleAsync(HttpContext http, Exception exception, CancellationToken ct)
    {
        if (exception is OperationCanceledException or IOException && http.RequestAborted.IsCancellationRequested)
        {
            // The caller went away; there is nobody to answer.
            log.LogInformation("Request on {Route} abandoned by the caller", http.Request.Path.Value);
            http.Response.StatusCode = ClientClosedRequest;
            return true;
        }
        switch (DatabaseFaults.Classify(exception))
        {
            case DatabaseFault.Unavailable:
                // Unreachable, dropped, pool full, timed out or a lost serialization race: say so and when to come back, instead of a 500.
                log.LogWarning("Database unavailable on {Route}: {Reason}", http.Request.Path.Value, exception.Message);
                http.Response.Headers.RetryAfter = "1";
                return await WriteAsync(http, StatusCodes.Status503ServiceUnavailable, "Service busy",
                    "The database could not take the request now; nothing was stored. Retry after a second.");
            case DatabaseFault.Conflict when DatabaseFaults.ConstraintViolation(exception) is { } violation:
            {
                var (field, message) = DatabaseProblems.Describe(violation, http.Request.Method);
                log.LogInformation("Write on {Route} refused by {Constraint}", http.Request.Path.Value, violation.ConstraintName);
                return await WriteAsync(http, StatusCodes.Status409Conflict, "Conflict", $"{field}: {message}", field);
            }
            case DatabaseFault.BadValue:
                log.LogWarning("A value PostgreSQL refused reached it on {Route}: {Reason}", http.Request.Path.Value, exception.Message);
                return await WriteAsync(http, StatusCodes.Status400BadRequest, "Invalid value",
                    "A value in the request cannot be stored (out of range or containing characters text may not hold); nothing was stored.", "body");
        }
        if (exception is not BadHttpRequestException bad)
        {
            log.LogError(exception, "Unhandled error on {Route}", http.Request.Path.Value);
            return await WriteAsync(http, StatusCodes.Status500InternalServerError, "Internal error",
                "The request could not be completed; nothing was changed by the failing step. The request id identifies it in the logs.");
        }

        var (where, name, text) = Describe(bad, http);
        var status = bad.StatusCode;
        long? limit = status == StatusCodes.Status413PayloadTooLarge
            ? http.Items[BodySizeLimitMiddleware.LimitItem] as long?
              ?? http.Features.Get<IHttpMaxRequestBodySizeFeature>()?.MaxRequestBodySize
            : null;
        if (limit is { } max)
        {
            text = string.Create(System.Globalization.CultureInfo.InvariantCulture,
                $"is larger than the {max:N0} bytes ({max / 1048576.0:0.##} MiB) this endpoint accepts");
        }
        var title = status switch
        {
            StatusCodes.Status413PayloadTooLarge => "Request body too large",
            StatusCodes.Status415UnsupportedMediaType => "Unsupported media type",
            _ => where switch
            {
                ParameterSource.Query => "Invalid query parameter",
                ParameterSource.Route => "Invalid path parameter",
                ParameterSource.Header => "Invalid header",
                _ => "Invalid request body",
            },
        };
        var details = new ValidationProblemDetails(new Dictionary<string, string[]> { [name] = [text] })
        {
            Status = status,
            Title = title,
            Detail = $"{name}: {text}",
        };
        if (limit is { } bytes)
        {
            details.Extensions["limitBytes"] = bytes;
        }
        http.Response.StatusCode = status;
        return await problems.TryWriteAsync(new ProblemDetailsContext { HttpContext = http, ProblemDetails = details });
    }

    private ValueTask<bool> WriteAsync(HttpContext http, int status, string title, string detail, string? field = null)
    {
        http.Response.StatusCode = status;
        var problem = new ProblemDetails { Status = status, Title = title, Detail = detail };
        if (field is not null)
        {
            problem.Extensions["field"] = field;
        }
        return problems.TryWriteAsync(new ProblemDetailsContext { HttpContext = http, ProblemDetails = problem });
    }

    private enum ParameterSource
    {
        Body,
        Query,
        Route,
        Header,
    }

    private static (ParameterSource Source, string Field, string Message) Describe(BadHttpRequestException bad, HttpContext http)
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
                        : json.Message.Contains("Duplicate", StringComparison.OrdinalIgnoreCase)
                            ? "appears more than once in its object"
                            : SimplifyJsonMessage(json);
                return (ParameterSource.Body, field, message);
            }
        }
        if (ParameterBinding.TryParse(bad.Message, out var parameter))
        {
            var source = http.Request.RouteValues.ContainsKey(parameter.Name) ? ParameterSource.Route
                : http.Request.Headers.ContainsKey(parameter.Name) ? ParameterSource.Header
                : ParameterSource.Query;
            var message = parameter.Value is null
                ? "is required"
                : $"must be {ParameterBinding.Expected(parameter.Type)}; got '{Truncate(parameter.Value)}'";
            return (source, parameter.Name, message);
        }
        return bad.StatusCode switch
        {
            StatusCodes.Status413PayloadTooLarge => (ParameterSource.Body, "body", "is larger than this endpoint accepts"),
            StatusCodes.Status415UnsupportedMediaType => (ParameterSource.Header, "Content-Type", "must be application/json"),
            _ when bad.Message.Contains("was not provided", StringComparison.Ordinal) => (ParameterSource.Body, "body", "is required"),
            _ => (ParameterSource.Body, "body", TypeNames.Strip(bad.Message)),
        };
    }

    private static string Truncate(string value) => value.Length <= 60 ? value : value[..60] + "…";

    private static string SimplifyJsonMessage(JsonException json)
    {
        var m = json.Message;
        var cut = m.IndexOf(" Path:", StringComparison.Ordinal);
        m = cut > 0 ? m[..cut] : m;
        if (m.StartsWith("The JSON value could not be converted", StringComparison.Ordinal))
        {
            return "has the wrong type or an unknown value";
        }
        return TypeNames.Strip(m);
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

/// <summary>Reads ASP.NET Core's parameter-binding messages (<c>Failed to bind parameter "int? limit" from "abc".</c>).</summary>
internal static partial class ParameterBinding
{
    public readonly record struct Failure(string Type, string Name, string? Value);

    [GeneratedRegex("""^Failed to bind parameter "(?<type>[^"]+) (?<name>[^" ]+)" from "(?<value>.*)"\.$""", RegexOptions.Singleline)]
    private static partial Regex FailedToBind();

    [GeneratedRegex("""^Required parameter "(?<type>[^"]+) (?<name>[^" ]+)" was not provided""")]
    private static partial Regex NotProvided();

    public static bool TryParse(string message, out Failure failure)
    {
        var m = FailedToBind().Match(message);
        if (m.Success)
        {
            failure = new Failure(m.Groups["type"].Value, m.Groups["name"].Value, m.Groups["value"].Value);
            return true;
        }
        m = NotProvided().Match(message);
        if (m.Success && !m.Groups["type"].Value.Contains("Request", StringComparison.Ordinal))
        {
            failure = new Failure(m.Groups["type"].Value, m.Groups["name"].Value, null);
            return true;
        }
        failure = default;
        return false;
    }

    /// <summary>What a value of a .NET type looks like, in words (never the type's name).</summary>
    public static string Expected(string type) => type.TrimEnd('?') switch
    {
        "int" or "long" or "short" or "Int32" or "Int64" => "a whole number",
        "double" or "float" or "decimal" or "Double" => "a number",
        "bool" or "Boolean" => "true or false",
        "Guid" => "an id (UUID)",
        "DateOnly" => "a date as yyyy-MM-dd",
        "DateTimeOffset" or "DateTime" => "an ISO 8601 instant with an offset, e.g. 2026-03-01T02:30:00Z",
        "TimeSpan" => "a duration as hh:mm:ss",
        _ => "a value of the documented form",
    };
}

/// <summary>Removes .NET type names from messages that reach callers.</summary>
public static partial class TypeNames
{
    [GeneratedRegex(@"\s*(for|of|to) type '[^']*'")]
    private static partial Regex OfType();

    [GeneratedRegex(@"\b(System|Microsoft|Triage|Npgsql)(\.[A-Za-z_][A-Za-z0-9_`]*)+(\[[^\]]*\])?")]
    private static partial Regex Qualified();

    public static string Strip(string message) => Qualified().Replace(OfType().Replace(message, ""), "a value");
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
