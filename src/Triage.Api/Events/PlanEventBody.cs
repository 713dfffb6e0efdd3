using System.Text.Json;
using Triage.Core.Planning;

namespace Triage.Api.Events;

/// <summary>The trigger of a plan version as carried by its event.</summary>
public sealed record PlanEventTrigger(string Kind, string? Detail);

/// <summary>
/// A new plan version as pushed to schedulers (server-sent events and webhooks). <see cref="Id"/> is the outbox row
/// id (0 until stored); <see cref="SpectrographIds"/> lists the units whose queue changed, so that a scheduler can
/// filter by its own units.
/// </summary>
public sealed record PlanEventMessage(
    long Id,
    string Type,
    DateOnly Night,
    int Version,
    int? PreviousVersion,
    DateTimeOffset CreatedAt,
    DateTimeOffset PlannedFrom,
    PlanEventTrigger Trigger,
    PlanChurn? Churn,
    IReadOnlyList<string> SpectrographIds,
    IReadOnlyList<PlanChange> Changes);

/// <summary>Writes and reads the event body stored in <c>plan_events</c>.</summary>
public static class PlanEventBody
{
    /// <summary>Event type of a new plan version.</summary>
    public const string PlanVersionType = "plan-version";

    /// <summary>The JSON stored with a new version (its id is set when read back).</summary>
    public static string Serialize(DateOnly night, int version, int? previousVersion, DateTimeOffset createdAt, DateTimeOffset plannedFrom,
        string triggerKind, string? triggerDetail, PlanChurn? churn, IReadOnlyList<PlanChange> changes, NightPlan plan)
    {
        var touched = changes.SelectMany(c => new[] { c.FromSpectrographId, c.ToSpectrographId })
            .Where(s => s is not null).Select(s => s!).Distinct(StringComparer.OrdinalIgnoreCase).Order(StringComparer.Ordinal).ToList();
        if (previousVersion is null)
        {
            touched = plan.Spectrographs.Select(q => q.SpectrographId).ToList();
        }

        var message = new PlanEventMessage(0, PlanVersionType, night, version, previousVersion, createdAt, plannedFrom,
            new PlanEventTrigger(triggerKind, triggerDetail), churn, touched, changes);
        return JsonSerializer.Serialize(message, Compact);
    }

    /// <summary>Reads a stored body and sets its outbox id.</summary>
    public static PlanEventMessage Deserialize(long id, string json) =>
        (JsonSerializer.Deserialize<PlanEventMessage>(json, PlanJson.Options) ?? throw new FormatException("plan event: the body is null.")) with { Id = id };

    /// <summary>The message as compact JSON (the SSE data line and the webhook body).</summary>
    public static string ToJson(PlanEventMessage message) => JsonSerializer.Serialize(message, Compact);

    private static readonly JsonSerializerOptions Compact = new(PlanJson.Options) { WriteIndented = false };
}
