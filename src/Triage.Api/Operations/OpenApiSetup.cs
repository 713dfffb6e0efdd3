using System.Text.Json.Nodes;
using Microsoft.AspNetCore.Authorization;
using Microsoft.AspNetCore.Http.Metadata;
using Microsoft.AspNetCore.OpenApi;
using Microsoft.OpenApi;
using Triage.Api.Access;

namespace Triage.Api.Operations;

/// <summary>
/// The OpenAPI document: the bearer-key security scheme, the error answers each operation can
/// give (all <c>application/problem+json</c>), and examples of the main request bodies.
/// </summary>
/// <remarks>
/// Error answers per operation: 400, 429 and 503 on every operation; 401 and 403 on every
/// operation that needs a key; 404 where the path names a resource; 409 on writes; 413 and 415
/// where a body is read; 412 and 428 on conditional writes (PUT and DELETE, which need If-Match).
/// </remarks>
public static class OpenApiSetup
{
    /// <summary>Name of the security scheme in the document.</summary>
    public const string SchemeName = "bearer";

    /// <summary>Name of the problem schema in the document.</summary>
    public const string ProblemSchemaName = "TriageProblem";

    private static readonly (int Status, string Description)[] Errors =
    [
        (400, "Invalid request: a query, path or body field is wrong; `errors` (or `field`) names it."),
        (401, "No key, or not a valid key: send `Authorization: Bearer <key>`."),
        (403, "The key's scope does not allow this operation, or the resource belongs to another observatory."),
        (404, "No such resource."),
        (409, "Conflicts with the stored state (a duplicate name, a state transition not allowed now)."),
        (412, "Stale write: the resource changed since the ETag sent in `If-Match` was read."),
        (413, "Request body larger than this operation accepts; `detail` and `limitBytes` give the limit."),
        (415, "The body is not `application/json`."),
        (428, "`If-Match` is required: send the ETag you last read."),
        (429, "Too many requests for this key; retry after the `Retry-After` seconds."),
        (503, "The database is unavailable or busy; nothing was stored; retry after the `Retry-After` seconds."),
    ];

    public static IServiceCollection AddTriageOpenApi(this IServiceCollection services)
    {
        // Configures the document registered by AddOpenApi (Hardening.AddHttpHardening).
        services.Configure<OpenApiOptions>("v1", o =>
        {
            o.AddDocumentTransformer((document, _, _) =>
            {
                document.Components ??= new OpenApiComponents();
                document.Components.SecuritySchemes ??= new Dictionary<string, IOpenApiSecurityScheme>();
                document.Components.SecuritySchemes[SchemeName] = new OpenApiSecurityScheme
                {
                    Type = SecuritySchemeType.Http,
                    Scheme = "bearer",
                    BearerFormat = "trk_<id>_<secret>",
                    Description = "A Triage API key (`triage key issue`, or `POST /api/keys` with an admin key), sent as `Authorization: Bearer <key>`.",
                };
                document.Components.Schemas ??= new Dictionary<string, IOpenApiSchema>();
                document.Components.Schemas[ProblemSchemaName] = ProblemSchema();
                return Task.CompletedTask;
            });
            o.AddOperationTransformer((operation, context, _) =>
            {
                Describe(operation, context);
                return Task.CompletedTask;
            });
        });
        return services;
    }

    private static void Describe(OpenApiOperation operation, OpenApiOperationTransformerContext context)
    {
        var metadata = context.Description.ActionDescriptor.EndpointMetadata;
        string method = context.Description.HttpMethod ?? "GET";
        string path = context.Description.RelativePath ?? "";
        bool needsKey = metadata.OfType<IAuthorizeData>().Any() && !metadata.OfType<IAllowAnonymous>().Any();
        bool write = method is "POST" or "PUT" or "PATCH" or "DELETE";
        bool conditional = method is "PUT" or "DELETE";
        bool body = metadata.OfType<IRequestSizeLimitMetadata>().Any() || operation.RequestBody is not null;
        bool namesResource = path.Contains('{', StringComparison.Ordinal);

        if (needsKey)
        {
            operation.Security ??= [];
            operation.Security.Add(new OpenApiSecurityRequirement { [new OpenApiSecuritySchemeReference(SchemeName, context.Document)] = [] });
        }
        operation.Responses ??= new OpenApiResponses();
        foreach (var (status, description) in Errors)
        {
            bool applies = status switch
            {
                401 or 403 => needsKey,
                404 => namesResource,
                409 => write,
                412 or 428 => conditional,
                413 or 415 => body,
                _ => true,
            };
            if (!applies) continue;
            string key = status.ToString(System.Globalization.CultureInfo.InvariantCulture);
            var content = new Dictionary<string, OpenApiMediaType>
            {
                ["application/problem+json"] = new() { Schema = new OpenApiSchemaReference(ProblemSchemaName, context.Document) },
            };
            if (operation.Responses.TryGetValue(key, out var existing) && existing is OpenApiResponse known)
            {
                known.Description = string.IsNullOrEmpty(known.Description) || known.Description is "Bad Request" or "Not Found" or "Conflict" ? description : known.Description;
                known.Content ??= new Dictionary<string, OpenApiMediaType>();
                known.Content.TryAdd("application/problem+json", content["application/problem+json"]);
            }
            else
            {
                operation.Responses[key] = new OpenApiResponse { Description = description, Content = content };
            }
        }
        if (Example(metadata.OfType<IEndpointNameMetadata>().FirstOrDefault()?.EndpointName) is { } example
            && operation.RequestBody is OpenApiRequestBody request && request.Content is { } media)
        {
            foreach (var type in media.Values)
            {
                type.Example = example;
            }
        }
    }

    private static OpenApiSchema ProblemSchema() => new()
    {
        Type = JsonSchemaType.Object,
        Description = "RFC 9457 problem details. Every problem carries `type`, `title`, `status` and `detail`; field errors name the JSON path under `errors` or in `field`.",
        Required = new HashSet<string> { "type", "title", "status" },
        Properties = new Dictionary<string, IOpenApiSchema>
        {
            ["type"] = new OpenApiSchema { Type = JsonSchemaType.String, Description = "URI identifying the kind of problem (the HTTP status's definition)." },
            ["title"] = new OpenApiSchema { Type = JsonSchemaType.String },
            ["status"] = new OpenApiSchema { Type = JsonSchemaType.Integer },
            ["detail"] = new OpenApiSchema { Type = JsonSchemaType.String },
            ["field"] = new OpenApiSchema { Type = JsonSchemaType.String, Description = "The field or header at fault, when there is one." },
            ["errors"] = new OpenApiSchema
            {
                Type = JsonSchemaType.Object,
                Description = "Messages per JSON path of the request body (validation problems).",
                AdditionalProperties = new OpenApiSchema { Type = JsonSchemaType.Array, Items = new OpenApiSchema { Type = JsonSchemaType.String } },
            },
            ["limitBytes"] = new OpenApiSchema { Type = JsonSchemaType.Integer, Description = "On 413: the largest body this operation accepts." },
            ["requestId"] = new OpenApiSchema { Type = JsonSchemaType.String, Description = "Identifies the request in the service's logs." },
        },
    };

    /// <summary>Example bodies of the main writes (invented values, as in docs/api.md).</summary>
    private static JsonNode? Example(string? endpoint) => endpoint switch
    {
        "CreateSite" or "ReplaceSite" => JsonNode.Parse("""
            { "name": "Test Knoll", "observatory": "Example Observatory", "latitudeDeg": 26.2, "longitudeDeg": -11.4,
              "elevationM": 450, "minAltitudeDeg": 20, "sunAvoidanceDeg": 45, "moonAvoidanceDeg": 20, "seeingArcsec": 0.9,
              "darkSkyMagArcsec2": 21.8, "skyReferenceWavelengthAngstrom": 6000, "extinctionMagPerAirmass": 0.13, "status": "open" }
            """),
        "CreateSpectrograph" or "ReplaceSpectrograph" => JsonNode.Parse("""
            { "name": "Knoll-600", "resolvingPower": 600, "referenceWavelengthAngstrom": 6000, "minWavelengthAngstrom": 3800,
              "maxWavelengthAngstrom": 9200, "apertureM": 2.0, "centralObstruction": 0.12, "throughput": 0.22,
              "readNoiseElectrons": 4, "darkCurrentElectronsPerSecond": 0.002, "pixelsPerResolutionElement": 2.5,
              "spatialPixelScaleArcsec": 0.4, "slitWidthArcsec": 1.2, "overheadSeconds": 300, "maxExposureSeconds": 1800,
              "maxAirmass": 2.2, "costPerHour": 120, "nightlyBudgetHours": 8, "status": "available" }
            """),
        "PostCandidateBatch" => JsonNode.Parse("""
            { "candidates": [ { "id": "TG26-00001", "raDeg": 150.1201, "decDeg": -12.4471, "discoveredUtc": "2026-11-25T03:10:00Z",
              "redshift": 0.031, "redshiftError": 0.002,
              "photometry": [
                { "timeUtc": "2026-11-25T03:00:00Z", "band": "r", "magAb": 20.9, "upperLimit": true },
                { "timeUtc": "2026-11-28T03:10:00Z", "band": "r", "magAb": 19.2, "magAbError": 0.08 },
                { "mjd": 61374.5, "band": "g", "fluxMicroJy": 80.0, "fluxMicroJyError": 5.0 } ],
              "subtypeProbabilities": { "Ia": 0.6, "II": 0.3 } } ] }
            """),
        "RequestPlan" => JsonNode.Parse("""{ "night": "2026-12-02", "objective": "identification", "timeLimitSeconds": 20 }"""),
        "ReportObservation" => JsonNode.Parse("""
            { "spectrographId": "5ec00000-0000-4000-8000-000000000002", "outcome": "done", "classifiedLabel": "Ia",
              "achievedSnr": 14.2, "observedUtc": "2026-12-03T02:14:00Z" }
            """),
        "TransitionCandidate" => JsonNode.Parse("""{ "to": "abandoned", "reason": "nucleus of a bright galaxy" }"""),
        "IssueKey" => JsonNode.Parse("""{ "name": "night scheduler", "scopes": ["scheduler"] }"""),
        "RequestCalibration" => JsonNode.Parse("""{ "library": "synthetic", "objects": 400, "seed": 1 }"""),
        _ => null,
    };
}
