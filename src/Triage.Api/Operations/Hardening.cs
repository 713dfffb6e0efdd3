using Microsoft.AspNetCore.Server.Kestrel.Core;
using Triage.Api.Errors;

namespace Triage.Api.Operations;

/// <summary>HTTP hardening settings (section <c>Triage:Http</c>).</summary>
public sealed record HttpHardeningOptions
{
    /// <summary>
    /// The address clients reach the service at (e.g. <c>https://triage.example.org</c>), written
    /// as the OpenAPI document's server. Unset: the document names no server (relative URLs), and
    /// the request's Host header is never echoed.
    /// </summary>
    public string? PublicBaseUrl { get; init; }

    /// <summary>Longest request target (path and query) answered; longer ones get a 414 problem (default 8 KiB).</summary>
    public int MaxUrlBytes { get; init; } = 8 * 1024;

    /// <summary>Largest total size of the request headers answered; larger ones get a 431 problem (default 32 KiB).</summary>
    public int MaxHeaderBytes { get; init; } = 32 * 1024;

    /// <summary>
    /// Content-Security-Policy on every answer: only this origin's scripts, styles and connections,
    /// images also as data: URLs (the plots), no framing by other sites.
    /// </summary>
    public string ContentSecurityPolicy { get; init; } =
        "default-src 'self'; script-src 'self'; style-src 'self'; img-src 'self' data:; connect-src 'self'; font-src 'self'; " +
        "object-src 'none'; base-uri 'none'; form-action 'self'; frame-ancestors 'none'";
}

public static class Hardening
{
    /// <summary>Kestrel's own limits sit above the service's (which answer with problems), so Kestrel's bodiless 414/431 are the last resort only.</summary>
    public static WebApplicationBuilder AddHttpHardening(this WebApplicationBuilder builder)
    {
        var o = builder.Configuration.GetSection("Triage:Http").Get<HttpHardeningOptions>() ?? new HttpHardeningOptions();
        builder.Services.AddSingleton(o);
        builder.WebHost.ConfigureKestrel(k =>
        {
            k.Limits.MaxRequestLineSize = Math.Max(k.Limits.MaxRequestLineSize, 2 * o.MaxUrlBytes);
            k.Limits.MaxRequestHeadersTotalSize = Math.Max(k.Limits.MaxRequestHeadersTotalSize, 2 * o.MaxHeaderBytes);
        });
        builder.Services.AddOpenApi(openApi => openApi.AddDocumentTransformer((document, _, _) =>
        {
            document.Servers = string.IsNullOrWhiteSpace(o.PublicBaseUrl)
                ? []
                : [new Microsoft.OpenApi.OpenApiServer { Url = o.PublicBaseUrl.TrimEnd('/') }];
            return Task.CompletedTask;
        }));
        return builder;
    }

    /// <summary>Security headers on every answer, then the request-size and query-text checks.</summary>
    public static WebApplication UseHttpHardening(this WebApplication app)
    {
        var o = app.Services.GetRequiredService<HttpHardeningOptions>();
        app.Use(async (http, next) =>
        {
            var headers = http.Response.Headers;
            headers.XContentTypeOptions = "nosniff";
            headers.ContentSecurityPolicy = o.ContentSecurityPolicy;
            headers.XFrameOptions = "DENY";
            headers["Referrer-Policy"] = "no-referrer";
            headers["Cross-Origin-Opener-Policy"] = "same-origin";

            if (RequestTargetBytes(http.Request) > o.MaxUrlBytes)
            {
                await RefuseAsync(http, StatusCodes.Status414UriTooLong, "Request URL too long",
                    $"The path and query may be at most {o.MaxUrlBytes} bytes; send long selections in a request body.", "url");
                return;
            }
            if (HeaderBytes(http.Request) > o.MaxHeaderBytes)
            {
                await RefuseAsync(http, StatusCodes.Status431RequestHeaderFieldsTooLarge, "Request headers too large",
                    $"The request headers may total at most {o.MaxHeaderBytes} bytes.", "headers");
                return;
            }
            foreach (var (name, values) in http.Request.Query)
            {
                foreach (var value in values)
                {
                    if (value is not null && (value.Any(c => c < 0x20 || c == 0x7F) || TextHygiene.FirstForbidden(value) is not null))
                    {
                        await RefuseAsync(http, StatusCodes.Status400BadRequest, "Invalid query parameter",
                            $"{name}: must not contain control characters or unpaired surrogates", name);
                        return;
                    }
                }
            }
            await next(http);
        });
        return app;
    }

    private static long RequestTargetBytes(HttpRequest r) =>
        System.Text.Encoding.UTF8.GetByteCount(r.PathBase.ToUriComponent() + r.Path.ToUriComponent() + r.QueryString.ToUriComponent());

    private static long HeaderBytes(HttpRequest r)
    {
        long total = 0;
        foreach (var (name, values) in r.Headers)
        {
            total += name.Length + 4; // ": " and CRLF
            foreach (var v in values)
            {
                total += v?.Length ?? 0;
            }
        }
        return total;
    }

    private static async Task RefuseAsync(HttpContext http, int status, string title, string detail, string field)
    {
        http.Response.StatusCode = status;
        var problems = http.RequestServices.GetRequiredService<IProblemDetailsService>();
        await problems.WriteAsync(new ProblemDetailsContext
        {
            HttpContext = http,
            ProblemDetails = new Microsoft.AspNetCore.Mvc.ProblemDetails { Status = status, Title = title, Detail = detail, Extensions = { ["field"] = field } },
        });
    }
}
