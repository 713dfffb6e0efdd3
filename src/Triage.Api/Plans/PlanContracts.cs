using System.Text.Json;
using Triage.Core.Planning;
using Triage.Storage.Plans;

namespace Triage.Api.Plans;

/// <summary>
/// Body of a plan request. <c>objective</c> is identification (default), accuracy or information; <c>fromUtc</c> replans from that instant (default: the later of now and the night's start);
/// <c>deterministic</c> (default true) gives the same plan for the same inputs; false uses <c>timeLimitSeconds</c> of wall time on every core;
/// <c>maxChurnShare</c> (default 0.1, in (0, 1]) is the share of the entries ahead a replan may change; 1 replans freely.
/// </summary>
public sealed record PlanRequest(string? Night, string? Objective, double? TimeLimitSeconds, DateTimeOffset? FromUtc, bool? Deterministic = null, double? MaxChurnShare = null);

/// <summary>A started planning job.</summary>
public sealed record PlanJobResponse(Guid JobId, string JobUrl, string PlanUrl);

/// <summary>A plan version's metadata.</summary>
public sealed record PlanVersionResponse(
    DateOnly Night,
    int Version,
    DateTimeOffset CreatedAt,
    DateTimeOffset PlannedFrom,
    string Objective,
    string SolverStatus,
    double ExpectedIdentifications,
    int Assigned,
    Guid? JobId,
    Guid? CalibrationId)
{
    public static PlanVersionResponse From(PlanVersionRow r) => new(r.Night, r.Version, r.CreatedAt, r.PlannedFrom, r.Objective,
        r.SolverStatus, r.ExpectedIdentifications, r.Assigned, r.JobId, r.CalibrationId)
    {
        Trigger = new PlanTriggerResponse(r.TriggerKind, r.TriggerDetail),
        Churn = r.ChurnJson is null ? null : JsonSerializer.Deserialize<PlanChurn>(r.ChurnJson, PlanJson.Options),
    };

    /// <summary>What asked for this version.</summary>
    public PlanTriggerResponse? Trigger { get; init; }

    /// <summary>Changes against the previous version's entries still ahead (null for the first version).</summary>
    public PlanChurn? Churn { get; init; }
}

/// <summary>What asked for a plan version: manual, closure, report, candidate or schedule, with one sentence.</summary>
public sealed record PlanTriggerResponse(string Kind, string? Detail);

/// <summary>A plan version with the plan itself.</summary>
public sealed record PlanResponse(PlanVersionResponse Version, string Advisory, JsonElement Plan);

/// <summary>One spectrograph's ordered queue in a plan version.</summary>
public sealed record QueueResponse(PlanVersionResponse Version, string Advisory, string SpectrographId, string Name, string SiteName, double ResolvingPower, IReadOnlyList<OperatorEntry> Queue);

/// <summary>Differences between two versions of a night's plan.</summary>
public sealed record PlanDiffResponse(DateOnly Night, int FromVersion, int ToVersion, IReadOnlyList<PlanChange> Changes);
