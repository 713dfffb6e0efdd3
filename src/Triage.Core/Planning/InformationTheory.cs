// Mutual information between the true subtype S and the classifier's answer J:
//   I(S;J) = Σₛ Σⱼ p(s) C(j|s) log₂[ C(j|s) / m(j) ],   m(j) = Σₛ' p(s') C(j|s'),
// with C the row-normalised confusion matrix (a channel in the sense of [1]). Identities
// used by the tests: 0 ≤ I ≤ H(S); I = 0 when the prior is a point mass or the channel's rows
// are identical; I = H(S) for a perfect (identity) channel [1, ch. 2.4 and 2.6].
//
// References
// [1] T. M. Cover, J. A. Thomas, Elements of Information Theory, 2nd ed., Wiley 2006,
//     ch. 2 (entropy, eq. 2.1; mutual information, eq. 2.28) and ch. 7 (channels).
namespace Triage.Core.Planning;

/// <summary>Entropy and mutual information in bits.</summary>
public static class InformationTheory
{
    /// <summary>Shannon entropy H(p) = −Σ p log₂ p in bits of a probability vector.</summary>
    /// <param name="probabilities">Non-negative values; they are used as given (normalise first).</param>
    /// <remarks>Terms with p = 0 contribute 0 (the limit p log p → 0).</remarks>
    public static double EntropyBits(ReadOnlySpan<double> probabilities)
    {
        var h = 0.0;
        foreach (var p in probabilities)
        {
            if (p > 0)
            {
                h -= p * Math.Log2(p);
            }
        }

        return h;
    }

    /// <summary>
    /// Mutual information I(S;J) in bits between an input with distribution
    /// <paramref name="prior"/> and the output of the row-stochastic channel
    /// <paramref name="channel"/> (row s = distribution of answers given true class s).
    /// </summary>
    /// <param name="prior">p(s), length K, non-negative, summing to 1.</param>
    /// <param name="channel">C(j|s) stored row-major, length K·K, each row summing to 1.</param>
    /// <returns>A value in [0, H(prior)], clamped at 0 against rounding.</returns>
    /// <exception cref="ArgumentException">The channel is not K × K.</exception>
    public static double MutualInformationBits(ReadOnlySpan<double> prior, ReadOnlySpan<double> channel)
    {
        var k = prior.Length;
        if (channel.Length != k * k)
        {
            throw new ArgumentException($"The channel must hold {k}×{k} values, not {channel.Length}.", nameof(channel));
        }

        Span<double> marginal = k <= 64 ? stackalloc double[k] : new double[k];
        marginal.Clear();
        for (var s = 0; s < k; s++)
        {
            var ps = prior[s];
            if (ps <= 0)
            {
                continue;
            }

            var row = channel.Slice(s * k, k);
            for (var j = 0; j < k; j++)
            {
                marginal[j] += ps * row[j];
            }
        }

        var info = 0.0;
        for (var s = 0; s < k; s++)
        {
            var ps = prior[s];
            if (ps <= 0)
            {
                continue;
            }

            var row = channel.Slice(s * k, k);
            for (var j = 0; j < k; j++)
            {
                var c = row[j];
                if (c > 0 && marginal[j] > 0)
                {
                    info += ps * c * Math.Log2(c / marginal[j]);
                }
            }
        }

        return Math.Max(0.0, info);
    }
}
