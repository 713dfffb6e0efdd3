using System.Text.Json;
using System.Text.Json.Serialization;
using Microsoft.AspNetCore.Diagnostics.HealthChecks;
using Serilog;
using Serilog.Formatting.Compact;
using Triage.Api.Access;

namespace Triage.Api.Operations;

public static class OperationsSetup
{
    /// <summary>
    /// Structured JSON logs on standard output; never the request body or headers. The logger belongs to this host:
    /// the process-wide static one is left alone, so a second host in the same process (a test's, a replica's)
    /// neither takes this host's lines nor silences them when it is disposed.
    /// </summary>
    public static WebApplicationBuilder AddTriageLogging(this WebApplicationBuilder builder)
    {
        builder.Services.AddSerilog((services, lc) => lc
            .ReadFrom.Configuration(builder.Configuration)
            .ReadFrom.Services(services) // extra sinks registered as services (the tests' capture)
            .Enrich.FromLogContext()
            .WriteTo.Console(new CompactJsonFormatter()),
            preserveStaticLogger: true);
        return builder;
    }

    /// <summary>Strict JSON: unknown properties, numbers as strings and NaN are refused; enums are lower-case strings.</summary>
    public static IServiceCollection AddTriageJson(this IServiceCollection services)
    {
        services.ConfigureHttpJsonOptions(o => Configure(o.SerializerOptions));
        return services;
    }

    /// <summary>The API's JSON conventions as a standalone options object (job inputs, stored bodies).</summary>
    public static JsonSerializerOptions JobJson { get; } = CreateJobJson();

    private static JsonSerializerOptions CreateJobJson()
    {
        var o = new JsonSerializerOptions();
        Configure(o);
        return o;
    }

    public static void Configure(JsonSerializerOptions o)
    {
        o.PropertyNamingPolicy = JsonNamingPolicy.CamelCase;
        o.UnmappedMemberHandling = JsonUnmappedMemberHandling.Disallow;
        o.AllowDuplicateProperties = false;
        o.Converters.Add(new Triage.Api.Errors.CleanTextConverter());
        o.NumberHandling = JsonNumberHandling.Strict;
        o.Converters.Add(new JsonStringEnumConverter(JsonNamingPolicy.KebabCaseLower, allowIntegerValues: false));
    }

    public static WebApplication UseTriageRequestLogging(this WebApplication app)
    {
        app.UseSerilogRequestLogging(o =>
        {
            o.MessageTemplate = "HTTP {RequestMethod} {Route} answered {StatusCode} in {Elapsed:0.0} ms";
            // This host's logger, not the process-wide static one (several hosts share a test process).
            o.Logger = app.Services.GetService<Serilog.ILogger>()?.ForContext(Serilog.Core.Constants.SourceContextPropertyName, "Serilog.AspNetCore.RequestLoggingMiddleware");
            // Refusals inside a failed-authentication burst are logged by the burst, not one line each.
            o.GetLevel = (http, _, exception) =>
                http.Items.ContainsKey(FailedAuthenticationLimit.QuietItem) ? Serilog.Events.LogEventLevel.Verbose
                : http.Response.StatusCode == StatusCodes.Status503ServiceUnavailable && exception is null ? Serilog.Events.LogEventLevel.Warning
                : exception is not null || http.Response.StatusCode >= 500 ? Serilog.Events.LogEventLevel.Error
                : Serilog.Events.LogEventLevel.Information;
            o.EnrichDiagnosticContext = (diag, http) =>
            {
                diag.Set("RequestId", http.TraceIdentifier);
                diag.Set("Route", (http.GetEndpoint() as RouteEndpoint)?.RoutePattern.RawText ?? http.Request.Path.Value ?? "");
                var key = http.User.FindFirst(TriageClaims.PublicId)?.Value;
                if (key is not null)
                {
                    diag.Set("KeyId", key); // the public part only, never the secret
                }
            };
        });
        return app;
    }

    public static WebApplication MapOperations(this WebApplication app)
    {
        // Liveness never touches the database; neither health check ever authenticates (a stray Authorization header is ignored).
        app.MapHealthChecks("/health/live", new HealthCheckOptions { Predicate = _ => false }).WithTags("Operations").AllowAnonymous();
        app.MapHealthChecks("/health/ready", new HealthCheckOptions { Predicate = c => c.Tags.Contains("ready") }).WithTags("Operations").AllowAnonymous();
        app.MapOpenApi("/openapi/{documentName}.json");
        return app;
    }
}
