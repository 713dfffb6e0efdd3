using Triage.Core.Identification;

namespace Triage.Core.Season;

/// <summary>High-R hours spent on objects whose top subtype probability lay in [From, To) before the spectrum.</summary>
/// <param name="From">Lower edge of the top posterior probability.</param>
/// <param name="To">Upper edge (1 includes 1).</param>
/// <param name="Hours">Hours (exposure plus overhead).</param>
public sealed record SettledHours(double From, double To, double Hours);

/// <summary>How oversubscribed one night was for a strategy (before weather).</summary>
/// <param name="Pool">Candidates in the pool (discovered, not identified, phase ≤ 60 d, true m ≤ m_lim + 1).</param>
/// <param name="WorthObserving">Pool candidates with at least one option of positive value (visible, bright enough for some unit).</param>
/// <param name="DemandHours">Σ over those candidates of their shortest option (lowest S/N level, exposure plus overhead), h: a lower bound on the time one spectrum of each would take.</param>
/// <param name="CapacityHours">Σ over units of min(budget, dark window), h.</param>
public sealed record NightLoad(int Pool, int WorthObserving, double DemandHours, double CapacityHours)
{
    /// <summary>DemandHours / CapacityHours (&gt; 1: oversubscribed).</summary>
    public double Oversubscription => CapacityHours > 0 ? DemandHours / CapacityHours : double.PositiveInfinity;
}

/// <summary>Final labels of one kind.</summary>
/// <param name="Correct">Labels equal to the true subtype.</param>
/// <param name="Wrong">Labels that differ from it.</param>
/// <param name="MeanProbability">Mean posterior probability of the labelled subtype when the label was given (NaN: none).</param>
public sealed record LabelCount(int Correct, int Wrong, double MeanProbability);

/// <summary>One strategy's season.</summary>
/// <param name="Name">Strategy name.</param>
/// <param name="CorrectIdentifications">Final labels equal to the true subtype (sequential strategies: identified at τ plus closed with the best label).</param>
/// <param name="WrongIdentifications">Final labels that differ from the true subtype.</param>
/// <param name="IdentifiedAtConfidence">Sequential strategies: labels given when the posterior reached τ (null for one-shot strategies).</param>
/// <param name="ClosedWithBestLabel">Sequential strategies: unsettled candidates given their most probable subtype when they left the pool for good or at the end of the season (null for one-shot strategies).</param>
/// <param name="ClosedAtSeasonEnd">The part of <paramref name="ClosedWithBestLabel"/> closed at the end of the season, still in the pool (null for one-shot strategies).</param>
/// <param name="Observations">Spectra taken (weather losses excluded).</param>
/// <param name="WeatherLosses">Planned spectra lost to weather.</param>
/// <param name="HoursPerUnit">Hours (exposure plus overhead) per spectrograph name.</param>
/// <param name="HighResolutionHours">Hours on units with R at or above the high-R threshold.</param>
/// <param name="IdentificationsPerHighResolutionHour">Correct identifications per high-R hour.</param>
/// <param name="MedianDaysToIdentification">Median days from discovery (or the season's first evening, if later) to a correct final label: the spectrum that gave it, or, for a closed label, the moment it was closed (NaN: none).</param>
/// <param name="RareSubtypeIdentifications">Correct identifications of subtypes with base rate below the rare threshold.</param>
/// <param name="HighResolutionHoursOnAmbiguous">High-R hours on objects a low-R spectrum had left unsettled.</param>
/// <param name="AmbiguousHighResolutionShare">That as a share of all high-R hours.</param>
/// <param name="HighResolutionHoursBySettledness">High-R hours by the object's top probability before the spectrum.</param>
/// <param name="CumulativeCorrectByNight">Correct identifications up to and including each night.</param>
/// <param name="HoursPerUnitByNight">Hours per spectrograph name and night.</param>
/// <param name="UnitAccuracy">Modelled against measured accuracy per unit (learning strategies).</param>
/// <param name="FlaggedUnits">Unit name → first night (1-based) it was flagged as worse than modelled.</param>
/// <param name="LoadByNight">Demand against capacity, per night.</param>
/// <param name="PlannedValueByNight">Per spectrograph name and night: the planner's value of the observations it planned there (before weather), in the objective's units.</param>
/// <param name="PlannedHoursByNight">Per spectrograph name and night: the hours it planned there (before weather).</param>
/// <param name="PlannedHoursAtConfidenceByNight">Per spectrograph name and night: the part of <paramref name="PlannedHoursByNight"/> on candidates whose top subtype probability was already at least τ before the spectrum (for a sequential strategy any labelled report identifies them, however uninformative).</param>
/// <param name="CapacityShareByNight">Per night: the capacity share q the night's plan was given (the share of unsettled results the high-R units can take; only the escalation value reads it).</param>
public sealed record StrategyResult(
    string Name,
    int CorrectIdentifications,
    int WrongIdentifications,
    LabelCount? IdentifiedAtConfidence,
    LabelCount? ClosedWithBestLabel,
    LabelCount? ClosedAtSeasonEnd,
    int Observations,
    int WeatherLosses,
    IReadOnlyDictionary<string, double> HoursPerUnit,
    double HighResolutionHours,
    double IdentificationsPerHighResolutionHour,
    double MedianDaysToIdentification,
    int RareSubtypeIdentifications,
    double HighResolutionHoursOnAmbiguous,
    double AmbiguousHighResolutionShare,
    IReadOnlyList<SettledHours> HighResolutionHoursBySettledness,
    IReadOnlyList<int> CumulativeCorrectByNight,
    IReadOnlyDictionary<string, double[]> HoursPerUnitByNight,
    IReadOnlyList<UnitAccuracy> UnitAccuracy,
    IReadOnlyDictionary<string, int> FlaggedUnits,
    IReadOnlyList<NightLoad> LoadByNight,
    IReadOnlyDictionary<string, double[]> PlannedValueByNight,
    IReadOnlyDictionary<string, double[]> PlannedHoursByNight,
    IReadOnlyDictionary<string, double[]> PlannedHoursAtConfidenceByNight,
    IReadOnlyList<double> CapacityShareByNight);

/// <summary>A simulated season.</summary>
/// <param name="Seed">Seed.</param>
/// <param name="Nights">Nights.</param>
/// <param name="FirstNight">First night.</param>
/// <param name="Transients">Transients drawn (including never discovered).</param>
/// <param name="Discovered">Discovered before the last night.</param>
/// <param name="Strategies">One result per strategy, in the order run.</param>
public sealed record SeasonResult(int Seed, int Nights, DateOnly FirstNight, int Transients, int Discovered, IReadOnlyList<StrategyResult> Strategies);
