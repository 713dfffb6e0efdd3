// Value of a spectrum when a candidate counts as identified only once its posterior reaches τ,
// and an unsettled result may be escalated to a sharper unit (a one-step preposterior analysis [1]):
//   m(j)      = Σₖ p(k) C(j|k)                         probability the spectrum answers j
//   p(k|j)    = p(k) C(j|k) / m(j)                     posterior after answer j (Bayes [2])
//   g(π)      = max π  if max π ≥ τ, else 0            expected correct identifications of belief π
//   D(p, C)   = Σⱼ m(j) g(p(·|j))                      direct value: identified by this spectrum
//   E(p, C)   = q Σⱼ m(j) [max p(·|j) < τ] (D(p(·|j), F) − D(p, F))
//                                                      escalation: what this spectrum adds to the follow-up
//                                                      through channel F (the sharpest unit) that the
//                                                      candidate, left unsettled, could get anyway
//   V         = max(0, D + E)
// q in [0, 1] is the share of unsettled results the remaining high-R capacity can take. The follow-up
// is valued by its direct value only (one step of look-ahead). E is the expected value of sample
// information of this spectrum for the follow-up decision [1, ch. 4]: the value with the answer minus
// the value without it, so a spectrum that carries no information (C(j|k) equal for every k) is
// worth nothing. (Crediting the follow-up's whole value, q Σⱼ m(j) [unsettled] D(p(·|j), F), would
// give an uninformative spectrum q·D(p, F) and keep a unit that answers at random busy.) Answers
// that settle the candidate free the follow-up capacity for another candidate and are not charged. Probabilities of subtypes the
// calibration does not know never identify: the calibrated share s = Σ p of the prior is normalised,
// and V is multiplied by s.
//
// References
// [1] H. Raiffa, R. Schlaifer, Applied Statistical Decision Theory, Harvard 1961, ch. 4 (preposterior analysis).
// [2] E. T. Jaynes, Probability Theory: The Logic of Science, Cambridge University Press 2003, ch. 4.
using System.Globalization;

namespace Triage.Core.Identification;

/// <summary>The value of one spectrum under the identification rule, split into its parts.</summary>
/// <param name="Direct">D: expected correct identifications made by this spectrum alone, 0…1.</param>
/// <param name="Escalation">E: expected correct identifications its unsettled answers add to a follow-up spectrum, over the follow-up without them, −1…1.</param>
/// <param name="UnsettledProbability">Probability this spectrum leaves the candidate below τ.</param>
/// <param name="LikelyUnsettledAnswer">Index of the unsettled answer whose follow-up adds most, m(j)·(D(p(·|j), F) − D(p, F)) (−1: none adds anything).</param>
/// <param name="LikelyUnsettledAnswerProbability">m(j) of that answer.</param>
/// <param name="FollowUpIdentifies">Probability that the follow-up identifies the subtype after that answer.</param>
/// <param name="FollowUpCorrect">Expected correct identification of the follow-up after that answer.</param>
public readonly record struct SequentialValue(
    double Direct,
    double Escalation,
    double UnsettledProbability,
    int LikelyUnsettledAnswer,
    double LikelyUnsettledAnswerProbability,
    double FollowUpIdentifies,
    double FollowUpCorrect)
{
    /// <summary>V = max(0, D + E).</summary>
    public double Total => Math.Max(0, Direct + Escalation);
}

/// <summary>One-step preposterior value of a spectrum under the identification rule.</summary>
public static class SequentialValuation
{
    /// <summary>Direct and escalation value of a spectrum.</summary>
    /// <param name="prior">Aligned prior p(k) over the calibration's K subtypes (sum ≤ 1: the calibrated share).</param>
    /// <param name="channel">C(j|k) of this spectrum, K·K row-major.</param>
    /// <param name="followUp">F(j|k) of the follow-up spectrum, or empty for no escalation.</param>
    /// <param name="capacityShare">q in [0, 1].</param>
    /// <param name="confidence">τ in (0, 1].</param>
    /// <exception cref="ArgumentException">Sizes do not match.</exception>
    public static SequentialValue Evaluate(
        ReadOnlySpan<double> prior, ReadOnlySpan<double> channel, ReadOnlySpan<double> followUp, double capacityShare, double confidence)
    {
        var k = prior.Length;
        if (channel.Length != k * k || (followUp.Length != 0 && followUp.Length != k * k))
        {
            throw new ArgumentException($"Channels must hold {k}×{k} values.", nameof(channel));
        }

        var mass = 0.0;
        foreach (var p in prior)
        {
            mass += p;
        }

        if (!(mass > 0))
        {
            return new SequentialValue(0, 0, 0, -1, 0, 0, 0);
        }

        Span<double> normalised = k <= 64 ? stackalloc double[k] : new double[k];
        for (var s = 0; s < k; s++)
        {
            normalised[s] = prior[s] / mass;
        }

        Span<double> posterior = k <= 64 ? stackalloc double[k] : new double[k];
        double direct = 0, escalation = 0, unsettled = 0;
        int likely = -1;
        double likelyM = 0, likelyGain = 0, likelyIdentifies = 0, likelyCorrect = 0;
        var q = Math.Clamp(capacityShare, 0, 1);
        var withoutAnswer = followUp.Length == 0 ? 0 : Direct(normalised, followUp, confidence).Correct;
        for (var j = 0; j < k; j++)
        {
            var m = PosteriorUpdate.Bayes(normalised, channel, j, posterior);
            if (m <= 0)
            {
                continue;
            }

            var top = Max(posterior);
            if (top >= confidence - 1e-12)
            {
                direct += m * top;
                continue;
            }

            unsettled += m;
            if (followUp.Length == 0)
            {
                continue;
            }

            var (correct, identifies) = Direct(posterior, followUp, confidence);
            var gain = m * (correct - withoutAnswer);
            escalation += q * gain;
            // The explanation names the answer the follow-up helps most, not merely the commonest one
            // (which may be an answer after which the follow-up settles nothing).
            if (gain > likelyGain)
            {
                (likely, likelyM, likelyGain, likelyIdentifies, likelyCorrect) = (j, m, gain, identifies, correct);
            }
        }

        return new SequentialValue(mass * direct, mass * escalation, unsettled, likely, likelyM, likelyIdentifies, likelyCorrect);
    }

    /// <summary>D(p, C) and the probability that the spectrum identifies at all.</summary>
    private static (double Correct, double Identifies) Direct(ReadOnlySpan<double> prior, ReadOnlySpan<double> channel, double confidence)
    {
        var k = prior.Length;
        Span<double> posterior = k <= 64 ? stackalloc double[k] : new double[k];
        double correct = 0, identifies = 0;
        for (var j = 0; j < k; j++)
        {
            var m = PosteriorUpdate.Bayes(prior, channel, j, posterior);
            if (m <= 0)
            {
                continue;
            }

            var top = Max(posterior);
            if (top >= confidence - 1e-12)
            {
                correct += m * top;
                identifies += m;
            }
        }

        return (correct, identifies);
    }

    /// <summary>Largest value (0 for an empty span).</summary>
    public static double Max(ReadOnlySpan<double> values)
    {
        var max = 0.0;
        foreach (var v in values)
        {
            max = Math.Max(max, v);
        }

        return max;
    }

    /// <summary>
    /// The plain-words explanation of a value with a positive escalation part, e.g. "cheap spectrum first:
    /// if it reports Ia (45 % likely), an R=4000 spectrum then identifies the subtype with
    /// probability 0.71 (0.69 expected correct)"; null when escalation adds nothing at the two decimals shown (E &lt; 0.005).
    /// </summary>
    /// <param name="value">The value.</param>
    /// <param name="subtypes">Subtype labels in the channel's order.</param>
    /// <param name="followUpResolvingPower">R of the follow-up unit.</param>
    public static string? Explain(SequentialValue value, IReadOnlyList<string> subtypes, double followUpResolvingPower)
    {
        ArgumentNullException.ThrowIfNull(subtypes);
        // "+ 0.00 more from the follow-up" would advertise a cheap spectrum first for nothing.
        if (value.Escalation < 0.005 || value.LikelyUnsettledAnswer < 0)
        {
            return null;
        }

        var inv = CultureInfo.InvariantCulture;
        return string.Create(inv,
            $"cheap spectrum first: if it reports {subtypes[value.LikelyUnsettledAnswer]} ({value.LikelyUnsettledAnswerProbability:P0} likely), ")
            + string.Create(inv,
            $"an R={followUpResolvingPower:F0} spectrum then identifies the subtype with probability {value.FollowUpIdentifies:F2} ({value.FollowUpCorrect:F2} expected correct); ")
            + string.Create(inv, $"{value.Direct:F2} identified now + {value.Escalation:F2} more from the follow-up than without this spectrum");
    }
}
