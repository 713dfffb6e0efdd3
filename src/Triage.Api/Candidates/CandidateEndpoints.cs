using System.Security.Claims;
using System.Security.Cryptography;
using System.Text.Json;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.Extensions.DependencyInjection.Extensions;
using Microsoft.Extensions.Options;
using Triage.Api.Access;
using Triage.Api.Errors;
using Triage.Api.NightOperations;
using Triage.Api.Replanning;
using Triage.Storage.Plans;
using Triage.Core.Candidates;
using Triage.Storage.Candidates;
using Triage.Storage.Roster;

namespace Triage.Api.Candidates;

/// <summary>
/// Broker intake, queries, lifecycle and observation reports. A batch is all-or-nothing:
/// any invalid candidate rejects the whole batch with a 400 naming every bad item and field,
/// and nothing is stored. Candidate ids are scoped to the posting key.
/// </summary>
public static class CandidateEndpoints
{
    private const int MaxErrorsListed = 200;

    public static IServiceCollection AddCandidates(this IServiceCollection services, IConfiguration config)
    {
        services.Configure<CandidateOptions>(config.GetSection("Triage:Candidates"));
        services.AddSingleton<CandidateStore>();
        services.AddSingleton<CandidateFitting>();
        services.AddSingleton<IdentificationModel>();
        services.TryAddSingleton<IObservationFollowUp, NoObservationFollowUp>();
        if (config.GetSection("Triage:Candidates").Get<CandidateOptions>()?.FitInBackground ?? true)
        {
            services.AddHostedService<CandidateFitWorker>();
        }
        return services;
    }

    public static IEndpointRouteBuilder MapCandidates(this IEndpointRouteBuilder app)
    {
        var limit = app.ServiceProvider.GetRequiredService<IOptions<CandidateOptions>>().Value.MaxBatchBytes;
        var group = app.MapGroup("/api/candidates").WithTags("Candidates");
        group.MapPost("/batches", PostBatch).RequireAuthorization(Policies.Broker).WithBodyLimit(limit)
            .Accepts<BrokerBatch>("application/json").WithName("PostCandidateBatch");
        group.MapGet("/", ListCandidates).RequireAuthorization(Policies.AnyKey).WithName("ListCandidates");
        group.MapGet("/{id:guid}", GetCandidate).RequireAuthorization(Policies.AnyKey).WithName("GetCandidate");
        group.MapGet("/by-broker-id/{brokerId}", GetCandidateByBrokerId).RequireAuthorization(Policies.AnyKey).WithName("GetCandidateByBrokerId");
        group.MapPost("/{id:guid}/transitions", Transition).RequireAuthorization(Policies.Scheduler).WithBodyLimit(16 * 1024).WithName("TransitionCandidate");
        group.MapPost("/{id:guid}/identification", ConfirmIdentification).RequireAuthorization(Policies.Scheduler).WithBodyLimit(16 * 1024).WithName("ConfirmIdentification");
        group.MapPost("/{id:guid}/observations", ReportObservation).RequireAuthorization(Policies.Observatory).WithBodyLimit(16 * 1024).WithName("ReportObservation");
        return app;
    }

    // ---- intake -----------------------------------------------------------------------------

    /// <summary>The batch's JSON rules plus the service's text hygiene (no NUL or other control characters in any string).</summary>
    private static readonly JsonSerializerOptions IntakeJson = CreateIntakeJson();

    private static JsonSerializerOptions CreateIntakeJson()
    {
        var o = BrokerBatchJson.CreateOptions();
        o.Converters.Add(new CleanTextConverter());
        return o;
    }

    public static async Task<Results<Ok<IntakeResponse>, ValidationProblem, ProblemHttpResult>> PostBatch(
        HttpRequest request, CandidateStore store, IOptions<CandidateOptions> options, ClaimsPrincipal user, TimeProvider clock, ArrivalWatch arrivals, CancellationToken ct)
    {
        if (request.ContentType is null || !request.ContentType.StartsWith("application/json", StringComparison.OrdinalIgnoreCase))
        {
            return TypedResults.Problem(detail: "Send the batch as application/json.", statusCode: StatusCodes.Status415UnsupportedMediaType,
                title: "Unsupported media type", extensions: new Dictionary<string, object?> { ["field"] = "Content-Type" });
        }
        BrokerBatch? batch;
        try
        {
            batch = await JsonSerializer.DeserializeAsync<BrokerBatch>(request.Body, IntakeJson, ct);
        }
        catch (JsonException ex)
        {
            var error = BrokerBatchJson.FromJsonException(ex);
            return Invalid([error with { Message = TypeNames.Strip(error.Message) }]);
        }
        var now = clock.GetUtcNow();
        var o = options.Value;
        var labels = new HashSet<string>(o.SubtypeLabels, StringComparer.Ordinal);
        var result = BrokerBatchValidator.Validate(batch, labels, new BatchLimits { MaxCandidates = o.MaxCandidatesPerBatch, NotAfterUtc = now.AddDays(1) });
        if (!result.IsValid)
        {
            return Invalid(result.Errors);
        }
        var intake = new List<CandidateIntake>(result.Candidates.Count);
        int i = 0;
        foreach (var c in result.Candidates)
        {
            // Candidates are valid here, so they map one to one onto the submissions in order.
            var submission = batch!.Candidates![i++]!;
            intake.Add(CandidateIntake.From(c, submission));
        }
        var summary = await store.UpsertBatchAsync(Caller.From(user).PublicId, intake, now, ct);
        if (summary.Created + summary.Updated > 0)
        {
            // A candidate worth more than tonight's margin replans the night (looked at after a quiet spell).
            arrivals.Notice();
        }
        return TypedResults.Ok(new IntakeResponse(summary.Received, summary.Created, summary.Updated, summary.Unchanged, summary.PhotometryWritten, result.Notices));
    }

    private static ValidationProblem Invalid(IReadOnlyList<BatchError> errors)
    {
        var dict = errors.Take(MaxErrorsListed)
            .GroupBy(e => e.Field, StringComparer.Ordinal)
            .ToDictionary(g => g.Key, g => g.Select(e => e.Message).ToArray(), StringComparer.Ordinal);
        var items = errors.Take(MaxErrorsListed).Select(e => new { e.ItemIndex, e.ItemId, e.Field, e.Message }).ToArray();
        string detail = errors.Count > MaxErrorsListed
            ? $"{errors.Count} problems; the first {MaxErrorsListed} are listed. Nothing from this batch was stored."
            : $"{errors.Count} problem(s). Nothing from this batch was stored.";
        return TypedResults.ValidationProblem(dict, detail: detail, title: "Invalid candidate batch",
            extensions: new Dictionary<string, object?> { ["items"] = items });
    }

    // ---- queries ----------------------------------------------------------------------------

    public static async Task<Results<Ok<CandidatePageResponse>, ProblemHttpResult>> ListCandidates(
        CandidateStore store, TimeProvider clock, string? state, double? raDeg, double? decDeg, double? radiusDeg,
        double? brighterThanMagAb, DateTimeOffset? at, DateTimeOffset? updatedSince, int? limit, string? cursor, string? brokerId, string? broker, CancellationToken ct)
    {
        if (brokerId is not null && (brokerId.Length is 0 or > 200))
        {
            return Problems.BadQuery("brokerId", "must be 1 to 200 characters: the broker's own candidate id");
        }
        if (broker is not null && (broker.Length is 0 or > 200))
        {
            return Problems.BadQuery("broker", "must be 1 to 200 characters: the broker key's public id");
        }
        CandidateState? s = null;
        if (state is not null)
        {
            if (!CandidateLifecycle.TryParse(state, out var parsed))
            {
                return Problems.BadQuery("state", $"must be one of: {string.Join(", ", Enum.GetValues<CandidateState>().Select(CandidateLifecycle.Name))}; got '{state}'");
            }
            s = parsed;
        }
        bool anyCone = raDeg is not null || decDeg is not null || radiusDeg is not null;
        if (anyCone)
        {
            if (raDeg is not { } ra || !double.IsFinite(ra) || ra < 0 || ra >= 360)
            {
                return Problems.BadQuery("raDeg", "a cone needs raDeg in [0, 360), decDeg and radiusDeg");
            }
            if (decDeg is not { } dec || !double.IsFinite(dec) || dec < -90 || dec > 90)
            {
                return Problems.BadQuery("decDeg", "a cone needs decDeg in [−90, 90], raDeg and radiusDeg");
            }
            if (radiusDeg is not { } r || !double.IsFinite(r) || r <= 0 || r > 180)
            {
                return Problems.BadQuery("radiusDeg", "a cone needs radiusDeg in (0, 180], raDeg and decDeg");
            }
        }
        if (brighterThanMagAb is { } b && (!double.IsFinite(b) || b < -2 || b > 35))
        {
            return Problems.BadQuery("brighterThanMagAb", "must be an AB magnitude in [−2, 35]");
        }
        int size = limit ?? 100;
        if (size is < 1 or > 1000)
        {
            return Problems.BadQuery("limit", "must be in [1, 1000]");
        }
        Guid? after = null;
        if (cursor is not null)
        {
            if (!TryDecodeCursor(cursor, out var id))
            {
                return Problems.BadQuery("cursor", "is not a cursor returned by this endpoint");
            }
            after = id;
        }
        if (at is { } atValue && !Ranges.Contains(atValue))
        {
            return Problems.BadQuery("at", $"must be {Ranges.InstantRule}");
        }
        if (updatedSince is { } since && !Ranges.Contains(since))
        {
            return Problems.BadQuery("updatedSince", $"must be {Ranges.InstantRule}");
        }
        var when = at?.ToUniversalTime() ?? clock.GetUtcNow();
        var rows = await store.ListAsync(new CandidateQuery(s, raDeg, decDeg, radiusDeg, brighterThanMagAb, when, updatedSince?.ToUniversalTime(), after, size + 1)
        {
            BrokerCandidateId = brokerId,
            Broker = broker,
        }, ct);
        var page = rows.Take(size).Select(r => CandidateSummaryResponse.From(r, when)).ToList();
        string? next = rows.Count > size ? EncodeCursor(page[^1].Id) : null;
        return TypedResults.Ok(new CandidatePageResponse(page, next));
    }

    private static string EncodeCursor(Guid id) => Convert.ToBase64String(id.ToByteArray()).TrimEnd('=').Replace('+', '-').Replace('/', '_');

    private static bool TryDecodeCursor(string cursor, out Guid id)
    {
        id = Guid.Empty;
        string b64 = cursor.Replace('-', '+').Replace('_', '/');
        b64 += new string('=', (4 - b64.Length % 4) % 4);
        Span<byte> bytes = stackalloc byte[18];
        if (cursor.Length != 22 || !Convert.TryFromBase64String(b64, bytes, out int n) || n != 16)
        {
            return false;
        }
        id = new Guid(bytes[..16]);
        return true;
    }

    public static async Task<Results<Ok<CandidateDetailResponse>, ProblemHttpResult>> GetCandidate(
        Guid id, CandidateStore store, CandidateFitting fitting, IOptions<CandidateOptions> options, IOptions<Triage.Api.Plans.PlannerOptions> planner,
        TimeProvider clock, DateTimeOffset? at, CancellationToken ct)
    {
        if (at is { } atValue && !Ranges.Contains(atValue))
        {
            return Problems.BadQuery("at", $"must be {Ranges.InstantRule}");
        }
        var detail = await store.GetAsync(id, ct);
        if (detail is null)
        {
            return Problems.NotFound("id", $"No candidate {id}.");
        }
        var when = at?.ToUniversalTime() ?? clock.GetUtcNow();
        var assessment = await fitting.AssessAsync(detail, ct);
        var c = detail.Candidate;
        return TypedResults.Ok(new CandidateDetailResponse(
            CandidateSummaryResponse.From(detail.Summary, when),
            c.RedshiftError,
            c.Notes,
            c.Photometry.Select(p => new PhotometryResponse(p.TimeUtc, Math.Round(p.Mjd, 6), p.Band.Name, p.FluxMicroJy, p.FluxErrorMicroJy, p.IsUpperLimit, p.MagAb, p.MagAbError)).ToList(),
            assessment.LightCurve.Snapshot(when),
            SubtypePriorResponse.From(assessment.Prior),
            c.SubtypeProbabilities,
            detail.History,
            detail.Observations)
        {
            Posterior = detail.Posterior,
            BestLabel = BestLabelResponse.Of(detail.Posterior, options.Value.IdentificationConfidence),
            SameTransient = await SameTransientPostsAsync(store, id, c, planner.Value, ct),
        });
    }

    /// <summary>The other posts within the planner's same-transient radius and discovery gap, nearest first.</summary>
    private static async Task<IReadOnlyList<SameTransientPostResponse>> SameTransientPostsAsync(
        CandidateStore store, Guid id, Candidate c, Triage.Api.Plans.PlannerOptions planner, CancellationToken ct) =>
        (await store.SameTransientAsync(id, planner.SameTransient, ct))
            .Select(r => new SameTransientPostResponse(r.Id, r.Broker, r.BrokerCandidateId, r.State,
                Math.Round(Triage.Core.Candidates.SameTransient.SeparationArcsec(c.RaDeg, c.DecDeg, r.RaDeg, r.DecDeg), 3)))
            .OrderBy(p => p.SeparationArcsec).ThenBy(p => p.Id)
            .ToList();

    /// <summary>
    /// A candidate by the broker's own id: the one candidate with that id (of <paramref name="broker"/> when given);
    /// 404 when none, 409 naming the brokers when several brokers use the same id.
    /// </summary>
    public static async Task<Results<Ok<CandidateDetailResponse>, ProblemHttpResult>> GetCandidateByBrokerId(
        string brokerId, string? broker, CandidateStore store, CandidateFitting fitting, IOptions<CandidateOptions> options, IOptions<Triage.Api.Plans.PlannerOptions> planner,
        TimeProvider clock, DateTimeOffset? at, CancellationToken ct)
    {
        var rows = await store.ListAsync(new CandidateQuery(null, null, null, null, null, clock.GetUtcNow(), null, null, 10)
        {
            BrokerCandidateId = brokerId,
            Broker = broker,
        }, ct);
        return rows.Count switch
        {
            0 => Problems.NotFound("brokerId", $"No candidate with broker id '{brokerId}'{(broker is null ? "" : $" from broker '{broker}'")}."),
            1 => await GetCandidate(rows[0].Id, store, fitting, options, planner, clock, at, ct),
            _ => Problems.Conflict("brokerId", $"Several brokers use the id '{brokerId}' ({string.Join(", ", rows.Select(r => r.Broker).Distinct())}); add ?broker= to choose."),
        };
    }

    // ---- lifecycle --------------------------------------------------------------------------

    public static async Task<Results<Ok<TransitionResponse>, ValidationProblem, ProblemHttpResult>> Transition(
        Guid id, TransitionRequest request, CandidateStore store, ClaimsPrincipal user, TimeProvider clock, CancellationToken ct)
    {
        var checks = new FieldChecks();
        if (!CandidateLifecycle.TryParse(request.To, out var to))
        {
            checks.Fail("to", $"must be one of: new, planned, abandoned, stale; got '{request.To}'");
        }
        else if (to is CandidateState.Observed or CandidateState.Classified)
        {
            checks.Fail("to", "observed and classified follow from observation reports, not from a transition");
        }
        if (request.Reason is { Length: > 500 })
        {
            checks.Fail("reason", "must be at most 500 characters");
        }
        if (!checks.IsValid)
        {
            return TypedResults.ValidationProblem(checks.ToDictionary());
        }
        bool force = request.Force ?? false;
        var (previous, moved) = await store.TransitionAsync(id, to, from => CandidateLifecycle.CanTransition(from, to, force),
            Caller.From(user).PublicId, request.Reason, clock.GetUtcNow(), ct);
        if (previous is not { } from)
        {
            return Problems.NotFound("id", $"No candidate {id}.");
        }
        if (!moved)
        {
            string hint = from == CandidateState.Classified && to == CandidateState.Planned
                ? " A classified candidate is planned again only with \"force\": true."
                : "";
            return Problems.Conflict("to", $"A {CandidateLifecycle.Name(from)} candidate cannot become {CandidateLifecycle.Name(to)}.{hint}");
        }
        return TypedResults.Ok(new TransitionResponse(id, CandidateLifecycle.Name(from), CandidateLifecycle.Name(to)));
    }

    /// <summary>
    /// A scheduler or admin confirms the subtype: the candidate becomes classified with the label
    /// (its earlier labelled reports then count as trials of the units that made them).
    /// </summary>
    public static async Task<Results<Ok<TransitionResponse>, ValidationProblem, ProblemHttpResult>> ConfirmIdentification(
        Guid id, IdentificationRequest request, CandidateStore store, IOptions<CandidateOptions> options, IOptions<Triage.Api.Plans.PlannerOptions> planner,
        ClaimsPrincipal user, TimeProvider clock, CancellationToken ct)
    {
        var checks = new FieldChecks();
        if (request.Label is not { } label)
        {
            checks.Fail("label", "is required");
        }
        else if (!options.Value.SubtypeLabels.Contains(label, StringComparer.Ordinal))
        {
            checks.Fail("label", $"'{label}' is not a subtype of the active taxonomy");
        }
        if (request.Reason is { Length: > 500 })
        {
            checks.Fail("reason", "is longer than 500 characters");
        }
        if (!checks.IsValid)
        {
            return TypedResults.ValidationProblem(checks.ToDictionary());
        }
        var (previous, confirmed, followed) = await store.ConfirmLabelAsync(id, request.Label!, Caller.From(user).PublicId, request.Reason, clock.GetUtcNow(),
            planner.Value.SameTransient, ct);
        return previous switch
        {
            null => Problems.NotFound("id", $"No candidate {id}."),
            _ when !confirmed => Problems.Conflict("id", $"The candidate is {CandidateLifecycle.Name(previous.Value)}; its label cannot be confirmed."),
            _ => TypedResults.Ok(new TransitionResponse(id, CandidateLifecycle.Name(previous.Value), CandidateLifecycle.Name(CandidateState.Classified))
            {
                OtherPostsClassified = followed,
            }),
        };
    }

    public static async Task<Results<Ok<ObservationReportResponse>, ValidationProblem, ProblemHttpResult>> ReportObservation(
        Guid id, ObservationReportRequest request, CandidateStore store, RosterStore roster, IOptions<CandidateOptions> options,
        PlanStore plans, ReplanScheduler replans, IdentificationModel identification, CandidateFitting fitting,
        IObservationFollowUp followUp, ILogger<IObservationFollowUp> log, IOptions<Triage.Api.Plans.PlannerOptions> planner, ClaimsPrincipal user,
        TimeProvider clock, CancellationToken ct)
    {
        var now = clock.GetUtcNow();
        var checks = new FieldChecks();
        if (request.SpectrographId is null)
        {
            checks.Fail("spectrographId", "is required");
        }
        ObservationOutcome outcome = default;
        switch (request.Outcome)
        {
            case "done": outcome = ObservationOutcome.Done; break;
            case "weather": outcome = ObservationOutcome.Weather; break;
            case "failed": outcome = ObservationOutcome.Failed; break;
            default: checks.Fail("outcome", $"must be one of: done, weather, failed; got '{request.Outcome}'"); break;
        }
        if (outcome == ObservationOutcome.Done && request.Outcome == "done")
        {
            checks.Number("achievedSnr", request.AchievedSnr, 0, 100000, minExclusive: true);
        }
        else if (request.AchievedSnr is { } snr && (!double.IsFinite(snr) || snr < 0))
        {
            checks.Fail("achievedSnr", "must be a finite number ≥ 0");
        }
        if (request.ClassifiedLabel is { } label)
        {
            if (request.Outcome != "done")
            {
                checks.Fail("classifiedLabel", "is only accepted with outcome 'done'");
            }
        }
        var channel = request.ClassifiedLabel is null && request.ClassProbabilities is null ? null : await identification.GetAsync(ct);
        ReportWeighing.Check(request, checks, options.Value.SubtypeLabels, channel);
        if (request.ObservedUtc is not { } observed)
        {
            checks.Fail("observedUtc", "is required");
        }
        else if (observed > now.AddHours(1))
        {
            checks.Fail("observedUtc", "is in the future");
        }
        else
        {
            Ranges.Check(checks, "observedUtc", observed);
        }
        if (!checks.IsValid)
        {
            return TypedResults.ValidationProblem(checks.ToDictionary());
        }
        var spectrograph = await roster.GetSpectrographAsync(request.SpectrographId!.Value, ct);
        if (spectrograph is null)
        {
            return Problems.NotFound("spectrographId", $"No spectrograph {request.SpectrographId}.");
        }
        var site = await roster.GetSiteAsync(spectrograph.Value.SiteId, ct);
        if (site is null || !Caller.From(user).Manages(site.Value.Observatory))
        {
            return Problems.Forbidden("spectrographId", "This spectrograph belongs to another observatory.");
        }
        if (await store.GetAsync(id, ct) is not { } detail)
        {
            return Problems.NotFound("id", $"No candidate {id}.");
        }
        var (refusal, warnings, night) = await ReportSanity.CheckAsync(site.Value, id, spectrograph.Value.Id, outcome, request.ObservedUtc!.Value.ToUniversalTime(), plans, ct);
        if (refusal is not null)
        {
            return TypedResults.ValidationProblem(new Dictionary<string, string[]> { ["observedUtc"] = [refusal] });
        }
        LabelEvidence? evidence = null;
        if (request.ClassifiedLabel is not null)
        {
            var assessment = await fitting.AssessAsync(detail, ct);
            evidence = ReportWeighing.Evidence(request, channel, assessment, spectrograph.Value.ResolvingPower, spectrograph.Value.Name,
                options.Value.IdentificationConfidence);
        }
        ReportOutcome result;
        CandidateState? state;
        Guid reportId;
        WeighedLabel? weighed;
        int followed;
        try
        {
            (result, state, reportId, weighed, followed) = await store.ReportObservationAsync(id, spectrograph.Value.Id, outcome, request.AchievedSnr,
                request.ClassifiedLabel, request.ObservedUtc!.Value.ToUniversalTime(), Caller.From(user).PublicId, now, evidence, planner.Value.SameTransient, ct);
        }
        catch (ArgumentException e)
        {
            checks.Fail("classifiedLabel", e.Message);
            return TypedResults.ValidationProblem(checks.ToDictionary());
        }
        if (result == ReportOutcome.Recorded)
        {
            if (outcome != ObservationOutcome.Done)
            {
                // A lost observation frees its slot and puts the candidate back in the waiting set: replan from now.
                replans.Request(night, "report", $"observation lost ({request.Outcome}) on {spectrograph.Value.Name}");
            }
            else if (state == CandidateState.Unsettled)
            {
                // A spectrum that left the subtype open: a sharper one is wanted, so replan from now.
                replans.Request(night, "report", $"a report on {spectrograph.Value.Name} left candidate {id} unsettled");
            }
            try
            {
                await followUp.ReportedAsync(new ObservationFollowUp(id, spectrograph.Value.Id, request.ObservedUtc!.Value.ToUniversalTime(), state!.Value), ct);
            }
            catch (Exception e) when (e is not OperationCanceledException)
            {
                log.LogWarning(e, "Follow-up of the report on candidate {CandidateId} failed", id);
            }
        }
        return result switch
        {
            ReportOutcome.UnknownCandidate => Problems.NotFound("id", $"No candidate {id}."),
            ReportOutcome.RefusedInState => Problems.Conflict("id", $"The candidate is {CandidateLifecycle.Name(state!.Value)}; reports are not accepted."),
            _ => TypedResults.Ok(new ObservationReportResponse(reportId, id, CandidateLifecycle.Name(state!.Value))
            {
                Posterior = weighed?.PosteriorJson is { } p ? JsonSerializer.Deserialize<Dictionary<string, double>>(p) : null,
                Detail = weighed?.Detail,
                Warnings = warnings,
                OtherPostsClassified = followed,
            }),
        };
    }
}
