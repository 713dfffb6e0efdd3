namespace Triage.Core.Candidates;

/// <summary>Where a candidate stands in tonight's work.</summary>
public enum CandidateState
{
    /// <summary>Posted, not yet in a plan.</summary>
    New,
    /// <summary>In an active plan.</summary>
    Planned,
    /// <summary>A spectrum was taken; no classification reported yet.</summary>
    Observed,
    /// <summary>A spectrum gave a subtype; not planned again unless asked.</summary>
    Classified,
    /// <summary>Given up (by a scheduler or admin).</summary>
    Abandoned,
    /// <summary>No longer observable or too faint for every registered unit.</summary>
    Stale,
    /// <summary>
    /// A labelled spectrum left the subtype below the identification confidence: back in the pool
    /// with its posterior as the prior, a sharper spectrum is wanted.
    /// </summary>
    Unsettled,
}

/// <summary>What an observatory reports about one observation.</summary>
public enum ObservationOutcome
{
    /// <summary>Observed, with an achieved S/N.</summary>
    Done,
    /// <summary>Lost to weather.</summary>
    Weather,
    /// <summary>Failed for another reason (instrument, acquisition...).</summary>
    Failed,
}

/// <summary>
/// The candidate lifecycle: new → planned → observed → classified (or unsettled → planned → ...),
/// or abandoned, or stale.
/// </summary>
/// <remarks>
/// Explicit transitions (by a scheduler or admin): new → planned/abandoned/stale;
/// planned → new/abandoned/stale; observed → planned/abandoned/stale; stale → new/planned/abandoned;
/// abandoned → new; unsettled → planned/abandoned/stale; classified → planned only when forced
/// ("asked"). Observation reports move the state: done with a label that settles the subtype →
/// classified; done with a label that leaves it below the identification confidence → unsettled;
/// done without a label → observed; weather or failed → back to new if it was planned (so it can
/// be planned again), otherwise unchanged. A report on an abandoned candidate is refused.
/// </remarks>
public static class CandidateLifecycle
{
    private static readonly Dictionary<CandidateState, CandidateState[]> Allowed = new()
    {
        [CandidateState.New] = [CandidateState.Planned, CandidateState.Abandoned, CandidateState.Stale],
        [CandidateState.Planned] = [CandidateState.New, CandidateState.Abandoned, CandidateState.Stale],
        [CandidateState.Observed] = [CandidateState.Planned, CandidateState.Abandoned, CandidateState.Stale],
        [CandidateState.Stale] = [CandidateState.New, CandidateState.Planned, CandidateState.Abandoned],
        [CandidateState.Abandoned] = [CandidateState.New],
        [CandidateState.Classified] = [],
        [CandidateState.Unsettled] = [CandidateState.Planned, CandidateState.Abandoned, CandidateState.Stale],
    };

    /// <summary>States a plan draws from (and moves to planned): new, and unsettled (a sharper spectrum is wanted).</summary>
    public static IReadOnlySet<CandidateState> Waiting { get; } = new HashSet<CandidateState> { CandidateState.New, CandidateState.Unsettled };

    /// <summary>Whether a scheduler may move a candidate from <paramref name="from"/> to <paramref name="to"/>.</summary>
    /// <param name="force">Asked explicitly: lets a classified candidate be planned again.</param>
    public static bool CanTransition(CandidateState from, CandidateState to, bool force = false) =>
        (from == CandidateState.Classified && to == CandidateState.Planned && force) || Allowed[from].Contains(to);

    /// <summary>The state after an observation report, or null when the report is refused in this state.</summary>
    /// <param name="current">State before the report.</param>
    /// <param name="outcome">Reported outcome.</param>
    /// <param name="classified">The report carries a label.</param>
    /// <param name="settled">The label settles the subtype (posterior at or above the confidence); false → unsettled.</param>
    public static CandidateState? AfterReport(CandidateState current, ObservationOutcome outcome, bool classified, bool settled = true) => current switch
    {
        CandidateState.Abandoned => null,
        _ when outcome == ObservationOutcome.Done && classified => settled ? CandidateState.Classified : CandidateState.Unsettled,
        _ when outcome == ObservationOutcome.Done => CandidateState.Observed,
        CandidateState.Planned => CandidateState.New,
        _ => current,
    };

    /// <summary>Wire name of a state (lower case).</summary>
    public static string Name(CandidateState state) => state.ToString().ToLowerInvariant();

    /// <summary>Parses a wire name.</summary>
    public static bool TryParse(string? text, out CandidateState state)
    {
        foreach (var s in Enum.GetValues<CandidateState>())
        {
            if (string.Equals(Name(s), text, StringComparison.Ordinal))
            {
                state = s;
                return true;
            }
        }
        state = default;
        return false;
    }
}
