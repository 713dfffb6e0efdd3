using System.Globalization;
using System.Text;
using System.Text.Json;
using Microsoft.AspNetCore.Http.HttpResults;
using Triage.Api.Access;
using Triage.Api.Errors;
using Triage.Api.Jobs;
using Triage.Api.Operations;
using Triage.Core.Calibration;
using Triage.Core.Spectra;
using Triage.Learning;
using Triage.Storage.Calibrations;
using Triage.Storage.Jobs;

namespace Triage.Api.Calibrations;

/// <summary>
/// Accuracy models: computed by a durable <c>calibration</c> job from a library, or imported as
/// a ready-made table; one is active and is what the planner uses; admins switch it.
/// </summary>
public static class CalibrationEndpoints
{
    public static IServiceCollection AddCalibrations(this IServiceCollection services)
    {
        services.AddSingleton<CalibrationStore>();
        services.AddSingleton<CalibrationPartStore>();
        services.AddSingleton<CalibrationLibraries>();
        services.AddSingleton<IJobHandler, CalibrationJobHandler>();
        services.AddSingleton<IJobHandler, CalibrationPartJobHandler>();
        return services;
    }

    public static IEndpointRouteBuilder MapCalibrations(this IEndpointRouteBuilder app)
    {
        var g = app.MapGroup("/api/calibrations").WithTags("Calibrations");
        g.MapPost("/", RequestCalibration).RequireAuthorization(Policies.Admin).WithBodyLimit(16 * 1024).WithName("RequestCalibration");
        g.MapPost("/imports", ImportTable).RequireAuthorization(Policies.Admin).WithBodyLimit(8 * 1024 * 1024).WithName("ImportCalibrationTable")
            .Accepts<string>("text/csv");
        g.MapGet("/", ListCalibrations).RequireAuthorization(Policies.AnyKey).WithName("ListCalibrations");
        g.MapGet("/active", GetActive).RequireAuthorization(Policies.AnyKey).WithName("GetActiveCalibration");
        g.MapGet("/{id:guid}", GetCalibration).RequireAuthorization(Policies.AnyKey).WithName("GetCalibration");
        g.MapPost("/{id:guid}/activation", Activate).RequireAuthorization(Policies.Admin).WithName("ActivateCalibration");
        g.MapGet("/{id:guid}/plots/recall.svg", RecallPlot).RequireAuthorization(Policies.AnyKey).WithName("RecallPlot");
        g.MapGet("/{id:guid}/plots/confusion.svg", ConfusionPlot).RequireAuthorization(Policies.AnyKey).WithName("ConfusionPlot");
        g.MapGet("/{id:guid}/plots/equal-exposure.svg", EqualExposurePlot).RequireAuthorization(Policies.AnyKey).WithName("EqualExposurePlot");
        return app;
    }

    public static async Task<Results<Accepted<CalibrationJobResponse>, ValidationProblem>> RequestCalibration(
        CalibrationRequest request, JobStore jobs, CalibrationLibraries libraries, System.Security.Claims.ClaimsPrincipal user, TimeProvider clock, CancellationToken ct)
    {
        var c = new FieldChecks();
        var library = request.Library ?? "synthetic";
        if (library is not ("synthetic" or "folder"))
        {
            c.Fail("library", $"must be synthetic or folder; got '{library}'");
        }
        if (library == "folder" && (string.IsNullOrWhiteSpace(request.LibraryPath) || !Directory.Exists(request.LibraryPath)))
        {
            c.Fail("libraryPath", "must name an existing library folder on the server");
        }
        if (library == "synthetic" && request.LibraryPath is not null)
        {
            c.Fail("libraryPath", "only applies to library = folder");
        }
        var objects = request.Objects ?? 400;
        if (objects is < 30 or > 5000)
        {
            c.Fail("objects", "must be between 30 and 5000");
        }
        var folds = request.Folds ?? 5;
        if (folds is < 2 or > 10)
        {
            c.Fail("folds", "must be between 2 and 10");
        }
        if (request.Resolutions is { } rs)
        {
            if (rs.Count is 0 or > 40)
            {
                c.Fail("resolutions", "needs 1 to 40 values");
            }
            for (var i = 0; i < rs.Count; i++)
            {
                if (!double.IsFinite(rs[i]) || rs[i] < CalibrationSettings.MinimumResolution || rs[i] > 1_000_000)
                {
                    c.Fail($"resolutions[{i}]", string.Create(CultureInfo.InvariantCulture,
                        $"must be in [{CalibrationSettings.MinimumResolution}, 1000000]: {CalibrationSettings.MinimumResolution} is the lowest R the calibration's features are built for"));
                }
            }
        }
        var snr = request.Snr ?? CalibrationSettings.DefaultSnrLevels.ToArray();
        if (snr.Count is 0 or > 10)
        {
            c.Fail("snr", "needs 1 to 10 values (null = native S/N)");
        }
        for (var i = 0; i < snr.Count; i++)
        {
            if (snr[i] is { } s && (!double.IsFinite(s) || s <= 0 || s > 10_000))
            {
                c.Fail($"snr[{i}]", "must be in (0, 10000] or null for the native S/N");
            }
        }
        var input = new CalibrationJobInput(library, request.LibraryPath, objects, request.Seed ?? 1, request.Resolutions, snr, folds, request.Activate ?? false);
        if (c.IsValid)
        {
            // The library's native resolving power bounds the grid: refused here, not as a failed job later.
            await CheckAgainstLibraryAsync(input, libraries, c, ct);
        }
        if (!c.IsValid)
        {
            return TypedResults.ValidationProblem(c.ToDictionary());
        }
        var id = await jobs.EnqueueAsync(CalibrationJobHandler.JobKind, JsonSerializer.Serialize(input, OperationsSetup.JobJson), Caller.From(user).KeyId, clock.GetUtcNow(), ct);
        return TypedResults.Accepted($"/api/jobs/{id}", new CalibrationJobResponse(id, $"/api/jobs/{id}"));
    }

    /// <summary>
    /// Fails each grid R above the library's native resolving power (the lowest source resolution of its spectra; the
    /// synthetic library's is <see cref="Triage.Core.Spectra.Synthetic.SynthOptions.NativeResolution"/>). A folder
    /// library is read once for this; one that does not import, or that declares no resolution when the request names
    /// none, is refused naming <c>libraryPath</c> or <c>resolutions</c>.
    /// </summary>
    private static async Task CheckAgainstLibraryAsync(CalibrationJobInput input, CalibrationLibraries libraries, FieldChecks c, CancellationToken ct)
    {
        var resolutions = input.Resolutions;
        double? native;
        if (input.Library == "synthetic")
        {
            native = new Triage.Core.Spectra.Synthetic.SynthOptions().NativeResolution;
        }
        else
        {
            try
            {
                // Kept in memory a while: the job's first steps on this replica reuse it.
                native = (await Task.Run(() => libraries.Get(input), ct)).MinSourceResolution;
            }
            catch (JobInputException e)
            {
                c.Fail("libraryPath", e.Message);
                return;
            }
        }
        if (native is not double top)
        {
            if (resolutions is null)
            {
                c.Fail("resolutions", "the library declares no source resolution: give the resolutions explicitly");
            }
            return;
        }
        for (var i = 0; i < (resolutions?.Count ?? 0); i++)
        {
            if (resolutions![i] > top * (1 + 1e-9))
            {
                c.Fail($"resolutions[{i}]", string.Create(CultureInfo.InvariantCulture,
                    $"R {resolutions[i]} is above the library's native resolving power {top}: a spectrum cannot be degraded to a higher R"));
            }
        }
    }

    public static async Task<Results<Created<CalibrationResponse>, ValidationProblem, ProblemHttpResult>> ImportTable(
        HttpRequest http, CalibrationStore store, TimeProvider clock, bool? activate, CancellationToken ct)
    {
        if (http.ContentType is null || !http.ContentType.StartsWith("text/csv", StringComparison.OrdinalIgnoreCase))
        {
            return TypedResults.Problem(statusCode: 415, title: "Unsupported media type", detail: "Send the table as text/csv.",
                extensions: new Dictionary<string, object?> { ["field"] = "Content-Type" });
        }
        using var reader = new StreamReader(http.Body, Encoding.UTF8);
        var text = await reader.ReadToEndAsync(ct);
        var (document, errors) = AccuracyTableCsv.Parse(new StringReader(text), Taxonomy.Default.Subtypes);
        if (document is null)
        {
            return TypedResults.ValidationProblem(errors
                .GroupBy(e => $"line {e.Line}: {e.Column}")
                .ToDictionary(g => g.Key, g => g.Select(e => e.Message).ToArray()));
        }
        var row = await store.AddAsync(new NewCalibration("imported", false, null, "imported table", null, null, CalibrationJson.Serialize(document)),
            activate ?? false, clock.GetUtcNow(), ct);
        return TypedResults.Created($"/api/calibrations/{row.Id}", CalibrationResponse.From(row));
    }

    public static async Task<Ok<IReadOnlyList<CalibrationResponse>>> ListCalibrations(CalibrationStore store, CancellationToken ct) =>
        TypedResults.Ok<IReadOnlyList<CalibrationResponse>>((await store.ListAsync(ct)).Select(CalibrationResponse.From).ToList());

    public static async Task<Results<Ok<CalibrationDocumentResponse>, ProblemHttpResult>> GetActive(CalibrationStore store, CancellationToken ct)
    {
        var found = await store.GetAsync(null, ct);
        return found is null
            ? Problems.NotFound("active", "No calibration is active yet; request one (POST /api/calibrations) or import a table.")
            : TypedResults.Ok(new CalibrationDocumentResponse(CalibrationResponse.From(found.Value.Row), JsonDocument.Parse(found.Value.DocumentJson).RootElement.Clone()));
    }

    public static async Task<Results<Ok<CalibrationDocumentResponse>, ProblemHttpResult>> GetCalibration(Guid id, CalibrationStore store, CancellationToken ct)
    {
        var found = await store.GetAsync(id, ct);
        return found is null
            ? Problems.NotFound("id", $"No calibration {id}.")
            : TypedResults.Ok(new CalibrationDocumentResponse(CalibrationResponse.From(found.Value.Row), JsonDocument.Parse(found.Value.DocumentJson).RootElement.Clone()));
    }

    public static async Task<Results<NoContent, ProblemHttpResult>> Activate(Guid id, CalibrationStore store, CancellationToken ct) =>
        await store.ActivateAsync(id, ct) ? TypedResults.NoContent() : Problems.NotFound("id", $"No calibration {id}.");

    public static async Task<Results<ContentHttpResult, ProblemHttpResult>> RecallPlot(Guid id, string? snr, CalibrationStore store, CancellationToken ct)
    {
        var found = await store.GetAsync(id, ct);
        if (found is null)
        {
            return Problems.NotFound("id", $"No calibration {id}.");
        }
        var document = CalibrationJson.Deserialize(found.Value.DocumentJson);
        if (!TrySnr(snr, document, out var level, out var bad))
        {
            return bad;
        }
        return TypedResults.Content(CalibrationPlots.RecallCurvesSvg(document, level), "image/svg+xml");
    }

    public static async Task<Results<ContentHttpResult, ProblemHttpResult>> EqualExposurePlot(Guid id, CalibrationStore store, CancellationToken ct)
    {
        var found = await store.GetAsync(id, ct);
        if (found is null)
        {
            return Problems.NotFound("id", $"No calibration {id}.");
        }
        var document = CalibrationJson.Deserialize(found.Value.DocumentJson);
        return TypedResults.Content(CalibrationPlots.EqualExposureSvg(document), "image/svg+xml");
    }

    public static async Task<Results<ContentHttpResult, ProblemHttpResult>> ConfusionPlot(Guid id, double? resolution, string? snr, CalibrationStore store, CancellationToken ct)
    {
        var found = await store.GetAsync(id, ct);
        if (found is null)
        {
            return Problems.NotFound("id", $"No calibration {id}.");
        }
        var document = CalibrationJson.Deserialize(found.Value.DocumentJson);
        if (!TrySnr(snr, document, out var level, out var bad))
        {
            return bad;
        }
        var r = resolution ?? document.Resolutions.Max();
        if (!document.Resolutions.Contains(r))
        {
            return Problems.BadQuery("resolution", $"must be one of the grid's R values: {string.Join(", ", document.Resolutions)}");
        }
        if (!document.Confusions.Any(m => m.Resolution == r && m.Snr == level))
        {
            return Problems.NotFound("resolution", "This calibration holds no confusion matrix at that R and S/N (imported tables have none).");
        }
        return TypedResults.Content(CalibrationPlots.ConfusionSvg(document, r, level), "image/svg+xml");
    }

    /// <summary>S/N query values: a number of the grid, or <c>native</c>; default the highest finite level.</summary>
    private static bool TrySnr(string? text, AccuracyModelDocument document, out double? level, out ProblemHttpResult problem)
    {
        problem = null!;
        if (text is null)
        {
            level = document.SnrLevels.Where(s => s is not null).DefaultIfEmpty(null).Max();
            return true;
        }
        if (text.Equals("native", StringComparison.OrdinalIgnoreCase))
        {
            level = null;
        }
        else if (double.TryParse(text, System.Globalization.NumberStyles.Float, System.Globalization.CultureInfo.InvariantCulture, out var v))
        {
            level = v;
        }
        else
        {
            level = null;
            problem = Problems.BadQuery("snr", $"must be a number or 'native'; got '{text}'");
            return false;
        }
        if (!document.SnrLevels.Contains(level))
        {
            problem = Problems.BadQuery("snr", $"must be one of the grid's S/N levels: {string.Join(", ", document.SnrLevels.Select(s => s?.ToString(System.Globalization.CultureInfo.InvariantCulture) ?? "native"))}");
            return false;
        }
        return true;
    }
}
