// Aggregation over seeds: mean and sample standard deviation s = √(Σ(x − x̄)²/(n − 1)) of each figure,
// and paired per-seed comparisons (same sky and weather), e.g. the ratio of correct identifications
// of two strategies, summarised the same way [1]. The facility what-if runs the same seeds with two
// rosters and reports the per-seed difference with its spread and standard error s/√n.
//
// References
// [1] A. M. Law, Simulation Modeling and Analysis, 5th ed., McGraw-Hill 2015, §10.2 (paired-t comparison of two systems).
namespace Triage.Core.Season;

/// <summary>Mean and spread of one figure over seeds.</summary>
/// <param name="Mean">Mean over seeds.</param>
/// <param name="StandardDeviation">Sample standard deviation over seeds (0 for one seed).</param>
/// <param name="Min">Smallest.</param>
/// <param name="Max">Largest.</param>
public sealed record Spread(double Mean, double StandardDeviation, double Min, double Max)
{
    /// <summary>Spread of a set of values.</summary>
    /// <exception cref="ArgumentException">No values.</exception>
    public static Spread Of(IReadOnlyList<double> values)
    {
        ArgumentNullException.ThrowIfNull(values);
        if (values.Count == 0)
        {
            throw new ArgumentException("No values.", nameof(values));
        }

        var mean = values.Average();
        var sd = values.Count > 1 ? Math.Sqrt(values.Sum(v => (v - mean) * (v - mean)) / (values.Count - 1)) : 0;
        return new Spread(mean, sd, values.Min(), values.Max());
    }
}

/// <summary>Load of a strategy's nights, averaged over nights and seeds.</summary>
/// <param name="Pool">Mean candidates in the pool per night.</param>
/// <param name="WorthObserving">Mean candidates with an option of positive value per night.</param>
/// <param name="DemandHours">Mean hours one shortest spectrum of each of them would take, per night.</param>
/// <param name="CapacityHours">Mean hours the units could work, per night (before weather).</param>
/// <param name="Oversubscription">DemandHours / CapacityHours.</param>
/// <param name="OversubscribedNightShare">Share of nights with demand above capacity.</param>
public sealed record SeasonLoad(double Pool, double WorthObserving, double DemandHours, double CapacityHours, double Oversubscription, double OversubscribedNightShare)
{
    /// <summary>Averages the nights of several runs.</summary>
    public static SeasonLoad Of(IEnumerable<NightLoad> nights)
    {
        var all = nights.ToList();
        if (all.Count == 0)
        {
            return new SeasonLoad(0, 0, 0, 0, double.NaN, double.NaN);
        }

        var demand = all.Average(n => n.DemandHours);
        var capacity = all.Average(n => n.CapacityHours);
        return new SeasonLoad(all.Average(n => n.Pool), all.Average(n => n.WorthObserving), demand, capacity,
            capacity > 0 ? demand / capacity : double.NaN, all.Count(n => n.DemandHours > n.CapacityHours) / (double)all.Count);
    }
}

/// <summary>Final labels of one kind over seeds.</summary>
/// <param name="Correct">Correct labels per seed.</param>
/// <param name="Wrong">Wrong labels per seed.</param>
/// <param name="MeanProbability">Mean over seeds of the mean top probability of the labels (NaN: no labels).</param>
public sealed record LabelCountSummary(Spread Correct, Spread Wrong, double MeanProbability)
{
    /// <summary>Summarises one kind of label over runs; null when the runs do not report it (one-shot strategies).</summary>
    public static LabelCountSummary? Of(IReadOnlyList<LabelCount?> runs)
    {
        ArgumentNullException.ThrowIfNull(runs);
        if (runs.Count == 0 || runs.Any(r => r is null))
        {
            return null;
        }

        var counts = runs.Select(r => r!).ToList();
        return new LabelCountSummary(Spread.Of(counts.Select(c => (double)c.Correct).ToList()), Spread.Of(counts.Select(c => (double)c.Wrong).ToList()),
            counts.Select(c => c.MeanProbability).Where(double.IsFinite).DefaultIfEmpty(double.NaN).Average());
    }
}

/// <summary>One strategy's figures over seeds (means), with the spread of the main ones.</summary>
/// <remarks>
/// <see cref="IdentifiedAtConfidence"/> and <see cref="ClosedWithBestLabel"/> split a sequential strategy's final labels
/// (docs/sequential-triage.md §5 "Final labels"), <see cref="ClosedAtSeasonEnd"/> is the part of the closed ones given at
/// the end of the season; null for one-shot strategies.
/// </remarks>
public sealed record StrategySummary(
    string Name,
    double CorrectIdentifications,
    double WrongIdentifications,
    LabelCountSummary? IdentifiedAtConfidence,
    LabelCountSummary? ClosedWithBestLabel,
    LabelCountSummary? ClosedAtSeasonEnd,
    double Observations,
    double HighResolutionHours,
    double IdentificationsPerHighResolutionHour,
    double MedianDaysToIdentification,
    double RareSubtypeIdentifications,
    double HighResolutionHoursOnAmbiguous,
    double AmbiguousHighResolutionShare,
    IReadOnlyDictionary<string, double> HoursPerUnit,
    Spread CorrectIdentificationsSpread,
    Spread WrongIdentificationsSpread,
    SeasonLoad Load);

/// <summary>A paired comparison of two strategies over seeds.</summary>
/// <param name="Strategy">The strategy compared.</param>
/// <param name="Against">What it is compared with (a strategy name, or "better rule baseline": per seed the rule with more correct identifications).</param>
/// <param name="Ratio">Correct identifications of <paramref name="Strategy"/> divided by those of <paramref name="Against"/>, per seed.</param>
/// <param name="Difference">Their difference, per seed.</param>
/// <param name="SeedsWhereBetter">Seeds where <paramref name="Strategy"/> identified more.</param>
/// <param name="Count">
/// What is counted: <see cref="SeasonSummary.FinalLabels"/> (correct final labels of both strategies) or
/// <see cref="SeasonSummary.AtConfidence"/> (sequential strategies' correct identifications at τ only; a one-shot
/// strategy's labels are all final when reported and are counted whole).
/// </param>
public sealed record PairedComparison(string Strategy, string Against, Spread Ratio, Spread Difference, int SeedsWhereBetter, string Count);

/// <summary>Summary of several seeds of the same season.</summary>
public sealed record SeasonSummary(IReadOnlyList<int> Seeds, int Nights, IReadOnlyList<StrategySummary> Strategies, IReadOnlyList<PairedComparison> Comparisons)
{
    /// <summary>Name of the comparison target that picks, per seed, the rule baseline with more correct identifications.</summary>
    public const string BetterRuleBaseline = "better rule baseline";

    /// <summary>Comparison count: correct final labels.</summary>
    public const string FinalLabels = "final-labels";

    /// <summary>Comparison count: correct identifications at τ for sequential strategies, all labels for one-shot ones.</summary>
    public const string AtConfidence = "identified-at-confidence";

    /// <summary>Summarises seasons that ran the same strategies.</summary>
    /// <exception cref="ArgumentException">No seasons, or seasons with different strategies.</exception>
    public static SeasonSummary Of(IReadOnlyList<SeasonResult> seasons)
    {
        ArgumentNullException.ThrowIfNull(seasons);
        if (seasons.Count == 0)
        {
            throw new ArgumentException("No seasons.", nameof(seasons));
        }

        var names = seasons[0].Strategies.Select(s => s.Name).ToArray();
        if (seasons.Any(s => !s.Strategies.Select(x => x.Name).SequenceEqual(names)))
        {
            throw new ArgumentException("Every season must run the same strategies.", nameof(seasons));
        }

        var strategies = names.Select((name, i) =>
        {
            var runs = seasons.Select(s => s.Strategies[i]).ToList();
            double Mean(Func<StrategyResult, double> f) => runs.Select(f).Where(double.IsFinite).DefaultIfEmpty(double.NaN).Average();
            var units = runs.SelectMany(r => r.HoursPerUnit.Keys).Distinct(StringComparer.Ordinal)
                .ToDictionary(u => u, u => runs.Average(r => r.HoursPerUnit.GetValueOrDefault(u)), StringComparer.Ordinal);
            return new StrategySummary(name, Mean(r => r.CorrectIdentifications), Mean(r => r.WrongIdentifications),
                LabelCountSummary.Of(runs.Select(r => r.IdentifiedAtConfidence).ToList()), LabelCountSummary.Of(runs.Select(r => r.ClosedWithBestLabel).ToList()),
                LabelCountSummary.Of(runs.Select(r => r.ClosedAtSeasonEnd).ToList()),
                Mean(r => r.Observations),
                Mean(r => r.HighResolutionHours), Mean(r => r.IdentificationsPerHighResolutionHour), Mean(r => r.MedianDaysToIdentification),
                Mean(r => r.RareSubtypeIdentifications), Mean(r => r.HighResolutionHoursOnAmbiguous), Mean(r => r.AmbiguousHighResolutionShare),
                units, Spread.Of(runs.Select(r => (double)r.CorrectIdentifications).ToList()), Spread.Of(runs.Select(r => (double)r.WrongIdentifications).ToList()),
                SeasonLoad.Of(runs.SelectMany(r => r.LoadByNight)));
        }).ToList();

        var comparisons = new List<PairedComparison>();
        var escalation = SeasonSimulator.Name(SeasonStrategy.TriageWithEscalation);
        var rules = new[] { SeasonSimulator.Name(SeasonStrategy.BrightestFirstLargestTelescope), SeasonSimulator.Name(SeasonStrategy.PriorityHighestResolutionFirst) };
        if (names.Contains(escalation))
        {
            foreach (var count in new[] { FinalLabels, AtConfidence })
            {
                foreach (var other in names.Where(n => n != escalation))
                {
                    comparisons.Add(Compare(seasons, escalation, other, s => Correct(s, other, count), count));
                }

                if (rules.All(names.Contains))
                {
                    comparisons.Add(Compare(seasons, escalation, BetterRuleBaseline, s => rules.Max(r => Correct(s, r, count)), count));
                }
            }
        }

        return new SeasonSummary(seasons.Select(s => s.Seed).ToList(), seasons[0].Nights, strategies, comparisons);
    }

    private static double Correct(SeasonResult season, string strategy, string count)
    {
        var run = season.Strategies.First(s => s.Name == strategy);
        return count == AtConfidence && run.IdentifiedAtConfidence is { } atConfidence ? atConfidence.Correct : run.CorrectIdentifications;
    }

    private static PairedComparison Compare(IReadOnlyList<SeasonResult> seasons, string strategy, string against, Func<SeasonResult, double> reference, string count)
    {
        var mine = seasons.Select(s => Correct(s, strategy, count)).ToList();
        var theirs = seasons.Select(reference).ToList();
        var ratios = mine.Zip(theirs, (a, b) => b > 0 ? a / b : double.NaN).Where(double.IsFinite).ToList();
        var differences = mine.Zip(theirs, (a, b) => a - b).ToList();
        return new PairedComparison(strategy, against, ratios.Count > 0 ? Spread.Of(ratios) : new Spread(double.NaN, double.NaN, double.NaN, double.NaN),
            Spread.Of(differences), differences.Count(d => d > 0), count);
    }
}

/// <summary>The facility what-if: the same seeds with the base roster and a changed one.</summary>
/// <param name="Strategy">Strategy compared.</param>
/// <param name="BaseCorrect">Correct identifications with the base roster, over seeds.</param>
/// <param name="ChangedCorrect">With the changed roster.</param>
/// <param name="Difference">Changed minus base, per seed.</param>
/// <param name="StandardError">s/√n of the per-seed difference.</param>
/// <param name="HighResolutionHoursDifference">Changed minus base high-R hours, per seed.</param>
public sealed record FacilityWhatIf(string Strategy, Spread BaseCorrect, Spread ChangedCorrect, Spread Difference, double StandardError, Spread HighResolutionHoursDifference)
{
    /// <summary>Compares paired seasons (same seeds, in the same order).</summary>
    public static FacilityWhatIf Of(string strategy, IReadOnlyList<SeasonResult> baseline, IReadOnlyList<SeasonResult> changed)
    {
        ArgumentNullException.ThrowIfNull(baseline);
        ArgumentNullException.ThrowIfNull(changed);
        if (baseline.Count != changed.Count || baseline.Count == 0)
        {
            throw new ArgumentException("Both rosters need the same, non-zero number of seeds.", nameof(changed));
        }

        StrategyResult Pick(SeasonResult s) => s.Strategies.First(x => x.Name == strategy);
        var b = baseline.Select(s => (double)Pick(s).CorrectIdentifications).ToList();
        var c = changed.Select(s => (double)Pick(s).CorrectIdentifications).ToList();
        var d = Spread.Of(c.Zip(b, (x, y) => x - y).ToList());
        var h = Spread.Of(changed.Zip(baseline, (x, y) => Pick(x).HighResolutionHours - Pick(y).HighResolutionHours).ToList());
        return new FacilityWhatIf(strategy, Spread.Of(b), Spread.Of(c), d, d.StandardDeviation / Math.Sqrt(b.Count), h);
    }
}
