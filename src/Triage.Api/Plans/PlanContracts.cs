using System.Text.Json;
using Triage.Core.Planning;
using Triage.Storage.Plans;

namespace Triage.Api.Plans;

/// <summary>Body of a plan request. <c>fromUtc</c> replans from that instant (default: the start of the night).</summary>
public sealed record PlanRequest(string? Night, string? Objective, double? TimeLimitSeconds, DateTimeOffset? FromUtc);

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
        r.SolverStatus, r.ExpectedIdentifications, r.Assigned, r.JobId, r.CalibrationId);
}

/// <summary>A plan version with the plan itself.</summary>
public sealed record PlanResponse(PlanVersionResponse Version, string Advisory, JsonElement Plan);

/// <summary>One spectrograph's ordered queue in a plan version.</summary>
public sealed record QueueResponse(PlanVersionResponse Version, string Advisory, string SpectrographId, string Name, string SiteName, double ResolvingPower, IReadOnlyList<QueueEntry> Queue);

/// <summary>Differences between two versions of a night's plan.</summary>
public sealed record PlanDiffResponse(DateOnly Night, int FromVersion, int ToVersion, IReadOnlyList<PlanChange> Changes);
