namespace Triage.Core.Planning;

/// <summary>What the plan maximises.</summary>
public enum PlanObjective
{
    /// <summary>Expected correct subtype identifications, Σ weight · A.</summary>
    Accuracy,

    /// <summary>Expected information gained about the subtypes, Σ weight · I (bits).</summary>
    Information,

    /// <summary>
    /// Expected correct identifications under the sequential rule (posterior ≥ τ), with the value of
    /// escalating unsettled answers to a sharper unit (see <c>SequentialValuation</c>).
    /// </summary>
    Identification,
}

/// <summary>Defaults of the plans the product makes (service, CLI, demo).</summary>
public static class PlanDefaults
{
    /// <summary>
    /// The objective of a plan when none is asked for: <see cref="PlanObjective.Identification"/>, which in the season
    /// simulator gave 7.3 % more correct identifications than <see cref="PlanObjective.Accuracy"/> (docs/sequential-triage.md §6).
    /// <see cref="NightBuildSettings.Objective"/> keeps accuracy as the builder's own default.
    /// </summary>
    public const PlanObjective Objective = PlanObjective.Identification;

    /// <summary>The objective's name in requests, plan JSON and the CLI ("identification").</summary>
    public static string ObjectiveName => Name(Objective);

    /// <summary>Every objective by its name in requests, plan JSON and the CLI.</summary>
    public static IReadOnlyDictionary<string, PlanObjective> ByName { get; } =
        Enum.GetValues<PlanObjective>().ToDictionary(Name, o => o, StringComparer.Ordinal);

    /// <summary>The lower-case name of an objective ("accuracy", "information", "identification").</summary>
    public static string Name(PlanObjective objective) => objective switch
    {
        PlanObjective.Accuracy => "accuracy",
        PlanObjective.Information => "information",
        PlanObjective.Identification => "identification",
        _ => throw new ArgumentOutOfRangeException(nameof(objective), objective, "Unknown objective."),
    };
}

/// <summary>A time interval in seconds from a problem's epoch, [From, To).</summary>
public readonly record struct SecondsWindow(double FromSeconds, double ToSeconds)
{
    /// <summary>Length in seconds (0 when empty).</summary>
    public double LengthSeconds => Math.Max(0, ToSeconds - FromSeconds);

    /// <summary>The overlap with another window (possibly empty).</summary>
    public SecondsWindow Intersect(SecondsWindow other)
        => new(Math.Max(FromSeconds, other.FromSeconds), Math.Min(ToSeconds, other.ToSeconds));
}

/// <summary>A spectrograph as the planner sees it.</summary>
/// <param name="Id">Spectrograph id (as in the roster).</param>
/// <param name="Name">Spectrograph name.</param>
/// <param name="SiteName">Name of its site.</param>
/// <param name="ResolvingPower">R.</param>
/// <param name="Available">When it may work tonight: the site's dark window (seconds from epoch).</param>
/// <param name="BudgetSeconds">Time the network may use tonight, s (≥ 0).</param>
/// <param name="CostPerHour">Cost of one hour, network accounting unit (≥ 0).</param>
public sealed record PlanningUnit(
    string Id,
    string Name,
    string SiteName,
    double ResolvingPower,
    SecondsWindow Available,
    double BudgetSeconds,
    double CostPerHour);

/// <summary>Why a candidate has no option at all (set by whoever built the problem).</summary>
public enum CandidateStanding
{
    /// <summary>Has options; the solver decides.</summary>
    Plannable,

    /// <summary>Never above the limits of any available unit during its dark window.</summary>
    NeverVisible,

    /// <summary>Visible, but no unit reaches the lowest calibrated S/N even in the longest observation allowed.</summary>
    TooFaint,

    /// <summary>Bright enough, but every window it has is shorter than the observation the lowest S/N needs.</summary>
    WindowTooShort,
}

/// <summary>A candidate as the planner sees it.</summary>
/// <param name="Id">Candidate id.</param>
/// <param name="ScienceWeight">Multiplier of its value, ≥ 0 (1 = ordinary).</param>
/// <param name="Standing">Why it has no options, if so.</param>
public sealed record PlanningCandidate(string Id, double ScienceWeight, CandidateStanding Standing = CandidateStanding.Plannable);

/// <summary>One exposure level of an option: a target S/N and what it costs and yields.</summary>
/// <param name="Snr">S/N per resolution element reached (at worst over the option's window).</param>
/// <param name="ExposureSeconds">Open-shutter time, s (&gt; 0).</param>
/// <param name="DurationSeconds">Exposure plus overheads: the time the unit is busy, s (≥ exposure).</param>
/// <param name="ExpectedAccuracy">A at this S/N, 0…1 (unweighted).</param>
/// <param name="InformationBits">I at this S/N, bits (unweighted).</param>
/// <param name="Value">The objective's value of the spectrum: weight × A or weight × I.</param>
/// <param name="ExposureCount">Sub-exposures the open-shutter time is split into (each ≤ the unit's longest exposure), ≥ 1.</param>
public sealed record ExposureLevel(
    double Snr,
    double ExposureSeconds,
    double DurationSeconds,
    double ExpectedAccuracy,
    double InformationBits,
    double Value,
    int ExposureCount = 1)
{
    /// <summary>Plain-words account of the value when it has parts worth naming (escalation), else null.</summary>
    public string? Explanation { get; init; }
}

/// <summary>
/// A way to observe one candidate on one unit: any start such that the whole observation lies
/// inside <paramref name="Window"/>, at one of the <paramref name="Levels"/>.
/// </summary>
/// <param name="Candidate">Index into <see cref="PlanningProblem.Candidates"/>.</param>
/// <param name="Unit">Index into <see cref="PlanningProblem.Units"/>.</param>
/// <param name="Window">Visibility ∩ dark window ∩ unit availability, seconds from epoch.</param>
/// <param name="Levels">Exposure levels, in any order.</param>
/// <param name="Airmass">Airmass the durations were computed for (the worst in the window).</param>
/// <param name="PredictedMagnitude">Predicted AB magnitude used for the durations.</param>
/// <param name="ValueClamped">True when a value used the edge of the calibration grid.</param>
public sealed record PlanOption(
    int Candidate,
    int Unit,
    SecondsWindow Window,
    IReadOnlyList<ExposureLevel> Levels,
    double Airmass,
    double PredictedMagnitude,
    bool ValueClamped = false);

/// <summary>
/// The night-planning problem in solver terms: units, candidates and options, all times in
/// seconds from <paramref name="EpochUtc"/>.
/// </summary>
/// <param name="EpochUtc">Time zero of every window.</param>
/// <param name="Units">Spectrographs available tonight.</param>
/// <param name="Candidates">Candidates (also those without options, for the report).</param>
/// <param name="Options">Every (candidate, unit, window) option.</param>
/// <param name="Objective">What the values measure.</param>
/// <param name="PricePerCostUnit">Value given up per unit of cost (≥ 0; 0 = cost is free within the cap).</param>
/// <param name="NetworkCostCap">Most the whole network may spend tonight (null: no cap).</param>
public sealed record PlanningProblem(
    DateTimeOffset EpochUtc,
    IReadOnlyList<PlanningUnit> Units,
    IReadOnlyList<PlanningCandidate> Candidates,
    IReadOnlyList<PlanOption> Options,
    PlanObjective Objective,
    double PricePerCostUnit = 0,
    double? NetworkCostCap = null)
{
    /// <summary>Assignments of the previous plan version (replanning): the solver keeps each unless a change gains more than <see cref="StabilityShare"/> of its value.</summary>
    public IReadOnlyList<PlanAnchor> Anchors { get; init; } = [];

    /// <summary>An anchored assignment is worth (1 + this) × its net value to the solver, 0…1. Default 0.1.</summary>
    public double StabilityShare { get; init; } = 0.1;

    /// <summary>
    /// Replanning: the most changes the plan may make to the previous version, counted as anchored assignments that
    /// still fit but are not kept (moved, retimed or dropped) plus candidates placed that had no previous assignment
    /// (added). Anchors that no longer fit (a closure, a window gone) are forced and not counted. Null: no limit
    /// (a first plan). ≥ 0.
    /// </summary>
    public int? ChurnBudget { get; init; }

    /// <summary>Posterior probability τ at which a candidate counts as identified (objective identification; for the explanations), 0…1. Default 0.9.</summary>
    public double IdentificationConfidence { get; init; } = Identification.PosteriorUpdate.DefaultConfidence;

    /// <summary>Cost of keeping <paramref name="unit"/> busy for <paramref name="seconds"/>.</summary>
    public double Cost(int unit, double seconds) => Units[unit].CostPerHour * seconds / 3600.0;

    /// <summary>Value minus price × cost of a level of an option.</summary>
    public double NetValue(PlanOption option, ExposureLevel level)
        => level.Value - PricePerCostUnit * Cost(option.Unit, level.DurationSeconds);

    /// <summary>Checks indices, windows and numbers; throws on the first defect.</summary>
    /// <exception cref="ArgumentException">Names the offending member.</exception>
    public void Validate()
    {
        if (!(PricePerCostUnit >= 0) || double.IsInfinity(PricePerCostUnit))
        {
            throw new ArgumentException("PricePerCostUnit must be finite and ≥ 0.", nameof(PricePerCostUnit));
        }

        if (NetworkCostCap is { } cap && !(cap >= 0))
        {
            throw new ArgumentException("NetworkCostCap must be ≥ 0.", nameof(NetworkCostCap));
        }

        for (var u = 0; u < Units.Count; u++)
        {
            var unit = Units[u];
            if (!(unit.BudgetSeconds >= 0) || !(unit.CostPerHour >= 0) || !(unit.ResolvingPower > 0))
            {
                throw new ArgumentException($"Units[{u}] ('{unit.Id}'): budget and cost must be ≥ 0 and R > 0.", nameof(Units));
            }
        }

        for (var c = 0; c < Candidates.Count; c++)
        {
            if (!(Candidates[c].ScienceWeight >= 0) || double.IsInfinity(Candidates[c].ScienceWeight))
            {
                throw new ArgumentException($"Candidates[{c}] ('{Candidates[c].Id}'): science weight must be finite and ≥ 0.", nameof(Candidates));
            }
        }

        for (var o = 0; o < Options.Count; o++)
        {
            var option = Options[o];
            if (option.Candidate < 0 || option.Candidate >= Candidates.Count || option.Unit < 0 || option.Unit >= Units.Count)
            {
                throw new ArgumentException($"Options[{o}]: candidate or unit index out of range.", nameof(Options));
            }

            if (!(option.Window.ToSeconds >= option.Window.FromSeconds))
            {
                throw new ArgumentException($"Options[{o}]: window ends before it starts.", nameof(Options));
            }

            foreach (var level in option.Levels)
            {
                if (!(level.ExposureSeconds > 0) || !(level.DurationSeconds >= level.ExposureSeconds) || !double.IsFinite(level.Value))
                {
                    throw new ArgumentException($"Options[{o}]: a level needs exposure > 0, duration ≥ exposure and a finite value.", nameof(Options));
                }
            }
        }
    }
}

/// <summary>An assignment of the previous plan version: candidate, unit, start (s from the epoch) and open-shutter time, s.</summary>
public sealed record PlanAnchor(int Candidate, int Unit, double StartSeconds, double ExposureSeconds);
