// Wilson score interval for a binomial proportion.
//
// For k successes in n trials, p̂ = k/n and z = Φ⁻¹(1 − α/2):
//   centre = (p̂ + z²/(2n)) / (1 + z²/n)
//   half   = z / (1 + z²/n) · √( p̂(1 − p̂)/n + z²/(4n²) )
// The interval [centre − half, centre + half] stays inside [0, 1] and behaves at k = 0 or n.
// References:
//  1. Wilson, E. B., "Probable inference, the law of succession, and statistical inference", JASA 22, 209 (1927).
//  2. Brown, L. D., Cai, T. T. & DasGupta, A., "Interval estimation for a binomial proportion", Stat. Sci. 16, 101 (2001), eq. 4.
namespace Triage.Core.Calibration;

/// <summary>A proportion with its confidence interval.</summary>
public readonly record struct ProportionInterval(double Estimate, double Low, double High);

/// <summary>Wilson score intervals.</summary>
public static class WilsonInterval
{
    /// <summary>Φ⁻¹(0.975), the two-sided 95 % normal quantile.</summary>
    public const double Z95 = 1.959963984540054;

    /// <summary>Wilson interval of <paramref name="successes"/> out of <paramref name="trials"/>.</summary>
    /// <returns>For n = 0, the uninformative (NaN, 0, 1).</returns>
    /// <exception cref="ArgumentOutOfRangeException">k &lt; 0, n &lt; 0 or k &gt; n.</exception>
    public static ProportionInterval Compute(int successes, int trials, double z = Z95)
    {
        if (trials < 0 || successes < 0 || successes > trials)
            throw new ArgumentOutOfRangeException(nameof(successes), $"Need 0 ≤ k ≤ n (k = {successes}, n = {trials}).");
        if (trials == 0) return new ProportionInterval(double.NaN, 0, 1);
        double p = successes / (double)trials;
        var (low, high) = Bounds(p, trials, z);
        // At k = 0 or k = n the bound is exactly 0 or 1; rounding must not leave p̂ outside its interval.
        return new ProportionInterval(p, successes == 0 ? 0 : low, successes == trials ? 1 : high);
    }

    /// <summary>
    /// Wilson bounds of a proportion <paramref name="p"/> observed on <paramref name="n"/> trials, where n may be an
    /// effective (non-integer) sample size and <paramref name="z"/> any two-sided quantile (e.g. Student's t).
    /// </summary>
    /// <param name="p">Observed proportion, 0…1.</param>
    /// <param name="n">Sample size, &gt; 0.</param>
    /// <param name="z">Quantile, &gt; 0.</param>
    /// <returns>Bounds clamped to [0, 1], and never excluding <paramref name="p"/>.</returns>
    public static (double Low, double High) Bounds(double p, double n, double z)
    {
        double z2 = z * z;
        double den = 1 + z2 / n;
        double centre = (p + z2 / (2 * n)) / den;
        double half = z / den * Math.Sqrt(p * (1 - p) / n + z2 / (4 * n * n));
        return (Math.Clamp(Math.Min(p, centre - half), 0, 1), Math.Clamp(Math.Max(p, centre + half), 0, 1));
    }
}
