// The season simulator: the same sky and weather, night after night, for each strategy.
//   pool(d)   = discovered before the night, not identified, phase < 60 rest days, true m < m_lim + 1;
//               at most MaxPoolCandidates of them, chosen like the service's bounded pool (value per hour)
//   plan(d)   = NightProblemBuilder + the planner's heuristics (greedy by value density, local search),
//               or a rule baseline; observations failing the final safety check are dropped
//   weather   = each site clear with probability f_clear per night (shared by every strategy)
//   S/N       = planned S/N · 10^{−0.4 (m_true − m_planned)} · e^{σ ε}   (source-dominated scaling)
//   answer j  ~ C_truth(·|s) at (R, S/N, true phase), C_truth = (1 − d_u) C + d_u/K for a degraded unit u
//   update    = one-shot strategies take j as the final label; sequential ones apply Bayes' rule
//               through the planner's (or the learned) channel and identify at p ≥ τ
//   closing   = a sequential strategy's candidate with a spectrum but p < τ gets argmax_k p(k) as final label
//               when it leaves the pool for good (phase > 60 d or m > m_lim + 1) and at the end of the season
//   q(d+1)    = min(1, H_high / (t_high (U + f N_new)))  share of unsettled results the high-R units can take
// Random draws are keyed by (seed, purpose, object, night, unit), so strategies see the same outcome
// for the same observation (common random numbers [1]).
//
// References
// [1] A. M. Law, Simulation Modeling and Analysis, 5th ed., McGraw-Hill 2015, §11.2 (common random numbers).
using Triage.Core.Identification;
using Triage.Core.Planning;
using Triage.Core.Roster;

namespace Triage.Core.Season;

/// <summary>A strategy of the season comparison.</summary>
public enum SeasonStrategy
{
    /// <summary>Sequential identification (posterior ≥ τ) with the preposterior value of escalation.</summary>
    TriageWithEscalation,

    /// <summary>Today's one-shot triage: expected accuracy from the broker prior, a reported label is final.</summary>
    TriageWithoutEscalation,

    /// <summary>Ablation: sequential identification, unsettled candidates replanned, but no look-ahead value.</summary>
    TriageSequentialWithoutLookahead,

    /// <summary>Rule: brightest first onto the largest telescope; a reported label is final.</summary>
    BrightestFirstLargestTelescope,

    /// <summary>Rule: science priority filling the highest-R unit first; a reported label is final.</summary>
    PriorityHighestResolutionFirst,

    /// <summary>
    /// The service with its default objective: sequential identification (posterior ≥ τ, unsettled candidates
    /// replanned, outcome learning) but plans that maximise expected accuracy. Not run unless asked for.
    /// </summary>
    TriageSequentialAccuracyObjective,
}

/// <summary>Settings of a simulated season.</summary>
public sealed record SeasonSettings
{
    /// <summary>Nights simulated. Default 10.</summary>
    public int Nights { get; init; } = 10;

    /// <summary>Local date of the first night. Default 2026-12-02 (the demo night).</summary>
    public DateOnly FirstNight { get; init; } = new(2026, 12, 2);

    /// <summary>Seed of sky, weather and outcomes.</summary>
    public int Seed { get; init; } = 1;

    /// <summary>The synthetic sky.</summary>
    public SkySettings Sky { get; init; } = new();

    /// <summary>Probability that a site is clear on a night. Default 0.7.</summary>
    public double ClearFraction { get; init; } = 0.7;

    /// <summary>σ of the achieved S/N's log scatter around the planned one. Default 0.15.</summary>
    public double SnrScatter { get; init; } = 0.15;

    /// <summary>τ. Default 0.9.</summary>
    public double Confidence { get; init; } = PosteriorUpdate.DefaultConfidence;

    /// <summary>Follow-up S/N assumed by the escalation value. Default 20.</summary>
    public double FollowUpSnr { get; init; } = 20;

    /// <summary>Units with R at least this are "high-R". Default 1000.</summary>
    public double HighResolutionThreshold { get; init; } = 1000;

    /// <summary>Learn each unit's accuracy from outcomes and plan with it (sequential strategies). Default true.</summary>
    public bool LearnUnitAccuracy { get; init; } = true;

    /// <summary>Outcome-learning settings.</summary>
    public UnitOutcomeSettings Outcomes { get; init; } = new();

    /// <summary>d_u per unit name: the truth channel of that unit is (1 − d) C + d/K. Default none.</summary>
    public IReadOnlyDictionary<string, double> TruthDegradation { get; init; } = new Dictionary<string, double>();

    /// <summary>Local-search rounds per night. Default 3000.</summary>
    public int LocalSearchRounds { get; init; } = 3000;

    /// <summary>The five strategies of the issue's comparison (every strategy but the accuracy-objective variant).</summary>
    public static IReadOnlyList<SeasonStrategy> Compared { get; } =
    [
        SeasonStrategy.TriageWithEscalation, SeasonStrategy.TriageWithoutEscalation, SeasonStrategy.TriageSequentialWithoutLookahead,
        SeasonStrategy.BrightestFirstLargestTelescope, SeasonStrategy.PriorityHighestResolutionFirst,
    ];

    /// <summary>Strategies run. Default: <see cref="Compared"/>.</summary>
    public IReadOnlyList<SeasonStrategy> Strategies { get; init; } = Compared;

    /// <summary>
    /// Most candidates handed to the planner per night, chosen as the service's plan job chooses them
    /// (<see cref="CandidatePool"/>: upper bound of value per hour). Default 600, nearly three times the
    /// ≈ 220 spectra of about ten minutes the demo roster's 37 unit-hours can take in one night.
    /// </summary>
    public int MaxPoolCandidates { get; init; } = 600;

    /// <summary>
    /// Most the network may spend a night, in the roster's cost units (Σ cost per hour × hours planned on every unit):
    /// one programme budget shared by all units, the planner's network cost cap. Null: no cap (each unit has only its
    /// own nightly budget). Default null.
    /// </summary>
    public double? NetworkCostCap { get; init; }

    /// <summary>Subtypes whose base rate is below this count as rare. Default 0.02.</summary>
    public double RareBaseRate { get; init; } = 0.02;
}

/// <summary>Progress of a season run.</summary>
/// <param name="Done">Strategy-nights finished.</param>
/// <param name="Total">Strategy-nights in all.</param>
/// <param name="What">What was just finished.</param>
public readonly record struct SeasonProgress(int Done, int Total, string What);

/// <summary>Runs a season for every strategy on the same sky and weather.</summary>
public static class SeasonSimulator
{
    /// <summary>Wire name of a strategy.</summary>
    public static string Name(SeasonStrategy strategy) => strategy switch
    {
        SeasonStrategy.TriageWithEscalation => "triage-with-escalation",
        SeasonStrategy.TriageWithoutEscalation => "triage-without-escalation",
        SeasonStrategy.TriageSequentialWithoutLookahead => "triage-sequential-without-lookahead",
        SeasonStrategy.BrightestFirstLargestTelescope => "rule-brightest-first-largest-telescope",
        SeasonStrategy.TriageSequentialAccuracyObjective => "triage-sequential-accuracy-objective",
        _ => "rule-priority-highest-resolution-first",
    };

    /// <summary>Runs the season.</summary>
    /// <param name="sites">Sites.</param>
    /// <param name="spectrographs">Spectrographs.</param>
    /// <param name="planner">The planner's accuracy model.</param>
    /// <param name="truth">The truth's accuracy model (may be the same object, another calibration, or degraded per unit by the settings).</param>
    /// <param name="settings">Settings.</param>
    /// <param name="progress">Optional progress.</param>
    /// <param name="cancellationToken">Stops after the current night.</param>
    public static SeasonResult Run(
        IReadOnlyList<Site> sites,
        IReadOnlyList<Spectrograph> spectrographs,
        AccuracySurface planner,
        AccuracySurface truth,
        SeasonSettings settings,
        IProgress<SeasonProgress>? progress = null,
        CancellationToken cancellationToken = default)
    {
        Validate(sites, spectrographs, planner, truth, settings);
        var sky = SeasonSky.Draw(planner.Subtypes, settings.FirstNight, settings.Nights, settings.Seed, settings.Sky);
        return RunOnSky(sites, spectrographs, planner, truth, settings, sky, progress, cancellationToken);
    }

    /// <summary>
    /// Runs the season on a given sky (for example a small crafted one) instead of one drawn from the settings;
    /// outcomes and weather are still drawn from <see cref="SeasonSettings.Seed"/>.
    /// </summary>
    /// <param name="sites">Sites.</param>
    /// <param name="spectrographs">Spectrographs.</param>
    /// <param name="planner">The planner's accuracy model.</param>
    /// <param name="truth">The truth's accuracy model.</param>
    /// <param name="settings">Settings (the sky settings are used for the survey limit and the forecast errors only).</param>
    /// <param name="sky">The transients, with <see cref="Transient.Index"/> equal to their position in the list and subtypes indexing the planner's.</param>
    /// <param name="progress">Optional progress.</param>
    /// <param name="cancellationToken">Stops after the current night.</param>
    public static SeasonResult RunOnSky(
        IReadOnlyList<Site> sites,
        IReadOnlyList<Spectrograph> spectrographs,
        AccuracySurface planner,
        AccuracySurface truth,
        SeasonSettings settings,
        IReadOnlyList<Transient> sky,
        IProgress<SeasonProgress>? progress = null,
        CancellationToken cancellationToken = default)
    {
        Validate(sites, spectrographs, planner, truth, settings);
        ArgumentNullException.ThrowIfNull(sky);
        if (sky.Select((t, i) => t.Index != i || t.Subtype < 0 || t.Subtype >= planner.Subtypes.Count || t.BrokerProbabilities.Length != planner.Subtypes.Count).Any(bad => bad))
        {
            throw new ArgumentException("Each transient's index must be its position, its subtype and broker probabilities those of the planner's model.", nameof(sky));
        }

        var done = 0;
        var total = settings.Nights * settings.Strategies.Count;
        var results = new StrategyResult[settings.Strategies.Count];
        Parallel.For(0, settings.Strategies.Count, new ParallelOptions { MaxDegreeOfParallelism = 2, CancellationToken = cancellationToken }, i =>
        {
            var run = new StrategyRun(settings.Strategies[i], sites, spectrographs, planner, truth, settings, sky);
            for (var night = 0; night < settings.Nights && !cancellationToken.IsCancellationRequested; night++)
            {
                run.Night(night);
                var d = Interlocked.Increment(ref done);
                progress?.Report(new SeasonProgress(d, total, $"{Name(settings.Strategies[i])} night {night + 1}"));
            }

            results[i] = run.Result();
        });

        var discovered = sky.Count(t => t.DiscoveredUtc < Evening(settings.FirstNight.AddDays(settings.Nights - 1)));
        return new SeasonResult(settings.Seed, settings.Nights, settings.FirstNight, sky.Count, discovered, results);
    }

    private static void Validate(IReadOnlyList<Site> sites, IReadOnlyList<Spectrograph> spectrographs, AccuracySurface planner, AccuracySurface truth, SeasonSettings settings)
    {
        ArgumentNullException.ThrowIfNull(sites);
        ArgumentNullException.ThrowIfNull(spectrographs);
        ArgumentNullException.ThrowIfNull(planner);
        ArgumentNullException.ThrowIfNull(truth);
        ArgumentNullException.ThrowIfNull(settings);
        if (settings.Nights < 1 || !(settings.ClearFraction is >= 0 and <= 1))
        {
            throw new ArgumentException("Nights must be ≥ 1 and ClearFraction in [0, 1].", nameof(settings));
        }

        if (settings.NetworkCostCap is { } cap && !(cap >= 0 && double.IsFinite(cap)))
        {
            throw new ArgumentException("NetworkCostCap must be finite and ≥ 0.", nameof(settings));
        }

        if (!truth.Subtypes.SequenceEqual(planner.Subtypes))
        {
            throw new ArgumentException("The truth and planner models must list the same subtypes in the same order.", nameof(truth));
        }
    }

    internal static DateTimeOffset Evening(DateOnly night) => new(night.ToDateTime(new TimeOnly(12, 0)), TimeSpan.Zero);
}

/// <summary>One strategy's season.</summary>
internal sealed class StrategyRun
{
    private enum Status { Waiting, Unsettled, Identified }

    private sealed record Report(string UnitId, double ResolvingPower, double Snr, PhaseBelief Phase, int Answer);

    private readonly SeasonStrategy _strategy;
    private readonly IReadOnlyList<Site> _sites;
    private readonly IReadOnlyList<Spectrograph> _spectrographs;
    private readonly AccuracySurface _planner;
    private readonly AccuracySurface _truth;
    private readonly SeasonSettings _settings;
    private readonly IReadOnlyList<Transient> _sky;
    private readonly int _k;
    private readonly double[][] _belief;
    private readonly Status[] _status;
    private readonly int[] _label;
    private readonly bool[] _closed;
    private readonly LabelTally _atConfidence = new();
    private readonly LabelTally _closing = new();
    private readonly LabelTally _closingAtEnd = new();
    private bool _booksClosed;
    private readonly double[] _identifiedDays;
    private readonly bool[] _leftAmbiguousByLowR;
    private readonly List<Report>[] _reports;
    private readonly UnitOutcomes? _outcomes;
    private readonly bool _sequential;
    private readonly Dictionary<string, double[]> _hoursByNight = new(StringComparer.Ordinal);
    private readonly Dictionary<string, double[]> _plannedValue = new(StringComparer.Ordinal);
    private readonly Dictionary<string, double[]> _plannedHours = new(StringComparer.Ordinal);
    private readonly Dictionary<string, double[]> _plannedHoursAtConfidence = new(StringComparer.Ordinal);
    private readonly Dictionary<string, int> _flaggedNight = new(StringComparer.Ordinal);
    private readonly double[] _capacityShareByNight;
    private readonly int[] _correctByNight;
    private readonly int[] _wrongByNight;
    private readonly double[] _highBySettled = new double[4];
    private readonly List<NightLoad> _load = [];
    private int _observations;
    private int _weatherLosses;
    private double _highHours;
    private double _highHoursOnAmbiguous;
    private double _meanHighHours = 1;
    private int _highCount;
    private int _lowLabelled;
    private int _lowUnsettled;
    private double _capacityShare = 0.5;
    private readonly DateTimeOffset _seasonStart;

    internal StrategyRun(SeasonStrategy strategy, IReadOnlyList<Site> sites, IReadOnlyList<Spectrograph> spectrographs,
        AccuracySurface planner, AccuracySurface truth, SeasonSettings settings, IReadOnlyList<Transient> sky)
    {
        _strategy = strategy;
        _sites = sites;
        _spectrographs = spectrographs;
        _planner = planner;
        _truth = truth;
        _settings = settings;
        _sky = sky;
        _k = planner.Subtypes.Count;
        _belief = sky.Select(t => (double[])t.BrokerProbabilities.Clone()).ToArray();
        _status = new Status[sky.Count];
        _label = Enumerable.Repeat(-1, sky.Count).ToArray();
        _closed = new bool[sky.Count];
        _identifiedDays = new double[sky.Count];
        _leftAmbiguousByLowR = new bool[sky.Count];
        _reports = sky.Select(_ => new List<Report>()).ToArray();
        _sequential = strategy is SeasonStrategy.TriageWithEscalation or SeasonStrategy.TriageSequentialWithoutLookahead
            or SeasonStrategy.TriageSequentialAccuracyObjective;
        _outcomes = _sequential && settings.LearnUnitAccuracy ? new UnitOutcomes(planner, settings.Outcomes) : null;
        _seasonStart = SeasonSimulator.Evening(settings.FirstNight);
        _correctByNight = new int[settings.Nights];
        _capacityShareByNight = new double[settings.Nights];
        _wrongByNight = new int[settings.Nights];
        foreach (var sg in spectrographs)
        {
            _hoursByNight[sg.Name] = new double[settings.Nights];
            _plannedValue[sg.Name] = new double[settings.Nights];
            _plannedHours[sg.Name] = new double[settings.Nights];
            _plannedHoursAtConfidence[sg.Name] = new double[settings.Nights];
        }
    }

    internal void Night(int index)
    {
        var date = _settings.FirstNight.AddDays(index);
        var now = SeasonSimulator.Evening(date);
        _capacityShareByNight[index] = _capacityShare;
        var pool = new List<SimulatedTarget>();
        var byId = new Dictionary<string, SimulatedTarget>(StringComparer.Ordinal);
        foreach (var t in _sky)
        {
            if (_status[t.Index] == Status.Identified || _closed[t.Index] || t.DiscoveredUtc >= now)
            {
                continue;
            }

            if (LeftForGood(t, now))
            {
                // Gone for good: an unsettled candidate is closed with its best label (docs §5 "Final labels").
                if (_status[t.Index] == Status.Unsettled)
                {
                    Close(t, index, now);
                }

                continue;
            }

            var prior = new Dictionary<string, double>(StringComparer.Ordinal);
            for (var k = 0; k < _k; k++)
            {
                prior[_planner.Subtypes[k]] = _belief[t.Index][k];
            }

            var target = new SimulatedTarget(t, prior, _settings.Sky.ForecastMagSigma, _settings.Sky.ForecastPeakSigmaDays);
            pool.Add(target);
            byId[t.Id] = target;
        }

        var objective = _sequential && _strategy != SeasonStrategy.TriageSequentialAccuracyObjective ? PlanObjective.Identification : PlanObjective.Accuracy;
        var waiting = pool.Count;
        var eligible = waiting;
        if (pool.Count > _settings.MaxPoolCandidates)
        {
            // The service's bounded pool: forecast magnitude at the night's middle, ranked by value per hour.
            var middle = now.AddHours(12);
            var selection = CandidatePool.Select(_sites, _spectrographs, _planner, date, now,
                pool.Select(t => new PoolCandidate(t.Id, t.Position.RaDeg, t.Position.DecDeg, t.ScienceWeight, t.MagnitudeAt(middle).MagnitudeAB)).ToList(),
                new HashSet<string>(StringComparer.Ordinal), objective, new NightBuildSettings { Objective = objective },
                new CandidatePoolSettings { MaxCandidates = _settings.MaxPoolCandidates });
            var kept = selection.Kept.ToHashSet(StringComparer.Ordinal);
            pool = pool.Where(t => kept.Contains(t.Id)).ToList();
            eligible = selection.Report.Kept + selection.Report.BelowCut;
        }

        var build = new NightBuildSettings
        {
            Objective = objective,
            NetworkCostCap = _settings.NetworkCostCap,
            Sequential = new SequentialPlanSettings
            {
                Confidence = _settings.Confidence,
                Escalate = _strategy == SeasonStrategy.TriageWithEscalation,
                FollowUpSnr = _settings.FollowUpSnr,
                CapacityShare = _capacityShare,
                Channels = _outcomes,
            },
        };
        var night = NightProblemBuilder.Build(_sites, _spectrographs, pool, _planner, date, now, build);
        var problem = night.Problem;
        _load.Add(Load(problem, waiting, eligible));
        var planned = Plan(problem);
        var unsafeCandidates = night.SafetyViolations(planned);
        var clear = _sites.ToDictionary(s => s.Name, s => Draw("weather", s.Name, index).NextDouble() < _settings.ClearFraction);
        var sgById = _spectrographs.ToDictionary(s => s.Id.ToString(), s => s);
        foreach (var obs in planned.OrderBy(o => o.StartSeconds))
        {
            var option = problem.Options[obs.Option];
            if (unsafeCandidates.ContainsKey(option.Candidate))
            {
                continue;
            }

            var unit = problem.Units[option.Unit];
            _plannedValue[unit.Name][index] += option.Levels[obs.Level].Value;
            _plannedHours[unit.Name][index] += option.Levels[obs.Level].DurationSeconds / 3600;
            if (SequentialValuation.Max(_belief[byId[problem.Candidates[option.Candidate].Id].Transient.Index]) >= _settings.Confidence - 1e-12)
            {
                _plannedHoursAtConfidence[unit.Name][index] += option.Levels[obs.Level].DurationSeconds / 3600;
            }
            if (!clear[unit.SiteName])
            {
                _weatherLosses++;
                continue;
            }

            var level = option.Levels[obs.Level];
            var target = byId[problem.Candidates[option.Candidate].Id];
            var start = problem.EpochUtc.AddSeconds(obs.StartSeconds);
            var mid = start.AddSeconds(level.DurationSeconds / 2);
            Execute(index, target.Transient, target, sgById[unit.Id], unit, level, mid);
        }

        if (_outcomes is not null)
        {
            foreach (var a in _outcomes.Accuracy().Where(a => a.Flagged))
            {
                var name = _spectrographs.First(s => s.Id.ToString() == a.UnitId).Name;
                _flaggedNight.TryAdd(name, index + 1);
            }
        }

        UpdateCapacityShare(pool.Count, SeasonSimulator.Evening(date.AddDays(1)));
    }

    /// <summary>
    /// Out of the pool for good at <paramref name="evening"/>: past 60 rest-frame days or fainter than m_lim + 1. Both are
    /// permanent in the simulated sky (the light curve declines monotonically after peak).
    /// </summary>
    private bool LeftForGood(Transient t, DateTimeOffset evening) =>
        t.PhaseAt(evening) > 60 || t.MagnitudeAt(evening) > _settings.Sky.SurveyLimitMag + 1;

    /// <summary>
    /// Demand against capacity. Candidates left out by the bounded pool are counted as worth observing when the
    /// pool found them visible and bright enough, each with the mean shortest spectrum of those planned for.
    /// </summary>
    private static NightLoad Load(PlanningProblem problem, int waiting, int eligible)
    {
        var shortest = new double[problem.Candidates.Count];
        Array.Fill(shortest, double.PositiveInfinity);
        foreach (var option in problem.Options)
        {
            foreach (var level in option.Levels.Where(l => l.Value > 0))
            {
                shortest[option.Candidate] = Math.Min(shortest[option.Candidate], level.DurationSeconds);
            }
        }

        var worth = shortest.Where(double.IsFinite).ToArray();
        var leftOut = Math.Max(0, eligible - problem.Candidates.Count);
        var demand = worth.Sum() + (worth.Length > 0 ? leftOut * worth.Average() : 0);
        var capacity = problem.Units.Sum(u => Math.Min(u.BudgetSeconds, u.Available.LengthSeconds));
        return new NightLoad(waiting, worth.Length + leftOut, Math.Round(demand / 3600, 3), Math.Round(capacity / 3600, 3));
    }

    private IReadOnlyList<PlannedObservation> Plan(PlanningProblem problem)
    {
        switch (_strategy)
        {
            case SeasonStrategy.BrightestFirstLargestTelescope:
                return BaselineSchedulers.BrightestFirstLargestTelescope(problem,
                    _spectrographs.ToDictionary(s => s.Id.ToString(), s => s.ApertureM));
            case SeasonStrategy.PriorityHighestResolutionFirst:
                return BaselineSchedulers.PriorityHighestResolutionFirst(problem);
            default:
                var model = PlanningModel.Compile(problem, new PlanningSettings
                {
                    UnitsKeptByValue = int.MaxValue,
                    UnitsKeptByDensity = 0,
                    LevelsKeptPerOption = int.MaxValue,
                });
                if (model.Choices.Count == 0)
                {
                    return [];
                }

                var found = GreedyPlanner.SolveBest(model);
                found = NeighbourhoodSearch.Improve(model, found, new NeighbourhoodSearchSettings
                {
                    Rounds = _settings.LocalSearchRounds,
                    Seed = SeasonRandom.Derive(_settings.Seed, "search"),
                });
                return model.ToObservations(found);
        }
    }

    private Random Draw(string purpose, object what, int night, string unit = "") =>
        new(SeasonRandom.Derive(_settings.Seed, purpose, what, night, unit));

    private void Execute(int night, Transient transient, SimulatedTarget target, Spectrograph sg, PlanningUnit unit, ExposureLevel level, DateTimeOffset at)
    {
        var i = transient.Index;
        var hours = level.DurationSeconds / 3600;
        _observations++;
        _hoursByNight[sg.Name][night] += hours;
        var high = sg.ResolvingPower >= _settings.HighResolutionThreshold;
        if (high)
        {
            _highHours += hours;
            _highCount++;
            _meanHighHours += (hours - _meanHighHours) / _highCount;
            var settled = SequentialValuation.Max(_belief[i]);
            _highBySettled[settled < 0.5 ? 0 : settled < 0.7 ? 1 : settled < 0.9 ? 2 : 3] += hours;
            if (_leftAmbiguousByLowR[i])
            {
                _highHoursOnAmbiguous += hours;
            }
        }

        // Achieved S/N: the plan sized the exposure for the forecast magnitude + 1σ.
        var random = Draw("outcome", transient.Id, night, sg.Name);
        var plannedMag = target.MagnitudeAt(at).MagnitudeAB + target.MagnitudeAt(at).SigmaMag;
        var snr = level.Snr * Math.Pow(10, -0.4 * (transient.MagnitudeAt(at) - plannedMag)) * Math.Exp(_settings.SnrScatter * SeasonSky.Gaussian(random));
        snr = Math.Max(0.5, snr);
        var truePhase = new PhaseBelief(transient.PhaseAt(at), 0);
        var channel = new double[_k * _k];
        _truth.AtResolution(sg.ResolvingPower).FillChannel(snr, truePhase, channel);
        var d = _settings.TruthDegradation.GetValueOrDefault(sg.Name);
        var row = Enumerable.Range(0, _k).Select(j => (1 - d) * channel[transient.Subtype * _k + j] + d / _k).ToArray();
        var answer = SeasonSky.Pick(random, row);

        if (!_sequential)
        {
            Identify(i, answer, night, at, transient, null);
            return;
        }

        var believed = target.PhaseAt(at);
        _reports[i].Add(new Report(unit.Id, sg.ResolvingPower, snr, believed, answer));
        var slice = _planner.AtResolution(sg.ResolvingPower);
        if (_outcomes is not null)
        {
            _outcomes.Fill(unit.Id, slice, snr, believed, channel);
        }
        else
        {
            slice.FillChannel(snr, believed, channel);
        }

        var posterior = new double[_k];
        if (PosteriorUpdate.Bayes(_belief[i], channel, answer, posterior) > 0)
        {
            _belief[i] = posterior;
        }

        var top = SequentialValuation.Max(_belief[i]);
        if (!high)
        {
            _lowLabelled++;
        }

        if (top >= _settings.Confidence - 1e-12)
        {
            var label = Array.IndexOf(_belief[i], top);
            Identify(i, label, night, at, transient, _atConfidence, top);
            foreach (var r in _reports[i])
            {
                _outcomes?.Add(new UnitTrial(r.UnitId, r.ResolvingPower, r.Snr, r.Phase, label, r.Answer));
            }
        }
        else
        {
            _status[i] = Status.Unsettled;
            if (!high)
            {
                _leftAmbiguousByLowR[i] = true;
                _lowUnsettled++;
            }
        }
    }

    private void Identify(int i, int label, int night, DateTimeOffset at, Transient transient, LabelTally? tally, double probability = double.NaN)
    {
        _status[i] = Status.Identified;
        Label(i, label, night, at, transient);
        tally?.Add(label == transient.Subtype, probability);
    }

    /// <summary>
    /// Closes an unsettled candidate's books: its final label is the most probable subtype (first in order on a tie).
    /// Bookkeeping only: the status (and so the capacity share), the pool and the outcome learning are untouched.
    /// </summary>
    private void Close(Transient transient, int night, DateTimeOffset at, bool seasonEnd = false)
    {
        var i = transient.Index;
        var top = SequentialValuation.Max(_belief[i]);
        var label = Array.IndexOf(_belief[i], top);
        _closed[i] = true;
        Label(i, label, night, at, transient);
        _closing.Add(label == transient.Subtype, top);
        if (seasonEnd)
        {
            _closingAtEnd.Add(label == transient.Subtype, top);
        }
    }

    private void Label(int i, int label, int night, DateTimeOffset at, Transient transient)
    {
        _label[i] = label;
        // Objects discovered before the season count from its first evening.
        var entered = transient.DiscoveredUtc > _seasonStart ? transient.DiscoveredUtc : _seasonStart;
        _identifiedDays[i] = (at - entered).TotalDays;
        if (label == transient.Subtype)
        {
            _correctByNight[night]++;
        }
        else
        {
            _wrongByNight[night]++;
        }
    }

    /// <summary>End of the season: every candidate still unsettled is closed on the last night.</summary>
    private void CloseBooks()
    {
        if (_booksClosed)
        {
            return;
        }

        _booksClosed = true;
        var end = SeasonSimulator.Evening(_settings.FirstNight.AddDays(_settings.Nights));
        foreach (var t in _sky.Where(t => _status[t.Index] == Status.Unsettled && !_closed[t.Index]))
        {
            Close(t, _settings.Nights - 1, end, seasonEnd: true);
        }
    }

    /// <summary>
    /// q for the next night. U counts the unsettled candidates that can still be in its pool: not closed, and not
    /// gone for good by <paramref name="nextEvening"/> (a candidate that has left can never take a follow-up).
    /// </summary>
    private void UpdateCapacityShare(int poolSize, DateTimeOffset nextEvening)
    {
        var capacity = _spectrographs.Where(s => s.ResolvingPower >= _settings.HighResolutionThreshold)
            .Sum(s => s.NightlyBudgetHours) * _settings.ClearFraction;
        var unsettled = _sky.Count(t => _status[t.Index] == Status.Unsettled && !_closed[t.Index] && !LeftForGood(t, nextEvening));
        var fresh = Math.Max(0, poolSize - unsettled);
        var f = _lowLabelled > 0 ? (double)_lowUnsettled / _lowLabelled : 0.5;
        var demand = _meanHighHours * (unsettled + f * fresh);
        _capacityShare = demand > 0 ? Math.Min(1, capacity / demand) : 1;
    }

    private static Dictionary<string, double[]> Rounded(Dictionary<string, double[]> byNight) =>
        byNight.ToDictionary(h => h.Key, h => h.Value.Select(v => Math.Round(v, 4)).ToArray(), StringComparer.Ordinal);

    internal StrategyResult Result()
    {
        if (_sequential)
        {
            CloseBooks();
        }

        var correct = _correctByNight.Sum();
        var wrong = _wrongByNight.Sum();
        var days = Enumerable.Range(0, _sky.Count).Where(i => _label[i] == _sky[i].Subtype)
            .Select(i => _identifiedDays[i]).Order().ToArray();
        var baseRates = Candidates.SubtypePriors.BaseRates(_planner.Subtypes.ToArray());
        var rare = Enumerable.Range(0, _sky.Count).Count(i => _label[i] == _sky[i].Subtype
            && baseRates[_planner.Subtypes[_sky[i].Subtype]] < _settings.RareBaseRate);
        var cumulative = new int[_settings.Nights];
        for (var n = 0; n < cumulative.Length; n++)
        {
            cumulative[n] = (n > 0 ? cumulative[n - 1] : 0) + _correctByNight[n];
        }

        var units = _outcomes?.Accuracy().Select(a => a with { UnitId = _spectrographs.First(s => s.Id.ToString() == a.UnitId).Name }).ToList() ?? [];
        return new StrategyResult(
            SeasonSimulator.Name(_strategy),
            correct,
            wrong,
            _sequential ? _atConfidence.Result() : null,
            _sequential ? _closing.Result() : null,
            _sequential ? _closingAtEnd.Result() : null,
            _observations,
            _weatherLosses,
            _hoursByNight.ToDictionary(h => h.Key, h => Math.Round(h.Value.Sum(), 3)),
            Math.Round(_highHours, 3),
            _highHours > 0 ? correct / _highHours : 0,
            days.Length > 0 ? days[days.Length / 2] : double.NaN,
            rare,
            Math.Round(_highHoursOnAmbiguous, 3),
            _highHours > 0 ? _highHoursOnAmbiguous / _highHours : 0,
            [
                new SettledHours(0, 0.5, Math.Round(_highBySettled[0], 3)),
                new SettledHours(0.5, 0.7, Math.Round(_highBySettled[1], 3)),
                new SettledHours(0.7, 0.9, Math.Round(_highBySettled[2], 3)),
                new SettledHours(0.9, 1, Math.Round(_highBySettled[3], 3)),
            ],
            cumulative,
            _hoursByNight.ToDictionary(h => h.Key, h => h.Value.Select(v => Math.Round(v, 3)).ToArray()),
            units,
            _flaggedNight,
            _load,
            Rounded(_plannedValue),
            Rounded(_plannedHours),
            Rounded(_plannedHoursAtConfidence),
            _capacityShareByNight.Select(q => Math.Round(q, 4)).ToArray());
    }
}

/// <summary>Counts final labels of one kind with their mean top probability.</summary>
internal sealed class LabelTally
{
    private int _correct;
    private int _wrong;
    private double _probability;

    internal void Add(bool correct, double probability)
    {
        if (correct)
        {
            _correct++;
        }
        else
        {
            _wrong++;
        }

        _probability += probability;
    }

    internal LabelCount Result() =>
        new(_correct, _wrong, _correct + _wrong > 0 ? Math.Round(_probability / (_correct + _wrong), 4) : double.NaN);
}
