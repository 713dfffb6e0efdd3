using System.Globalization;
using System.Text;
using System.Text.Json;
using Microsoft.AspNetCore.Http.HttpResults;
using Triage.Api.Access;
using Triage.Api.Errors;
using Triage.Api.Jobs;
using Triage.Api.Operations;
using Triage.Core.Planning;
using Triage.Storage.Jobs;
using Triage.Storage.Plans;

namespace Triage.Api.Plans;

/// <summary>
/// Night plans: computed by a background job (<c>plan</c>), stored as numbered versions per
/// night; the highest version is the active one. Read as a whole, per spectrograph queue
/// (JSON or CSV), or as a diff between versions. Every plan carries the advisory statement.
/// </summary>
public static class PlanEndpoints
{
    /// <summary>The job kind that computes a plan version.</summary>
    public const string PlanJobKind = "plan";

    public static IServiceCollection AddPlans(this IServiceCollection services)
    {
        services.AddSingleton<PlanStore>();
        services.AddSingleton<IJobHandler, PlanJobHandler>();
        services.AddOptions<PlannerOptions>().BindConfiguration("Triage:Planner")
            .Validate(o => o.MaxPoolCandidates >= 1, "Triage:Planner:MaxPoolCandidates must be at least 1.");
        return services;
    }

    public static IEndpointRouteBuilder MapPlans(this IEndpointRouteBuilder app)
    {
        var g = app.MapGroup("/api/plans").WithTags("Plans");
        g.MapPost("/", RequestPlan).RequireAuthorization(Policies.Scheduler).WithBodyLimit(16 * 1024).WithName("RequestPlan");
        g.MapGet("/{night}", GetPlan).RequireAuthorization(Policies.AnyKey).WithName("GetPlan");
        g.MapGet("/{night}/versions", ListVersions).RequireAuthorization(Policies.AnyKey).WithName("ListPlanVersions");
        g.MapGet("/{night}/queues/{spectrographId}", GetQueue).RequireAuthorization(Policies.AnyKey).WithName("GetQueue");
        g.MapGet("/{night}/diff", DiffVersions).RequireAuthorization(Policies.AnyKey).WithName("DiffPlanVersions");
        g.MapPlanPages();
        return app;
    }

    public static async Task<Results<Accepted<PlanJobResponse>, ValidationProblem>> RequestPlan(
        PlanRequest request, JobStore jobs, System.Security.Claims.ClaimsPrincipal user, TimeProvider clock, CancellationToken ct)
    {
        var checks = new FieldChecks();
        DateOnly night = default;
        if (request.Night is null || !Ranges.TryParseNight(request.Night, out night))
        {
            checks.Fail("night", $"is required as {Ranges.DateRule} (the local date of the evening the night starts)");
        }
        else if (request.FromUtc is { } fromUtc && (fromUtc < Ranges.NightSpan(night).From || fromUtc >= Ranges.NightSpan(night).To))
        {
            checks.Fail("fromUtc", $"must fall inside the night of {night:yyyy-MM-dd}: from {Ranges.NightSpan(night).From:yyyy-MM-dd'T'HH:mm'Z'} to before {Ranges.NightSpan(night).To:yyyy-MM-dd'T'HH:mm'Z'}");
        }
        var objective = checks.Choice("objective", request.Objective, Objectives, PlanObjective.Accuracy);
        var limit = request.TimeLimitSeconds is null ? 5 : checks.Number("timeLimitSeconds", request.TimeLimitSeconds, 0, 300, minExclusive: true);
        if (!checks.IsValid)
        {
            return TypedResults.ValidationProblem(checks.ToDictionary());
        }
        var input = new PlanJobInput(night, objective, limit, request.FromUtc?.ToUniversalTime());
        var id = await jobs.EnqueueAsync(PlanJobKind, JsonSerializer.Serialize(input, OperationsSetup.JobJson), Caller.From(user).KeyId, clock.GetUtcNow(), ct);
        var body = new PlanJobResponse(id, $"/api/jobs/{id}", $"/api/plans/{night:yyyy-MM-dd}");
        return TypedResults.Accepted($"/api/jobs/{id}", body);
    }

    public static async Task<Results<Ok<PlanResponse>, ProblemHttpResult>> GetPlan(string night, int? version, PlanStore store, CancellationToken ct)
    {
        if (!TryNight(night, out var date, out var bad))
        {
            return bad;
        }
        var found = await store.GetAsync(date, version, ct);
        if (found is null)
        {
            return Problems.NotFound(version is null ? "night" : "version", version is null ? $"No plan for the night of {night} yet." : $"No version {version} for the night of {night}.");
        }
        var (row, json) = found.Value;
        return TypedResults.Ok(new PlanResponse(PlanVersionResponse.From(row), NightPlan.AdvisoryStatement, JsonDocument.Parse(json).RootElement.Clone()));
    }

    public static async Task<Results<Ok<IReadOnlyList<PlanVersionResponse>>, ProblemHttpResult>> ListVersions(string night, PlanStore store, CancellationToken ct)
    {
        if (!TryNight(night, out var date, out var bad))
        {
            return bad;
        }
        var rows = await store.ListVersionsAsync(date, ct);
        return TypedResults.Ok<IReadOnlyList<PlanVersionResponse>>(rows.Select(PlanVersionResponse.From).ToList());
    }

    public static async Task<Results<Ok<QueueResponse>, FileContentHttpResult, ProblemHttpResult>> GetQueue(
        string night, string spectrographId, int? version, string? format, PlanStore store, CancellationToken ct)
    {
        if (!TryNight(night, out var date, out var bad))
        {
            return bad;
        }
        if (format is not null and not "json" and not "csv")
        {
            return Problems.BadQuery("format", "must be json or csv");
        }
        // Only this queue travels from the database, not the whole plan document.
        var found = await store.GetQueueAsync(date, version, spectrographId, ct);
        if (found is null)
        {
            return Problems.NotFound("night", $"No plan for the night of {night}.");
        }
        var queue = found.Value.QueueJson is { } json ? JsonSerializer.Deserialize<SpectrographQueue>(json, PlanJson.Options) : null;
        if (queue is null)
        {
            return Problems.NotFound("spectrographId", $"Spectrograph {spectrographId} has no queue in this plan.");
        }
        if (format == "csv")
        {
            return TypedResults.File(Encoding.UTF8.GetBytes(QueueCsv.Write(queue)), "text/csv", $"queue-{night}-{queue.Name}.csv");
        }
        return TypedResults.Ok(new QueueResponse(PlanVersionResponse.From(found.Value.Row), NightPlan.AdvisoryStatement,
            queue.SpectrographId, queue.Name, queue.SiteName, queue.ResolvingPower, queue.Queue));
    }

    public static async Task<Results<Ok<PlanDiffResponse>, ProblemHttpResult>> DiffVersions(string night, int? from, int? to, PlanStore store, CancellationToken ct)
    {
        if (!TryNight(night, out var date, out var bad))
        {
            return bad;
        }
        if (from is null)
        {
            return Problems.BadQuery("from", "is required: the older version number");
        }
        var older = await store.GetAsync(date, from, ct);
        if (older is null)
        {
            return Problems.NotFound("from", $"No version {from} for the night of {night}.");
        }
        var newer = await store.GetAsync(date, to, ct);
        if (newer is null)
        {
            return Problems.NotFound("to", $"No version {to} for the night of {night}.");
        }
        var changes = PlanDiff.Compare(
            PlanJson.Deserialize(older.Value.BodyJson),
            PlanJson.Deserialize(newer.Value.BodyJson));
        return TypedResults.Ok(new PlanDiffResponse(date, older.Value.Row.Version, newer.Value.Row.Version, changes));
    }

    internal static readonly IReadOnlyDictionary<string, PlanObjective> Objectives =
        new Dictionary<string, PlanObjective> { ["accuracy"] = PlanObjective.Accuracy, ["information"] = PlanObjective.Information, ["identification"] = PlanObjective.Identification };

    internal static bool TryNight(string text, out DateOnly night, out ProblemHttpResult problem)
    {
        problem = null!;
        if (Ranges.TryParseNight(text, out night))
        {
            return true;
        }
        problem = Problems.BadQuery("night", $"must be {Ranges.DateRule}; got '{text}'");
        return false;
    }
}

/// <summary>A queue as CSV for observers' tools: one row per observation, UTC times, the reason last.</summary>
public static class QueueCsv
{
    public static string Write(SpectrographQueue queue)
    {
        var inv = CultureInfo.InvariantCulture;
        var sb = new StringBuilder();
        sb.AppendLine("# Advisory plan: the observatory's own interlocks and operators decide what is observed.");
        sb.AppendLine("position,candidate_id,start_utc,end_utc,exposure_seconds,airmass,predicted_mag_ab,expected_snr,expected_accuracy,value,reason");
        var i = 0;
        foreach (var e in queue.Queue)
        {
            sb.Append(++i).Append(',')
              .Append(Quote(e.CandidateId)).Append(',')
              .Append(e.StartUtc.UtcDateTime.ToString("yyyy-MM-ddTHH:mm:ssZ", inv)).Append(',')
              .Append(e.EndUtc.UtcDateTime.ToString("yyyy-MM-ddTHH:mm:ssZ", inv)).Append(',')
              .Append(e.ExposureSeconds.ToString("0", inv)).Append(',')
              .Append(e.Airmass.ToString("0.000", inv)).Append(',')
              .Append(e.PredictedMagnitude.ToString("0.00", inv)).Append(',')
              .Append(e.ExpectedSnr.ToString("0.0", inv)).Append(',')
              .Append(e.ExpectedAccuracy.ToString("0.000", inv)).Append(',')
              .Append(e.Value.ToString("0.0000", inv)).Append(',')
              .Append(Quote(e.Reason)).AppendLine();
        }
        return sb.ToString();
    }

    private static string Quote(string s) => "\"" + s.Replace("\"", "\"\"", StringComparison.Ordinal) + "\"";
}

/// <summary>Input of a <c>plan</c> job.</summary>
public sealed record PlanJobInput(DateOnly Night, PlanObjective Objective, double TimeLimitSeconds, DateTimeOffset? FromUtc);
