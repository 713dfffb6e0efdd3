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
            .Validate(o => o.MaxPoolCandidates >= 1, "Triage:Planner:MaxPoolCandidates must be at least 1.")
            .Validate(o => o.SameTransientRadiusArcsec > 0 && o.SameTransientDays > 0,
                "Triage:Planner:SameTransientRadiusArcsec and Triage:Planner:SameTransientDays must be greater than 0.")
            .ValidateOnStart();
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
        var objective = checks.Choice("objective", request.Objective, Objectives, PlanDefaults.Objective);
        var limit = request.TimeLimitSeconds is null ? 5 : checks.Number("timeLimitSeconds", request.TimeLimitSeconds, 0, 300, minExclusive: true);
        var churn = request.MaxChurnShare is null ? NightReplan.DefaultMaxChurnShare : checks.Number("maxChurnShare", request.MaxChurnShare, 0, 1, minExclusive: true);
        if (!checks.IsValid)
        {
            return TypedResults.ValidationProblem(checks.ToDictionary());
        }
        var input = new PlanJobInput(night, objective, limit, request.FromUtc?.ToUniversalTime(), request.Deterministic ?? true) { MaxChurnShare = churn };
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
        string night, string spectrographId, int? version, string? format, PlanStore store, Triage.Storage.Candidates.CandidateStore candidates, CancellationToken ct)
    {
        if (!TryNight(night, out var date, out var bad))
        {
            return bad;
        }
        if (format is not null and not "json" and not "csv" and not "sheet")
        {
            return Problems.BadQuery("format", "must be json, csv or sheet (the plain-text night sheet)");
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
        // Versions stored without the brokers' ids (older versions, plans written by other tools) get them from the candidates.
        if (queue.Queue.Any(e => e.BrokerCandidateId is null))
        {
            var known = await candidates.BrokerIdsAsync(queue.Queue.Select(e => Guid.TryParse(e.CandidateId, out var g) ? g : Guid.Empty).Where(g => g != Guid.Empty).ToList(), ct);
            queue = queue with
            {
                Queue = queue.Queue.Select(e => e.BrokerCandidateId is null && Guid.TryParse(e.CandidateId, out var g) && known.TryGetValue(g, out var b)
                    ? e with { Broker = b.Broker, BrokerCandidateId = b.BrokerCandidateId }
                    : e).ToList(),
            };
        }
        if (format == "csv")
        {
            return TypedResults.File(Encoding.UTF8.GetBytes(OperatorQueue.Csv(queue)), "text/csv", $"queue-{night}-{queue.Name}.csv");
        }
        if (format == "sheet")
        {
            var row = found.Value.Row;
            return TypedResults.File(Encoding.UTF8.GetBytes(OperatorQueue.NightSheet(queue, row.Night, row.Version, row.PlannedFrom)),
                "text/plain; charset=utf-8", $"night-sheet-{night}-{queue.Name}.txt");
        }
        return TypedResults.Ok(new QueueResponse(PlanVersionResponse.From(found.Value.Row), NightPlan.AdvisoryStatement,
            queue.SpectrographId, queue.Name, queue.SiteName, queue.ResolvingPower, OperatorQueue.Entries(queue)));
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

    internal static readonly IReadOnlyDictionary<string, PlanObjective> Objectives = PlanDefaults.ByName;

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

/// <summary>Input of a <c>plan</c> job.</summary>
/// <param name="Night">Local date of the evening the night starts.</param>
/// <param name="Objective">What to maximise.</param>
/// <param name="TimeLimitSeconds">Wall-clock limit of a non-deterministic solve, s.</param>
/// <param name="FromUtc">Replan from this instant; null: the later of now and the night's start.</param>
/// <param name="Deterministic">Same inputs, same plan (one worker, fixed rounds); the default for every plan job.</param>
/// <param name="TriggerKind">What asked for the version: manual, closure, report, candidate, schedule.</param>
/// <param name="TriggerDetail">One sentence on the trigger.</param>
public sealed record PlanJobInput(DateOnly Night, PlanObjective Objective, double TimeLimitSeconds, DateTimeOffset? FromUtc,
    bool Deterministic = true, string TriggerKind = "manual", string? TriggerDetail = null)
{
    /// <summary>Share of the entries ahead a replan may change, (0, 1]; 1: no limit. Default 0.1 (also for jobs stored before it existed).</summary>
    public double MaxChurnShare { get; init; } = NightReplan.DefaultMaxChurnShare;
}
