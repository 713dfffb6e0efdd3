using Triage.Core.Identification;
using Triage.Core.Planning;

namespace Triage.Core.Tests.Identification;

/// <summary>
/// Outcome learning on the three-subtype matrix of <see cref="PosteriorUpdateTests"/> (R = 100, S/N = 10).
/// The combination is the posterior mean of a Dirichlet prior (A. Gelman et al., Bayesian Data
/// Analysis, 3rd ed., §3.4): (α C(j|k) + n(k, j)) / (α + N(k)), worked by hand below.
/// </summary>
public class UnitOutcomesTests
{
    private static readonly PhaseBelief Peak = new(0, 0);

    private static UnitTrial Trial(int truth, int answer) => new("unit-a", 100, 10, Peak, truth, answer);

    [Fact]
    public void Fill_CombinesCalibrationRowAndCounts()
    {
        var surface = PosteriorUpdateTests.Surface();
        var outcomes = new UnitOutcomes(surface, new UnitOutcomeSettings { PriorStrength = 20, UnitReliability = false });
        for (var i = 0; i < 10; i++)
        {
            outcomes.Add(Trial(0, 1)); // ten Ia answered Ia-91T-like
        }

        var channel = new double[9];
        outcomes.Fill("unit-a", surface.AtResolution(100), 10, Peak, channel);

        // Row Ia: model [0.8, 0.16, 0.04], counts [0, 10, 0], α = 20, N = 10:
        // [(16 + 0)/30, (3.2 + 10)/30, (0.8 + 0)/30] = [0.53333, 0.44, 0.026667].
        Assert.Equal(16.0 / 30, channel[0], 12);
        Assert.Equal(13.2 / 30, channel[1], 12);
        Assert.Equal(0.8 / 30, channel[2], 12);
        // Rows without trials keep the calibration's values; other units are untouched.
        Assert.Equal(0.5, channel[3], 12);
        var other = new double[9];
        outcomes.Fill("unit-b", surface.AtResolution(100), 10, Peak, other);
        Assert.Equal(0.8, other[0], 12);
    }

    [Fact]
    public void Accuracy_FarBelowModel_IsFlagged()
    {
        var outcomes = new UnitOutcomes(PosteriorUpdateTests.Surface());
        for (var i = 0; i < 40; i++)
        {
            outcomes.Add(Trial(0, i < 20 ? 0 : 2)); // model recall 0.8, measured 0.5
        }

        var a = Assert.Single(outcomes.Accuracy());

        // E = 40·0.8 = 32, V = 40·0.8·0.2 = 6.4, z = (20 − 32)/√6.4 = −4.743.
        Assert.Equal(-12 / Math.Sqrt(6.4), a.Z, 9);
        Assert.Equal(0.8, a.Modelled, 12);
        Assert.Equal(0.5, a.Measured.Estimate, 12);
        Assert.True(a.Flagged);
    }

    [Fact]
    public void Fill_WithUnitReliability_MixesEveryRowWithTheGuessShareBeforeTheCounts()
    {
        var surface = PosteriorUpdateTests.Surface();
        var outcomes = new UnitOutcomes(surface, new UnitOutcomeSettings { PriorStrength = 20, UnitReliability = true });
        for (var i = 0; i < 40; i++)
        {
            outcomes.Add(Trial(0, i < 20 ? 0 : 2)); // 20 Ia answered Ia (model 0.8), 20 answered II (model 0.04)
        }

        // d̂ maximises 20 ln((1 − d) 0.8 + d/3) + 20 ln((1 − d) 0.04 + d/3). Setting the derivative to 0:
        // 20 (−7/15)/(0.8 − 7d/15) + 20 (22/75)/(0.04 + 22d/75) = 0 → 35 (0.04 + 22d/75) = 22 (0.8 − 7d/15)
        // → (1540/75) d = 16.2 → d = 243/308 = 0.788961 (worked by hand; Gelman et al. BDA3 ch. 5 for pooling across rows).
        const double d = 243.0 / 308;
        Assert.Equal(d, outcomes.GuessShare("unit-a"), 9);
        var channel = new double[9];
        outcomes.Fill("unit-a", surface.AtResolution(100), 10, Peak, channel);

        // Row Ia mixed: (1 − d)[0.8, 0.16, 0.04] + d/3, then the counts [20, 0, 20] with α = 20, N = 40.
        double[] mixedIa = [(1 - d) * 0.8 + d / 3, (1 - d) * 0.16 + d / 3, (1 - d) * 0.04 + d / 3];
        Assert.Equal((20 * mixedIa[0] + 20) / 60, channel[0], 9);
        Assert.Equal((20 * mixedIa[1] + 0) / 60, channel[1], 9);
        Assert.Equal((20 * mixedIa[2] + 20) / 60, channel[2], 9);
        // A row without trials is mixed too (model 0.5 on the diagonal of row 1).
        Assert.Equal((1 - d) * 0.5 + d / 3, channel[4], 9);
        // With the setting off the same trials leave rows without trials at the calibration.
        var plain = new UnitOutcomes(surface, new UnitOutcomeSettings { PriorStrength = 20, UnitReliability = false });
        for (var i = 0; i < 40; i++)
        {
            plain.Add(Trial(0, i < 20 ? 0 : 2));
        }

        plain.Fill("unit-a", surface.AtResolution(100), 10, Peak, channel);
        Assert.Equal(0.5, channel[4], 12);
        Assert.Equal(0, plain.GuessShare("unit-a"));
    }

    [Fact]
    public void GuessShare_OfAUnitThatConfusesOnePairOnly_IsReadAsGuessing_AKnownLimitation()
    {
        // 60 trials of a frequent subtype all answered as the one neighbour the calibration gives 0.02, 40 trials of
        // others answered right at 0.7, K = 14 (u = 1/14). The derivative 60(u − 0.02)/((1 − d)0.02 + du) +
        // 40(u − 0.7)/((1 − d)0.7 + du) is 0 where d = 203/396 = 0.512626 (worked by hand: the numerators make it
        // linear in d; also scipy.optimize.brentq, Debian python3-scipy, 0.5126262626). The unit is not guessing: it
        // is right on every other row, yet half of every row is mixed with uniform answers. Documented in
        // docs/sequential-triage.md §4; the per-row counts are what corrects a structured error.
        var answers = Enumerable.Repeat(0.02, 60).Concat(Enumerable.Repeat(0.7, 40)).ToList();
        Assert.Equal(203.0 / 396, UnitOutcomes.MaximumLikelihoodGuessShare(answers, 1.0 / 14), 9);
        // With the neighbour's calibrated probability above u (0.08), every answer is at least as likely as a uniform one: d̂ = 0.
        Assert.Equal(0, UnitOutcomes.MaximumLikelihoodGuessShare(Enumerable.Repeat(0.08, 60).Concat(Enumerable.Repeat(0.7, 40)).ToList(), 1.0 / 14));
    }

    [Fact]
    public void GuessShare_AnswersAsLikelyAsModelledOrBetter_IsZero()
    {
        // Every answer correct at model probability 0.8 > 1/3: the likelihood falls with d from d = 0.
        Assert.Equal(0, UnitOutcomes.MaximumLikelihoodGuessShare([0.8, 0.8, 0.8], 1.0 / 3));
        // Every answer one the model gave 0.01: the likelihood rises all the way to d = 1.
        Assert.Equal(1, UnitOutcomes.MaximumLikelihoodGuessShare([0.01, 0.01], 1.0 / 3));
    }

    [Fact]
    public void Accuracy_WithinNoise_IsNotFlagged()
    {
        var outcomes = new UnitOutcomes(PosteriorUpdateTests.Surface());
        for (var i = 0; i < 40; i++)
        {
            outcomes.Add(Trial(0, i < 31 ? 0 : 1)); // 31 of 40 against 32 expected: z = −0.395
        }

        var a = Assert.Single(outcomes.Accuracy());

        Assert.Equal(-1 / Math.Sqrt(6.4), a.Z, 9);
        Assert.False(a.Flagged);
    }

    [Fact]
    public void Accuracy_TooFewTrials_IsNotFlagged()
    {
        var outcomes = new UnitOutcomes(PosteriorUpdateTests.Surface());
        for (var i = 0; i < 5; i++)
        {
            outcomes.Add(Trial(0, 2));
        }

        Assert.False(Assert.Single(outcomes.Accuracy()).Flagged);
    }
}
