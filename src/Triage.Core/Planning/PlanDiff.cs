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

/// <summary>How much a new version changed the part of the previous one that was still ahead.</summary>
/// <param name="ComparedEntries">Entries of the previous version still ahead (ending after the new version's planned-from instant).</param>
/// <param name="Moved">Entries now on another spectrograph.</param>
/// <param name="Retimed">Same spectrograph, start shifted by more than the tolerance.</param>
/// <param name="Added">Entries new in this version.</param>
/// <param name="Removed">Entries ahead that this version dropped.</param>
public sealed record PlanChurn(int ComparedEntries, int Moved, int Retimed, int Added, int Removed)
{
    /// <summary>(moved + retimed + added + removed) / compared entries (0 when nothing was compared and nothing added), ≥ 0.</summary>
    public double Share => (Moved + Retimed + Added + Removed) / (double)Math.Max(1, ComparedEntries);

    /// <summary>Counts the changes of a diff.</summary>
    public static PlanChurn Of(IReadOnlyList<PlanChange> changes, int comparedEntries) => new(
        comparedEntries,
        changes.Count(c => c.Kind == PlanChangeKind.Moved),
        changes.Count(c => c.Kind == PlanChangeKind.Retimed),
        changes.Count(c => c.Kind == PlanChangeKind.Added),
        changes.Count(c => c.Kind == PlanChangeKind.Removed));

    /// <summary>
    /// The previous version cut to what was still ahead at <paramref name="fromUtc"/> (entries ending after it), compared
    /// with the new version: the changes and their counts. Entries already over are history, not churn.
    /// </summary>
    public static (IReadOnlyList<PlanChange> Changes, PlanChurn Churn) Between(NightPlan previous, NightPlan next, DateTimeOffset fromUtc)
    {
        ArgumentNullException.ThrowIfNull(previous);
        ArgumentNullException.ThrowIfNull(next);
        var ahead = previous with
        {
            Spectrographs = previous.Spectrographs.Select(q => q with { Queue = q.Queue.Where(e => e.EndUtc > fromUtc).ToList() }).ToList(),
        };
        var changes = PlanDiff.Compare(ahead, next);
        return (changes, Of(changes, ahead.Spectrographs.Sum(q => q.Queue.Count)));
    }
}
