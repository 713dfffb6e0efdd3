using Triage.Core.Identification;

namespace Triage.Core.Tests.Identification;

/// <summary>
/// The one-step preposterior value (H. Raiffa, R. Schlaifer, Applied Statistical Decision Theory,
/// 1961, ch. 4) against hand computations with Bayes' theorem on the three-subtype matrix of
/// <see cref="PosteriorUpdateTests"/>: C rows [0.8, 0.16, 0.04], [0.5, 0.5, 0], [0.1, 0, 0.9];
/// prior [0.7, 0.1, 0.2]. Answers: m(Ia) = 0.63 → p(Ia|Ia) = 8/9; m(91T) = 0.162 → p(Ia|91T) = 0.691;
/// m(II) = 0.208 → p(II|II) = 0.18/0.208 = 0.8654.
/// </summary>
public class SequentialValuationTests
{
    private static readonly double[] Prior = [0.7, 0.1, 0.2];
    private static readonly double[] Channel = [0.8, 0.16, 0.04, 0.5, 0.5, 0, 0.1, 0, 0.9];
    private static readonly double[] Perfect = [1, 0, 0, 0, 1, 0, 0, 0, 1];

    [Fact]
    public void Evaluate_NoAnswerReachesTau_DirectIsZero_PerfectFollowUpGivesQ()
    {
        // τ = 0.9: every answer leaves the top below 0.9 → D = 0; a perfect follow-up identifies every
        // unsettled answer with certainty → E = q·(0.63 + 0.162 + 0.208) = q.
        var v = SequentialValuation.Evaluate(Prior, Channel, Perfect, 0.5, 0.9);

        Assert.Equal(0, v.Direct, 12);
        Assert.Equal(0.5, v.Escalation, 12);
        Assert.Equal(1, v.UnsettledProbability, 12);
        Assert.Equal(0, v.LikelyUnsettledAnswer); // Ia, m = 0.63
        Assert.Equal(0.63, v.LikelyUnsettledAnswerProbability, 12);
    }

    [Fact]
    public void Evaluate_LowerTau_CountsSettledAnswersDirectly()
    {
        // τ = 0.85: answers Ia (8/9) and II (0.8654) settle: D = 0.63·8/9 + 0.208·0.18/0.208 = 0.56 + 0.18 = 0.74;
        // only 91T (m = 0.162) is escalated: E = 1·0.162.
        var v = SequentialValuation.Evaluate(Prior, Channel, Perfect, 1, 0.85);

        Assert.Equal(0.74, v.Direct, 12);
        Assert.Equal(0.162, v.Escalation, 12);
        Assert.Equal(0.902, v.Total, 12);
    }

    [Fact]
    public void Evaluate_WithoutFollowUp_HasNoEscalation()
    {
        var v = SequentialValuation.Evaluate(Prior, Channel, [], 1, 0.85);

        Assert.Equal(0.74, v.Direct, 12);
        Assert.Equal(0, v.Escalation);
        Assert.Null(SequentialValuation.Explain(v, ["Ia", "Ia-91T-like", "II"], 4000));
    }

    [Fact]
    public void Evaluate_PerfectChannel_IdentifiesEverything()
    {
        var v = SequentialValuation.Evaluate(Prior, Perfect, [], 0, 0.9);

        Assert.Equal(1, v.Direct, 12);
    }

    [Fact]
    public void Evaluate_UncalibratedShare_ScalesTheValue()
    {
        double[] partial = [0.35, 0.05, 0.1]; // half of the prior on subtypes the calibration does not know

        var v = SequentialValuation.Evaluate(partial, Perfect, [], 0, 0.9);

        Assert.Equal(0.5, v.Direct, 12);
    }

    [Fact]
    public void Explain_NamesTheAnswerTheUnitAndTheChances()
    {
        var v = SequentialValuation.Evaluate(Prior, Channel, Perfect, 0.5, 0.9);

        var text = SequentialValuation.Explain(v, ["Ia", "Ia-91T-like", "II"], 4000);

        Assert.Equal("cheap spectrum first: if it reports Ia (63 % likely), an R=4000 spectrum then identifies the subtype with probability 1.00 (1.00 expected correct); 0.00 identified now + 0.50 from escalating", text);
    }
}
