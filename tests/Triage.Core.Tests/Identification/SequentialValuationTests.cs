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
    public void Evaluate_NoAnswerReachesTau_PerfectFollowUp_AddsNothing()
    {
        // τ = 0.9: every answer leaves the top below 0.9 → D = 0. A perfect follow-up identifies every
        // belief with certainty, with or without this spectrum: D(p(·|j), F) = D(p, F) = 1 → E = 0.
        var v = SequentialValuation.Evaluate(Prior, Channel, Perfect, 0.5, 0.9);

        Assert.Equal(0, v.Direct, 12);
        Assert.Equal(0, v.Escalation, 12);
        Assert.Equal(0, v.Total, 12);
        Assert.Equal(1, v.UnsettledProbability, 12);
    }

    [Fact]
    public void Evaluate_LowerTau_CountsSettledAnswersDirectly()
    {
        // τ = 0.85: answers Ia (8/9) and II (0.8654) settle: D = 0.63·8/9 + 0.208·0.18/0.208 = 0.56 + 0.18 = 0.74;
        // only 91T (m = 0.162) is escalated, to a perfect follow-up that needs no help: E = 0.162·(1 − 1) = 0.
        var v = SequentialValuation.Evaluate(Prior, Channel, Perfect, 1, 0.85);

        Assert.Equal(0.74, v.Direct, 12);
        Assert.Equal(0, v.Escalation, 12);
        Assert.Equal(0.74, v.Total, 12);
    }

    [Fact]
    public void Evaluate_UninformativeSpectrum_IsWorthNothing()
    {
        // A channel with equal rows carries no information (Raiffa & Schlaifer ch. 4: the value of sample
        // information of an uninformative experiment is 0): p(·|j) = p for every j, 0.7 < τ = 0.85 → D = 0;
        // the follow-up through C is worth D(p, C) = 0.74 with or without it → E = 0 (crediting the
        // follow-up's whole value would give 0.74).
        double[] uniform = [1.0 / 3, 1.0 / 3, 1.0 / 3, 1.0 / 3, 1.0 / 3, 1.0 / 3, 1.0 / 3, 1.0 / 3, 1.0 / 3];

        var v = SequentialValuation.Evaluate(Prior, uniform, Channel, 1, 0.85);

        Assert.Equal(0, v.Direct, 12);
        Assert.Equal(0, v.Escalation, 12);
    }

    [Fact]
    public void Evaluate_FollowUpThroughTheSameChannel_MatchesTheHandComputation()
    {
        // τ = 0.9, q = 0.5, F = C. Without this spectrum the follow-up identifies nothing: D(p, C) = 0.
        // After answer Ia, p₁ = [0.56, 0.05, 0.02]/0.63; a second Ia gives p(Ia) = 0.448/0.475 = 0.943 ≥ τ, the other
        // answers stay below τ → D(p₁, C) = 0.448/0.63. After 91T, p₂ = [0.112, 0.05, 0]/0.162; only a following II
        // settles (p(Ia) = 1) → D(p₂, C) = 0.112·0.04/0.162 = 0.00448/0.162. After II, p₃ = [0.028, 0, 0.18]/0.208;
        // a following 91T (p(Ia) = 1) or II (p(II) = 0.162/0.16312 ≥ τ) settles → D(p₃, C) = (0.00448 + 0.162)/0.208.
        // E = 0.5·(0.448 + 0.00448 + 0.16648) = 0.30948.
        var v = SequentialValuation.Evaluate(Prior, Channel, Channel, 0.5, 0.9);

        Assert.Equal(0, v.Direct, 12);
        Assert.Equal(0.30948, v.Escalation, 12);
        Assert.Equal(0, v.LikelyUnsettledAnswer); // Ia, m = 0.63
        Assert.Equal(0.63, v.LikelyUnsettledAnswerProbability, 12);
        Assert.Equal(0.475 / 0.63, v.FollowUpIdentifies, 12);
        Assert.Equal(0.448 / 0.63, v.FollowUpCorrect, 12);
    }

    [Fact]
    public void Evaluate_UnsettledAnswersHarderThanThePrior_LowerTheValue()
    {
        // τ = 0.85, q = 1, F = C: the prior alone gives D(p, C) = 0.74; the only unsettled answer (91T, m = 0.162)
        // leaves p₂ with D(p₂, C) = 0.00448/0.162, so E = 0.00448 − 0.162·0.74 = −0.1154 and V = 0.74 − 0.1154.
        var v = SequentialValuation.Evaluate(Prior, Channel, Channel, 1, 0.85);

        Assert.Equal(0.74, v.Direct, 12);
        Assert.Equal(-0.1154, v.Escalation, 12);
        Assert.Equal(0.6246, v.Total, 12);
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
        var v = SequentialValuation.Evaluate(Prior, Channel, Channel, 0.5, 0.9);

        var text = SequentialValuation.Explain(v, ["Ia", "Ia-91T-like", "II"], 4000);

        Assert.Equal("cheap spectrum first: if it reports Ia (63 % likely), an R=4000 spectrum then identifies the subtype with probability 0.75 (0.71 expected correct); 0.00 identified now + 0.31 more from the follow-up than without this spectrum", text);
    }

    [Fact]
    public void Explain_NamesTheAnswerTheFollowUpHelpsMost_NotTheCommonestUnsettledOne()
    {
        // Prior [0.25, 0.7, 0.05], τ = 0.9, q = 0.5, F = C. m(Ia) = 0.2 + 0.35 + 0.005 = 0.555, m(91T) = 0.04 + 0.35 = 0.39,
        // m(II) = 0.01 + 0.045 = 0.055; every posterior stays below τ (0.631, 0.897, 0.818), so D = 0 and D(p, F) = 0.
        // After Ia, p₁ ∝ [0.2, 0.35, 0.005]: no second answer reaches τ (0.52, 0.845, 0.64) → it adds 0.
        // After 91T, p₂ ∝ [0.04, 0.35, 0]: a second 91T gives 0.175/0.1814 = 0.965, a second II gives p(Ia) = 1 →
        // m·D(p₂, F) = 0.175 + 0.0016 = 0.1766, identifies with (0.1814 + 0.0016)/0.39 = 0.4692.
        // After II, p₃ ∝ [0.01, 0, 0.045]: 91T gives p(Ia) = 1 (0.0016), II gives 0.0405/0.0409 (0.0405) → 0.0421.
        // E = 0.5·(0.1766 + 0.0421) = 0.10935. The commonest unsettled answer (Ia) adds nothing; 91T adds most.
        double[] prior = [0.25, 0.7, 0.05];

        var v = SequentialValuation.Evaluate(prior, Channel, Channel, 0.5, 0.9);
        var text = SequentialValuation.Explain(v, ["Ia", "Ia-91T-like", "II"], 4000);

        Assert.Equal(0.10935, v.Escalation, 12);
        Assert.Equal(1, v.LikelyUnsettledAnswer);
        Assert.Equal(0.183 / 0.39, v.FollowUpIdentifies, 12);
        Assert.Equal("cheap spectrum first: if it reports Ia-91T-like (39 % likely), an R=4000 spectrum then identifies the subtype with probability 0.47 (0.45 expected correct); 0.00 identified now + 0.11 more from the follow-up than without this spectrum", text);
    }

    [Fact]
    public void Explain_EscalationBelowTheShownDecimals_SaysNothing()
    {
        // The hand case above with q = 0.01: E = 0.01 · 0.61896 = 0.0061896 is shown ("0.01 more"); with q = 0.005,
        // E = 0.0030948 would read "+ 0.00 more from the follow-up", so no escalation sentence.
        var shown = SequentialValuation.Evaluate(Prior, Channel, Channel, 0.01, 0.9);
        var hidden = SequentialValuation.Evaluate(Prior, Channel, Channel, 0.005, 0.9);

        Assert.Equal(0.0061896, shown.Escalation, 12);
        Assert.EndsWith("0.00 identified now + 0.01 more from the follow-up than without this spectrum", SequentialValuation.Explain(shown, ["Ia", "Ia-91T-like", "II"], 4000));
        Assert.Equal(0.0030948, hidden.Escalation, 12);
        Assert.Null(SequentialValuation.Explain(hidden, ["Ia", "Ia-91T-like", "II"], 4000));
    }
}
