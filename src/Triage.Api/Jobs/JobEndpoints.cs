using System.Text.Json;
using Microsoft.AspNetCore.Http.HttpResults;
using Triage.Api.Access;
using Triage.Api.Errors;
using Triage.Storage.Jobs;

namespace Triage.Api.Jobs;

/// <summary>A job as the API shows it: state, percent done, estimated seconds left, result or error.</summary>
public sealed record JobResponse(
    Guid Id,
    string Kind,
    string Status,
    double PercentDone,
    string? Step,
    double? EtaSeconds,
    int Attempts,
    DateTimeOffset CreatedAt,
    DateTimeOffset? StartedAt,
    DateTimeOffset? FinishedAt,
    string? Error,
    JsonElement? Result)
{
    public static JobResponse From(JobRow j, bool withResult) => new(
        j.Id, j.Kind, j.Status.ToString().ToLowerInvariant(), Math.Round(100 * j.Progress, 1), StepOf(j),
        j.Status is JobStatus.Succeeded or JobStatus.Failed ? null : j.EtaSeconds is { } e ? Math.Round(e, 1) : null, j.Attempts, j.CreatedAt, j.StartedAt, j.FinishedAt, j.Error,
        withResult && j.Result is not null ? JsonDocument.Parse(j.Result).RootElement.Clone() : null);

    /// <summary>The current step; once the job has ended, that it finished and how (the last working step is kept after a colon).</summary>
    public static string? StepOf(JobRow j) => j.Status switch
    {
        JobStatus.Succeeded => "finished: succeeded" + (string.IsNullOrEmpty(j.ProgressNote) ? "" : $" (last step: {j.ProgressNote})"),
        JobStatus.Failed => "finished: failed" + (string.IsNullOrEmpty(j.ProgressNote) ? "" : $" (last step: {j.ProgressNote})"),
        _ => j.ProgressNote,
    };
}

public static class JobEndpoints
{
    public static IServiceCollection AddJobs(this IServiceCollection services, IConfiguration config)
    {
        services.AddSingleton<JobStore>();
        services.Configure<JobOptions>(config.GetSection("Triage:Jobs"));
        services.AddHostedService<JobRunner>();
        return services;
    }

    public static IEndpointRouteBuilder MapJobs(this IEndpointRouteBuilder app)
    {
        var g = app.MapGroup("/api/jobs").WithTags("Jobs").RequireAuthorization(Policies.AnyKey);
        g.MapGet("/{id:guid}", GetJob).WithName("GetJob");
        g.MapGet("/", ListJobs).WithName("ListJobs");
        return app;
    }

    public static async Task<Results<Ok<JobResponse>, ProblemHttpResult>> GetJob(Guid id, JobStore store, bool? withResult, CancellationToken ct)
    {
        var job = await store.GetAsync(id, ct);
        return job is null ? Problems.NotFound("id", $"No job {id}.") : TypedResults.Ok(JobResponse.From(job, withResult ?? true));
    }

    public static async Task<Results<Ok<IReadOnlyList<JobResponse>>, ProblemHttpResult>> ListJobs(JobStore store, string? kind, int? limit, CancellationToken ct)
    {
        if (limit is { } l && (l < 1 || l > 500))
        {
            return Problems.BadQuery("limit", "must be between 1 and 500");
        }
        var jobs = await store.ListAsync(kind, limit ?? 50, ct);
        return TypedResults.Ok<IReadOnlyList<JobResponse>>(jobs.Select(j => JobResponse.From(j, withResult: false)).ToList());
    }
}
