namespace Triage.Core.Planning;

/// <summary>How far the solver got.</summary>
public enum PlanStatus
{
    /// <summary>Proved optimal on the time grid.</summary>
    Optimal,

    /// <summary>A feasible plan; the gap says how far from the bound it may be.</summary>
    Feasible,

    /// <summary>The solver found nothing better than the heuristic (or was not run).</summary>
    Heuristic,

    /// <summary>Nothing could be planned (no unit or no option).</summary>
    Empty,
}

/// <summary>What a solver returns before the plan is explained.</summary>
/// <param name="Observations">The chosen observations.</param>
/// <param name="Status">Solver status.</param>
/// <param name="Objective">Σ net value of the observations.</param>
/// <param name="Bound">A proven upper bound on the objective (null when none was computed).</param>
/// <param name="MarginalValuePerHour">Per unit: objective gained by one more hour of its time (LP dual), null if unknown.</param>
/// <param name="ChoicesBeforePruning">(option, level) pairs before pruning.</param>
/// <param name="ChoicesAfterPruning">Pairs the solver saw.</param>
/// <param name="Notes">Diagnostics (clamped values, dropped entries...).</param>
public sealed record PlanOutcome(
    IReadOnlyList<PlannedObservation> Observations,
    PlanStatus Status,
    double Objective,
    double? Bound,
    IReadOnlyList<double?> MarginalValuePerHour,
    int ChoicesBeforePruning,
    int ChoicesAfterPruning,
    IReadOnlyList<string> Notes);

/// <summary>The night plan as served and written to file.</summary>
/// <param name="Advisory">Statement that the plan is advisory.</param>
/// <param name="Objective">What was maximised.</param>
/// <param name="Spectrographs">Per spectrograph, its ordered queue.</param>
/// <param name="Unassigned">Candidates left out, with the reason.</param>
/// <param name="Summary">Totals and solver figures.</param>
/// <param name="Notes">Diagnostics: clamped calibration values, safety drops, filled cells.</param>
public sealed record NightPlan(
    string Advisory,
    PlanObjective Objective,
    IReadOnlyList<SpectrographQueue> Spectrographs,
    IReadOnlyList<UnassignedCandidate> Unassigned,
    PlanSummary Summary,
    IReadOnlyList<string> Notes)
{
    /// <summary>Local date of the evening the night starts (set by the host).</summary>
    public DateOnly? Night { get; init; }

    /// <summary>When the plan was computed (set by the host; the core never reads the clock).</summary>
    public DateTimeOffset? GeneratedUtc { get; init; }

    /// <summary>The candidate pool the plan was computed from: how many were waiting, kept and left out, and why (null: no cut was made, e.g. a plan from files).</summary>
    public CandidatePoolReport? Pool { get; init; }

    /// <summary>The advisory statement every plan carries.</summary>
    public const string AdvisoryStatement =
        "This plan is advisory. It proposes what to observe and when; the observatory's own interlocks, " +
        "safety systems and operators decide what is actually observed.";
}

/// <summary>One spectrograph's queue for the night.</summary>
/// <param name="SpectrographId">Roster id.</param>
/// <param name="Name">Spectrograph name.</param>
/// <param name="SiteName">Its site.</param>
/// <param name="ResolvingPower">R.</param>
/// <param name="BudgetSeconds">Time available to the network tonight, s.</param>
/// <param name="UsedSeconds">Time the queue occupies, s.</param>
/// <param name="Cost">Cost of that time.</param>
/// <param name="MarginalValuePerHour">Objective gained by one more hour here (LP dual); null if unknown.</param>
/// <param name="Queue">Entries in start order.</param>
public sealed record SpectrographQueue(
    string SpectrographId,
    string Name,
    string SiteName,
    double ResolvingPower,
    double BudgetSeconds,
    double UsedSeconds,
    double Cost,
    double? MarginalValuePerHour,
    IReadOnlyList<QueueEntry> Queue);

/// <summary>Another broker's post of the transient of a queue entry.</summary>
/// <param name="CandidateId">Its candidate id.</param>
/// <param name="Broker">The broker (posting key) it came from.</param>
/// <param name="BrokerCandidateId">The broker's own id.</param>
public sealed record OtherPost(string CandidateId, string? Broker, string? BrokerCandidateId);

/// <summary>One planned observation.</summary>
/// <param name="CandidateId">Candidate id.</param>
/// <param name="StartUtc">Start of acquisition.</param>
/// <param name="EndUtc">End of the last readout (start + exposure + overheads).</param>
/// <param name="ExposureSeconds">Open-shutter time, s.</param>
/// <param name="Airmass">Airmass (mid-observation when the sky model was consulted, else the worst in the window).</param>
/// <param name="PredictedMagnitude">Predicted AB magnitude.</param>
/// <param name="ExpectedSnr">S/N per resolution element expected.</param>
/// <param name="ExpectedAccuracy">Probability of a correct subtype, 0…1.</param>
/// <param name="InformationBits">Expected information gain, bits.</param>
/// <param name="Value">Contribution to the objective (weight × A or weight × I).</param>
/// <param name="Reason">Why it is here, in one sentence.</param>
/// <param name="Alternatives">Value on every unit that could take it (best level there).</param>
/// <param name="RunnerUpSpectrographId">The next best unit, if any.</param>
/// <param name="LossIfMovedToCheapest">Value lost by moving it to the cheapest unit that can see it (0 when already there).</param>
public sealed record QueueEntry(
    string CandidateId,
    DateTimeOffset StartUtc,
    DateTimeOffset EndUtc,
    double ExposureSeconds,
    double Airmass,
    double PredictedMagnitude,
    double ExpectedSnr,
    double ExpectedAccuracy,
    double InformationBits,
    double Value,
    string Reason,
    IReadOnlyList<UnitAlternative> Alternatives,
    string? RunnerUpSpectrographId,
    double LossIfMovedToCheapest)
{
    /// <summary>The broker's own id of the candidate (set by the host from its records; null in file-only runs).</summary>
    public string? BrokerCandidateId { get; init; }

    /// <summary>The broker (posting key) the candidate came from (set by the host).</summary>
    public string? Broker { get; init; }

    /// <summary>
    /// Other brokers' posts of the same transient (within the same-transient radius), not planned separately: a
    /// report on this entry answers them too. Null or empty when it was posted once.
    /// </summary>
    [System.Text.Json.Serialization.JsonIgnore(Condition = System.Text.Json.Serialization.JsonIgnoreCondition.WhenWritingNull)]
    public IReadOnlyList<OtherPost>? AlsoPostedAs { get; init; }

    /// <summary>Right ascension, ICRS, degrees 0…360 (null when the plan was built without a sky model).</summary>
    public double? RaDeg { get; init; }

    /// <summary>Declination, ICRS, degrees −90…90.</summary>
    public double? DecDeg { get; init; }

    /// <summary>Airmass at the start of acquisition.</summary>
    public double? AirmassStart { get; init; }

    /// <summary>Airmass at the end of the last readout (<see cref="Airmass"/> is the one at the middle).</summary>
    public double? AirmassEnd { get; init; }

    /// <summary>Angular distance to the Moon at mid-observation, degrees.</summary>
    public double? MoonSeparationDeg { get; init; }

    /// <summary>Sub-exposures the open-shutter time is split into, ≥ 1 (each <see cref="ExposureSeconds"/> / count).</summary>
    public int ExposureCount { get; init; } = 1;

    /// <summary>What to do if this slot is missed: the best later window tonight, or null when there is none.</summary>
    public MissedSlotAdvice? IfMissed { get; init; }

    /// <summary>True when the entry is the previous version's assignment kept as it was (replanning).</summary>
    public bool KeptFromPrevious { get; init; }
}

/// <summary>The best later window tonight for an observation whose slot was missed (not reserved: other entries may use it).</summary>
/// <param name="SpectrographId">Unit of that window.</param>
/// <param name="Name">Its name.</param>
/// <param name="EarliestStartUtc">Earliest start (not before the missed slot's end).</param>
/// <param name="LatestStartUtc">Latest start that still fits the whole observation in the window.</param>
/// <param name="ExposureSeconds">Open-shutter time there, s.</param>
/// <param name="Value">Its value.</param>
public sealed record MissedSlotAdvice(string SpectrographId, string Name, DateTimeOffset EarliestStartUtc, DateTimeOffset LatestStartUtc, double ExposureSeconds, double Value);

/// <summary>What a candidate would yield on one unit (its best level there).</summary>
public sealed record UnitAlternative(
    string SpectrographId,
    string Name,
    double ResolvingPower,
    double ExpectedAccuracy,
    double Value,
    double DurationSeconds,
    double CostPerHour);

/// <summary>Why a candidate is not in the plan.</summary>
public enum UnassignedReason
{
    /// <summary>Never above the limits of any open unit in the dark window.</summary>
    NeverVisible,

    /// <summary>Visible, but too faint for every unit to reach the lowest calibrated S/N even in the longest observation allowed.</summary>
    TooFaint,

    /// <summary>Bright enough, but each of its windows is shorter than the observation it needs.</summary>
    WindowTooShort,

    /// <summary>Worth less than the time it needs (others use that time better).</summary>
    Outbid,

    /// <summary>Planned, then removed by the final safety check.</summary>
    SafetyRejected,
}

/// <summary>A candidate left out of the plan.</summary>
/// <param name="CandidateId">Candidate id.</param>
/// <param name="Reason">Category.</param>
/// <param name="Detail">One sentence with the numbers.</param>
/// <param name="BestValue">Its best value on any unit (null when it has no option).</param>
/// <param name="BestSpectrographId">Where that best value would be.</param>
/// <param name="TimeNeededSeconds">Time that best option needs, s.</param>
/// <param name="ValueOfThatTime">Marginal value of that much time on that unit (LP dual × time).</param>
public sealed record UnassignedCandidate(
    string CandidateId,
    UnassignedReason Reason,
    string Detail,
    double? BestValue,
    string? BestSpectrographId,
    double? TimeNeededSeconds,
    double? ValueOfThatTime);

/// <summary>Totals of a plan.</summary>
/// <param name="Candidates">Candidates considered.</param>
/// <param name="Assigned">Candidates in a queue.</param>
/// <param name="ExpectedCorrectIdentifications">Σ A over the plan (unweighted).</param>
/// <param name="ExpectedInformationBits">Σ I over the plan (unweighted).</param>
/// <param name="Objective">Σ value − price × cost.</param>
/// <param name="Bound">Proven upper bound on the objective (null if none).</param>
/// <param name="Gap">(bound − objective) / bound, 0…1 (null without a bound).</param>
/// <param name="Status">Solver status.</param>
/// <param name="TotalCost">Cost of the plan.</param>
/// <param name="ChoicesBeforePruning">(candidate, unit, window, level) choices before pruning.</param>
/// <param name="ChoicesAfterPruning">Choices the solver saw.</param>
public sealed record PlanSummary(
    int Candidates,
    int Assigned,
    double ExpectedCorrectIdentifications,
    double ExpectedInformationBits,
    double Objective,
    double? Bound,
    double? Gap,
    PlanStatus Status,
    double TotalCost,
    int ChoicesBeforePruning,
    int ChoicesAfterPruning);
