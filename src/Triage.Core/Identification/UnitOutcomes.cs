// Each unit's real accuracy from its own results. When a candidate is finally identified as k, every
// earlier labelled report of it is a trial of the unit that made it: true k, answer j, in the cell
// (unit, S/N band b, phase bin φ). Per row k the combination with the calibration is the posterior
// mean of a Dirichlet prior centred on the calibration's row with strength α objects [1, §3.4]:
//   Ĉ_u(j|k) = (α C(j|k) + n_{u,b,φ}(k, j)) / (α + N_{u,b,φ}(k))
// Flag (a warning): the unit's correct answers x over its n trials against the model's expectation,
//   E = Σᵢ C(kᵢ|kᵢ),  V = Σᵢ C(kᵢ|kᵢ)(1 − C(kᵢ|kᵢ)),  z = (x − E)/√V,
// flagged when n ≥ n_min and z < −z₀ (one-sided; the normal approximation to the Poisson-binomial
// sum [2]); the measured recall x/n carries a Wilson 95 % interval [3], the modelled one E/n.
// Unit-wide reliability (shares strength across rows [1, ch. 5]; can be turned off): the unit answers from the
// calibration's channel with probability 1 − d and guesses uniformly otherwise, C_u = (1 − d) C + d/K, with d̂ the
// maximum of the concave log-likelihood Σᵢ ln((1 − d) C(aᵢ|kᵢ) + d/K) over all the unit's trials (n ≥ n_min,
// else 0); the per-row counts above then move the rows of C_u instead of C. Without it a row the unit has no
// trials for keeps the calibration's values, so a unit found to answer at random still looks informative
// through the rows of the subtypes it has rarely been tested on.
//
// References
// [1] A. Gelman et al., Bayesian Data Analysis, 3rd ed., CRC 2013, §3.4 (multinomial with Dirichlet prior).
// [2] Y. H. Wang, "On the number of successes in independent trials", Statistica Sinica 3 (1993) 295.
// [3] E. B. Wilson, "Probable inference, the law of succession, and statistical inference", JASA 22 (1927) 209.
using Triage.Core.Calibration;
using Triage.Core.Planning;

namespace Triage.Core.Identification;

/// <summary>Settings of outcome learning.</summary>
public sealed record UnitOutcomeSettings
{
    /// <summary>α: weight of the calibration's row, in objects. Default 20 (a row is half its own data after 20 trials of that subtype in that cell).</summary>
    public double PriorStrength { get; init; } = 20;

    /// <summary>Upper edges of the S/N bands (per resolution element); the last band is open. Default 7, 14, 28 (around the calibration's 5, 10, 20).</summary>
    public IReadOnlyList<double> SnrBandEdges { get; init; } = [7, 14, 28];

    /// <summary>
    /// Also learn one reliability per unit from all its trials (the share d̂ of uniform guesses mixed into the
    /// calibration's channel, by maximum likelihood) and apply it to every row before the per-row counts. Default true:
    /// on the demo season it changes nothing for units as good as modelled (d̂ = 0 for every unit, the season table
    /// identical) and lets a unit found to answer at random lose its value (docs/sequential-triage.md §5).
    /// </summary>
    public bool UnitReliability { get; init; } = true;

    /// <summary>Trials a unit needs before it can be flagged (and before its reliability is estimated). Default 10.</summary>
    public int MinimumTrials { get; init; } = 10;

    /// <summary>z₀ of the one-sided test. Default 2.326 (1 %).</summary>
    public double FlagZ { get; init; } = 2.326;
}

/// <summary>One labelled report that became a trial.</summary>
/// <param name="UnitId">Unit that made it.</param>
/// <param name="ResolvingPower">Its R.</param>
/// <param name="Snr">Achieved S/N.</param>
/// <param name="Phase">Phase belief at the observation.</param>
/// <param name="TrueSubtype">Index of the finally identified subtype.</param>
/// <param name="Answer">Index of the reported subtype.</param>
public readonly record struct UnitTrial(string UnitId, double ResolvingPower, double Snr, PhaseBelief Phase, int TrueSubtype, int Answer);

/// <summary>Modelled against measured accuracy of one unit.</summary>
/// <param name="UnitId">Unit.</param>
/// <param name="Trials">Labelled reports of finally identified candidates.</param>
/// <param name="Correct">How many named the identified subtype.</param>
/// <param name="Measured">Measured recall x/n with its Wilson 95 % interval.</param>
/// <param name="Modelled">Mean modelled recall E/n over the same trials.</param>
/// <param name="Z">(x − E)/√V.</param>
/// <param name="Flagged">Significantly worse than modelled (a warning).</param>
public sealed record UnitAccuracy(string UnitId, int Trials, int Correct, ProportionInterval Measured, double Modelled, double Z, bool Flagged);

/// <summary>Empirical confusion counts per unit, S/N band and phase bin, combined with the calibration.</summary>
public sealed class UnitOutcomes : IUnitChannels
{
    private readonly AccuracySurface _surface;
    private readonly UnitOutcomeSettings _settings;
    private readonly Dictionary<(string Unit, int Band, int Bin), double[]> _counts = [];
    private readonly Dictionary<string, (int N, int X, double E, double V)> _score = new(StringComparer.Ordinal);
    private readonly Dictionary<string, List<double>> _answerProbability = new(StringComparer.Ordinal);
    private readonly Dictionary<string, double> _guessShare = new(StringComparer.Ordinal);

    /// <summary>Starts with no outcomes.</summary>
    public UnitOutcomes(AccuracySurface surface, UnitOutcomeSettings? settings = null)
    {
        _surface = surface ?? throw new ArgumentNullException(nameof(surface));
        _settings = settings ?? new UnitOutcomeSettings();
    }

    /// <summary>Trials recorded so far.</summary>
    public int TrialCount { get; private set; }

    private int Band(double snr)
    {
        var b = 0;
        while (b < _settings.SnrBandEdges.Count && snr >= _settings.SnrBandEdges[b])
        {
            b++;
        }

        return b;
    }

    private int Bin(PhaseBelief phase)
    {
        var bins = _surface.Bins;
        for (var b = 0; b < bins.Length; b++)
        {
            if (phase.MeanDays < bins[b].ToDays)
            {
                return b;
            }
        }

        return bins.Length - 1;
    }

    /// <summary>Adds one trial (counts and the unit's score against the calibration's own channel).</summary>
    public void Add(UnitTrial trial)
    {
        var k = _surface.SubtypeCount;
        var key = (trial.UnitId, Band(trial.Snr), Bin(trial.Phase));
        if (!_counts.TryGetValue(key, out var counts))
        {
            counts = new double[k * k];
            _counts[key] = counts;
        }

        counts[trial.TrueSubtype * k + trial.Answer] += 1;
        var model = new double[k * k];
        _surface.AtResolution(trial.ResolvingPower).FillChannel(trial.Snr, trial.Phase, model);
        var p = model[trial.TrueSubtype * k + trial.TrueSubtype];
        var s = _score.GetValueOrDefault(trial.UnitId);
        _score[trial.UnitId] = (s.N + 1, s.X + (trial.Answer == trial.TrueSubtype ? 1 : 0), s.E + p, s.V + p * (1 - p));
        if (!_answerProbability.TryGetValue(trial.UnitId, out var answers))
        {
            answers = [];
            _answerProbability[trial.UnitId] = answers;
        }

        answers.Add(model[trial.TrueSubtype * k + trial.Answer]);
        _guessShare.Remove(trial.UnitId);
        TrialCount++;
    }

    /// <summary>
    /// d̂ of the unit: the share of uniform guesses in its answers that makes its trials most likely (0 with fewer than
    /// the minimum trials or with <see cref="UnitOutcomeSettings.UnitReliability"/> off). In [0, 1].
    /// </summary>
    public double GuessShare(string unitId)
    {
        if (!_settings.UnitReliability || !_answerProbability.TryGetValue(unitId, out var answers) || answers.Count < _settings.MinimumTrials)
        {
            return 0;
        }

        if (!_guessShare.TryGetValue(unitId, out var d))
        {
            d = MaximumLikelihoodGuessShare(answers, 1.0 / _surface.SubtypeCount);
            _guessShare[unitId] = d;
        }

        return d;
    }

    /// <summary>
    /// argmax over d in [0, 1] of Σᵢ ln((1 − d) pᵢ + d u): the log-likelihood is concave in d, so its derivative
    /// Σᵢ (u − pᵢ)/((1 − d) pᵢ + d u) falls with d and the maximum is 0, 1 or the derivative's root (Brent's method).
    /// </summary>
    /// <param name="answerProbabilities">pᵢ = C(aᵢ|kᵢ), the model's probability of each trial's answer given its subtype.</param>
    /// <param name="uniform">u = 1/K.</param>
    public static double MaximumLikelihoodGuessShare(IReadOnlyList<double> answerProbabilities, double uniform)
    {
        ArgumentNullException.ThrowIfNull(answerProbabilities);
        double Slope(double d)
        {
            var sum = 0.0;
            foreach (var p in answerProbabilities)
            {
                sum += (uniform - p) / ((1 - d) * p + d * uniform);
            }

            return sum;
        }

        if (answerProbabilities.Count == 0 || !(Slope(0) > 0))
        {
            return 0;
        }

        if (Slope(1) >= 0)
        {
            return 1;
        }

        // The slope changes sign inside (0, 1): its root, by Brent's method (MathNet.Numerics).
        return MathNet.Numerics.RootFinding.Brent.FindRoot(Slope, 0, 1, 1e-13);
    }

    /// <inheritdoc/>
    /// <remarks>
    /// The calibration's channel (mixed with the unit's share of uniform guesses when <see cref="UnitOutcomeSettings.UnitReliability"/>
    /// is on), with each row moved towards the unit's counts in the same S/N band and phase bin.
    /// </remarks>
    public bool Fill(string unitId, ResolutionSlice slice, double snr, PhaseBelief phase, Span<double> channel)
    {
        ArgumentNullException.ThrowIfNull(slice);
        var clamped = slice.FillChannel(snr, phase, channel);
        if (GuessShare(unitId) is var d and > 0)
        {
            var guess = d / _surface.SubtypeCount;
            for (var i = 0; i < _surface.SubtypeCount * _surface.SubtypeCount; i++)
            {
                channel[i] = (1 - d) * channel[i] + guess;
            }
        }

        if (!_counts.TryGetValue((unitId, Band(snr), Bin(phase)), out var counts))
        {
            return clamped;
        }

        var k = _surface.SubtypeCount;
        var alpha = _settings.PriorStrength;
        for (var row = 0; row < k; row++)
        {
            var n = 0.0;
            for (var j = 0; j < k; j++)
            {
                n += counts[row * k + j];
            }

            if (n == 0)
            {
                continue;
            }

            for (var j = 0; j < k; j++)
            {
                channel[row * k + j] = (alpha * channel[row * k + j] + counts[row * k + j]) / (alpha + n);
            }
        }

        return clamped;
    }

    /// <summary>Modelled against measured accuracy of every unit with trials, by unit id.</summary>
    public IReadOnlyList<UnitAccuracy> Accuracy() => _score
        .OrderBy(s => s.Key, StringComparer.Ordinal)
        .Select(s => Score(s.Key, s.Value.N, s.Value.X, s.Value.E, s.Value.V, _settings))
        .ToList();

    /// <summary>The comparison for one unit from its counts: n trials, x correct, expected E and variance V under the model.</summary>
    public static UnitAccuracy Score(string unitId, int n, int x, double expected, double variance, UnitOutcomeSettings settings)
    {
        ArgumentNullException.ThrowIfNull(settings);
        var z = variance > 0 ? (x - expected) / Math.Sqrt(variance) : 0;
        return new UnitAccuracy(unitId, n, x, WilsonInterval.Compute(x, n), n > 0 ? expected / n : double.NaN, z,
            n >= settings.MinimumTrials && z < -settings.FlagZ);
    }
}
