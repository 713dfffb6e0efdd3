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
        var outcomes = new UnitOutcomes(surface, new UnitOutcomeSettings { PriorStrength = 20 });
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
