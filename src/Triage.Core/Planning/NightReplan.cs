namespace Triage.Core.Planning;

/// <summary>A queue entry of a plan version with its spectrograph.</summary>
/// <param name="SpectrographId">The unit.</param>
/// <param name="Entry">The entry.</param>
public sealed record UnitEntry(string SpectrographId, QueueEntry Entry);

/// <summary>What a replan takes from the previous version of the night.</summary>
/// <param name="Kept">Entries executing at the replan instant or starting within the freeze time after it: kept as they are.</param>
/// <param name="Anchors">Later entries: anchored (kept unless a change gains more than the stability share).</param>
/// <param name="BusyUntilUtc">Per unit, the end of its last kept entry.</param>
public sealed record ReplanStart(IReadOnlyList<UnitEntry> Kept, IReadOnlyList<PreviousAssignment> Anchors, IReadOnlyDictionary<Guid, DateTimeOffset> BusyUntilUtc)
{
    /// <summary>Candidate ids of the kept entries (not planned again).</summary>
    public IReadOnlySet<string> KeptIds { get; } = Kept.Select(k => k.Entry.CandidateId).ToHashSet(StringComparer.Ordinal);
}

/// <summary>
/// Replanning a night from an instant t: entries of the previous version with start ≤ t + freeze &lt; … &lt; end are kept
/// (executing, or the unit is already acquiring them), entries starting later become anchors of the new solve, and
/// entries over before t are history (neither kept nor compared).
/// </summary>
public static class NightReplan
{
    /// <summary>Default freeze time: entries starting within 5 minutes of the replan instant are kept as they are.</summary>
    public static readonly TimeSpan DefaultFreeze = TimeSpan.FromMinutes(5);

    /// <summary>Default most share of the entries ahead a replan may change (see <see cref="ChurnBudget"/>): 0.1.</summary>
    public const double DefaultMaxChurnShare = 0.1;

    /// <summary>
    /// The churn budget of a replan: the most changes (moved, retimed, dropped or added entries) it may make to the
    /// previous version, so that fewer than <paramref name="maxShare"/> of the N entries still ahead (kept and
    /// anchored) change: ⌈share·N⌉ − 1, but at least one, so that a valuable arrival or a lost observation can
    /// always enter (with fewer than 1/share entries ahead one change is then more than the share). Changes a
    /// closure forces (entries that no longer fit) are not counted against it.
    /// </summary>
    /// <param name="start">The split of the previous version.</param>
    /// <param name="maxShare">Share in (0, 1].</param>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="maxShare"/> outside (0, 1].</exception>
    public static int ChurnBudget(ReplanStart start, double maxShare = DefaultMaxChurnShare)
    {
        ArgumentNullException.ThrowIfNull(start);
        ArgumentOutOfRangeException.ThrowIfLessThanOrEqual(maxShare, 0);
        ArgumentOutOfRangeException.ThrowIfGreaterThan(maxShare, 1);
        var ahead = start.Kept.Count + start.Anchors.Count;
        return Math.Max(1, (int)Math.Ceiling(maxShare * ahead - 1e-9) - 1);
    }

    /// <summary>Splits the previous version at <paramref name="fromUtc"/>.</summary>
    /// <param name="previous">The night's latest version (null for a first plan).</param>
    /// <param name="fromUtc">The replan instant.</param>
    /// <param name="freeze">Entries starting within this time after the instant are kept.</param>
    /// <param name="mayKeep">Optional: false for an entry that must not be kept (e.g. it runs into a closure).</param>
    public static ReplanStart Split(NightPlan? previous, DateTimeOffset fromUtc, TimeSpan freeze, Func<UnitEntry, bool>? mayKeep = null)
    {
        var kept = new List<UnitEntry>();
        var anchors = new List<PreviousAssignment>();
        foreach (var q in previous?.Spectrographs ?? [])
        {
            foreach (var e in q.Queue)
            {
                var item = new UnitEntry(q.SpectrographId, e);
                if (e.StartUtc <= fromUtc + freeze && fromUtc < e.EndUtc)
                {
                    if (mayKeep?.Invoke(item) ?? true)
                    {
                        kept.Add(item);
                    }
                }
                else if (e.StartUtc > fromUtc + freeze)
                {
                    anchors.Add(new PreviousAssignment(e.CandidateId, q.SpectrographId, e.StartUtc, e.ExposureSeconds));
                }
            }
        }

        var busy = kept.Where(k => Guid.TryParse(k.SpectrographId, out _))
            .GroupBy(k => Guid.Parse(k.SpectrographId)).ToDictionary(g => g.Key, g => g.Max(k => k.Entry.EndUtc));
        return new ReplanStart(kept, anchors, busy);
    }

    /// <summary>
    /// Per unit of <paramref name="previous"/>, the budget still free for a replan at <paramref name="fromUtc"/>: the
    /// previous version's budget (already net of what came before it) less the durations of its own entries that start
    /// before <paramref name="fromUtc"/> + <paramref name="freeze"/> (over, under way or kept), so that a replan never
    /// gets back time the night has already spent.
    /// </summary>
    public static IReadOnlyDictionary<Guid, double> RemainingBudget(NightPlan? previous, DateTimeOffset fromUtc, TimeSpan freeze)
    {
        var result = new Dictionary<Guid, double>();
        foreach (var q in previous?.Spectrographs ?? [])
        {
            if (!Guid.TryParse(q.SpectrographId, out var id))
            {
                continue;
            }

            var spent = q.Queue.Where(e => !e.KeptFromPrevious && e.StartUtc <= fromUtc + freeze).Sum(e => (e.EndUtc - e.StartUtc).TotalSeconds);
            result[id] = Math.Max(0, q.BudgetSeconds - spent);
        }

        return result;
    }

    /// <summary>What the reason of an entry kept from the previous version starts with.</summary>
    public const string KeptPrefix = "Executing or about to start when the night was replanned; kept as it was. ";

    /// <summary>The new plan with the kept entries put back in their queues (marked as kept).</summary>
    public static NightPlan WithKept(NightPlan plan, IReadOnlyList<UnitEntry> kept)
    {
        ArgumentNullException.ThrowIfNull(plan);
        if (kept.Count == 0)
        {
            return plan;
        }

        var byUnit = kept.ToLookup(k => k.SpectrographId, k => k.Entry with
        {
            // Said once, however many replans have kept it.
            Reason = k.Entry.Reason.StartsWith(KeptPrefix, StringComparison.Ordinal) ? k.Entry.Reason : KeptPrefix + k.Entry.Reason,
            KeptFromPrevious = true,
        }, StringComparer.OrdinalIgnoreCase);
        var queues = plan.Spectrographs
            .Select(q => byUnit[q.SpectrographId].Any() ? q with { Queue = byUnit[q.SpectrographId].Concat(q.Queue).OrderBy(e => e.StartUtc).ToList() } : q)
            .ToList();
        return plan with
        {
            Spectrographs = queues,
            Notes = [.. plan.Notes, $"{kept.Count} observation(s) executing or about to start at the replanning instant were kept."],
        };
    }
}
