namespace Triage.Core.Planning;

/// <summary>How one candidate's place changed between two plan versions.</summary>
public enum PlanChangeKind
{
    /// <summary>In the newer version only.</summary>
    Added,

    /// <summary>In the older version only.</summary>
    Removed,

    /// <summary>On another spectrograph.</summary>
    Moved,

    /// <summary>Same spectrograph, start shifted by more than the tolerance.</summary>
    Retimed,
}

/// <summary>One difference between two versions of a night's plan.</summary>
public sealed record PlanChange(
    string CandidateId,
    PlanChangeKind Kind,
    string? FromSpectrographId,
    string? ToSpectrographId,
    DateTimeOffset? FromStartUtc,
    DateTimeOffset? ToStartUtc);

/// <summary>Compares two plans entry by entry, keyed by candidate.</summary>
public static class PlanDiff
{
    /// <summary>
    /// The changes from <paramref name="older"/> to <paramref name="newer"/>; a start that moved by
    /// less than <paramref name="toleranceSeconds"/> (default 60 s) counts as unchanged.
    /// </summary>
    public static IReadOnlyList<PlanChange> Compare(NightPlan older, NightPlan newer, double toleranceSeconds = 60)
    {
        var a = Index(older);
        var b = Index(newer);
        var changes = new List<PlanChange>();
        foreach (var (id, was) in a)
        {
            if (!b.TryGetValue(id, out var now))
            {
                changes.Add(new PlanChange(id, PlanChangeKind.Removed, was.Spectrograph, null, was.Entry.StartUtc, null));
            }
            else if (now.Spectrograph != was.Spectrograph)
            {
                changes.Add(new PlanChange(id, PlanChangeKind.Moved, was.Spectrograph, now.Spectrograph, was.Entry.StartUtc, now.Entry.StartUtc));
            }
            else if (Math.Abs((now.Entry.StartUtc - was.Entry.StartUtc).TotalSeconds) > toleranceSeconds)
            {
                changes.Add(new PlanChange(id, PlanChangeKind.Retimed, was.Spectrograph, now.Spectrograph, was.Entry.StartUtc, now.Entry.StartUtc));
            }
        }
        foreach (var (id, now) in b)
        {
            if (!a.ContainsKey(id))
            {
                changes.Add(new PlanChange(id, PlanChangeKind.Added, null, now.Spectrograph, null, now.Entry.StartUtc));
            }
        }
        return changes.OrderBy(c => c.Kind).ThenBy(c => c.CandidateId, StringComparer.Ordinal).ToList();
    }

    private static Dictionary<string, (string Spectrograph, QueueEntry Entry)> Index(NightPlan plan) =>
        plan.Spectrographs
            .SelectMany(q => q.Queue.Select(e => (q.SpectrographId, e)))
            .ToDictionary(x => x.e.CandidateId, x => (x.SpectrographId, x.e), StringComparer.Ordinal);
}
