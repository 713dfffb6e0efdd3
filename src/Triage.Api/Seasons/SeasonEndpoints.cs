using System.Text.Json;
using Microsoft.AspNetCore.Http.HttpResults;
using Triage.Api.Access;
using Triage.Api.Errors;
using Triage.Api.Jobs;
using Triage.Api.Operations;
using Triage.Core.Season;
using Triage.Storage.Calibrations;
using Triage.Storage.Jobs;
using Triage.Storage.Roster;

namespace Triage.Api.Seasons;

/// <summary>
/// Body of a season request: the stored roster and the active calibration over simulated nights
/// (docs/sequential-triage.md §5). Omitted settings take the simulator's defaults.
/// </summary>
public sealed record SeasonRequest(
    int? Nights,
    int? Seed,
    int? Seeds,
    IReadOnlyList<string>? Strategies,
    double? PeaksPerDay,
    double? ClearFraction,
    int? MaxPool,
    IReadOnlyDictionary<string, double>? Degrade,
    bool? Learning);

/// <summary>A started season job.</summary>
public sealed record SeasonJobResponse(Guid JobId, string JobUrl, string SeasonUrl);

/// <summary>What the season job runs (stored as the job's input).</summary>
public sealed record SeasonJobInput(int Nights, int Seed, int Seeds, IReadOnlyList<string> Strategies, double PeaksPerDay, double ClearFraction,
    int MaxPool, IReadOnlyDictionary<string, double> Degrade, bool Learning);

/// <summary>
/// Simulated seasons as durable background jobs (<c>season</c>): <c>POST /api/seasons</c> queues one,
/// <c>GET /api/seasons/{id}</c> answers its progress while it runs and, once done, the same JSON as
/// <c>triage simulate</c> writes.
/// </summary>
public static class SeasonEndpoints
{
    /// <summary>The job kind.</summary>
    public const string SeasonJobKind = "season";

    private static readonly IReadOnlyDictionary<string, SeasonStrategy> StrategyNames =
        Enum.GetValues<SeasonStrategy>().ToDictionary(SeasonSimulator.Name, s => s, StringComparer.Ordinal);

    public static IServiceCollection AddSeasons(this IServiceCollection services)
    {
        services.AddSingleton<IJobHandler, SeasonJobHandler>();
        return services;
    }

    public static IEndpointRouteBuilder MapSeasons(this IEndpointRouteBuilder app)
    {
        var g = app.MapGroup("/api/seasons").WithTags("Seasons");
        g.MapPost("/", RequestSeason).RequireAuthorization(Policies.Scheduler).WithBodyLimit(16 * 1024).WithName("RequestSeason");
        g.MapGet("/{id:guid}", GetSeason).RequireAuthorization(Policies.Scheduler).WithName("GetSeason");
        return app;
    }

    public static async Task<Results<Accepted<SeasonJobResponse>, ValidationProblem, ProblemHttpResult>> RequestSeason(
        SeasonRequest request, JobStore jobs, RosterStore roster, CalibrationStore calibrations,
        System.Security.Claims.ClaimsPrincipal user, TimeProvider clock, CancellationToken ct)
    {
        var defaults = new SeasonSettings();
        var c = new FieldChecks();
        var nights = request.Nights is null ? defaults.Nights : (int)c.Number("nights", request.Nights, 1, 90);
        var seed = request.Seed is null ? 1 : (int)c.Number("seed", request.Seed, 0, int.MaxValue - 100);
        var seeds = request.Seeds is null ? 1 : (int)c.Number("seeds", request.Seeds, 1, 20);
        var peaks = request.PeaksPerDay is null ? defaults.Sky.PeaksPerDay : c.Number("peaksPerDay", request.PeaksPerDay, 0, 1000, minExclusive: true);
        var clear = request.ClearFraction is null ? defaults.ClearFraction : c.Number("clearFraction", request.ClearFraction, 0, 1);
        var maxPool = request.MaxPool is null ? defaults.MaxPoolCandidates : (int)c.Number("maxPool", request.MaxPool, 1, 5000);
        var strategies = new List<string>();
        if (request.Strategies is { Count: 0 })
        {
            c.Fail("strategies", "must name at least one strategy when given");
        }
        for (var i = 0; i < (request.Strategies?.Count ?? 0); i++)
        {
            var name = request.Strategies![i];
            if (name is null || !StrategyNames.ContainsKey(name))
            {
                c.Fail($"strategies[{i}]", $"must be one of {string.Join(", ", StrategyNames.Keys)}");
            }
            else if (!strategies.Contains(name))
            {
                strategies.Add(name);
            }
        }
        if (request.Strategies is null)
        {
            strategies.AddRange(SeasonSettings.Compared.Select(SeasonSimulator.Name));
        }
        var units = (await roster.ListSpectrographsAsync(new SpectrographFilter(), ct)).Select(v => v.Value.Name).ToHashSet(StringComparer.Ordinal);
        foreach (var (unit, d) in request.Degrade ?? new Dictionary<string, double>())
        {
            if (!units.Contains(unit))
            {
                c.Fail($"degrade.{unit}", "names no spectrograph of the roster");
            }
            else
            {
                c.Number($"degrade.{unit}", d, 0, 1);
            }
        }
        if (!c.IsValid)
        {
            return TypedResults.ValidationProblem(c.ToDictionary());
        }
        if (units.Count == 0)
        {
            return Problems.Conflict("roster", "The roster has no spectrograph to simulate.");
        }
        if (await calibrations.GetAsync(null, ct) is null)
        {
            return Problems.Conflict("calibration", "No calibration is active: request one (POST /api/calibrations) or import a table first.");
        }
        var input = new SeasonJobInput(nights, seed, seeds, strategies, peaks, clear, maxPool,
            new Dictionary<string, double>(request.Degrade ?? new Dictionary<string, double>(), StringComparer.Ordinal), request.Learning ?? true);
        var id = await jobs.EnqueueAsync(SeasonJobKind, JsonSerializer.Serialize(input, OperationsSetup.JobJson), Caller.From(user).KeyId, clock.GetUtcNow(), ct);
        return TypedResults.Accepted($"/api/seasons/{id}", new SeasonJobResponse(id, $"/api/jobs/{id}", $"/api/seasons/{id}"));
    }

    /// <summary>While the job runs: its state, percent done, step and ETA. Once it succeeded: the season JSON with <c>status</c> and <c>jobId</c>.</summary>
    public static async Task<Results<ContentHttpResult, Ok<JobResponse>, ProblemHttpResult>> GetSeason(Guid id, JobStore jobs, CancellationToken ct)
    {
        var job = await jobs.GetAsync(id, ct);
        if (job is null || job.Kind != SeasonJobKind)
        {
            return Problems.NotFound("id", $"No season {id}.");
        }
        if (job.Status != JobStatus.Succeeded || job.Result is null)
        {
            return TypedResults.Ok(JobResponse.From(job, withResult: false));
        }
        var body = System.Text.Json.Nodes.JsonNode.Parse(job.Result)!.AsObject();
        body.Insert(0, "status", "succeeded");
        body.Insert(1, "jobId", id.ToString());
        return TypedResults.Content(body.ToJsonString(), "application/json");
    }

    /// <summary>The settings a job input stands for.</summary>
    internal static SeasonSettings Settings(SeasonJobInput input) => new()
    {
        Nights = input.Nights,
        Seed = input.Seed,
        ClearFraction = input.ClearFraction,
        MaxPoolCandidates = input.MaxPool,
        LearnUnitAccuracy = input.Learning,
        Sky = new SkySettings { PeaksPerDay = input.PeaksPerDay },
        TruthDegradation = input.Degrade,
        Strategies = input.Strategies.Select(s => StrategyNames.TryGetValue(s, out var v) ? v : throw new JobInputException($"Unknown strategy '{s}'.")).ToList(),
    };
}
