// The minimum-R table, from paired object-level outcomes.
//
// For subtype s at a fixed S/N, every spectrum of every object is classified at every grid R
// (R₁ < … < R_m), so recall differences between two R are *paired* on the same objects. With
// object g holding m_g spectra and k_g(R) correct answers, r(R) = Σ_g k_g(R) / Σ_g m_g.
// Best of many: the maximum of m noisy points is biased upward (on pure noise with 12 points by
// about +0.09 at 75 spectra; the bootstrap bias estimate [1, §10.3] removes only about half of it when
// many points tie, measured in MinimumResolutionTests). So "best" is a held-out (cross-fitted)
// estimate [3, §7.10.2]: split the objects at random into halves A and B, choose R̂_A = argmax r_A and
// read its recall on B, and vice versa; best = (k_B(R̂_A) + k_A(R̂_B)) / (n_A + n_B), averaged over 100
// seeded splits. The recall of a chosen R measured on objects that did not choose it is unbiased for
// that R's true recall (slightly pessimistic when the halves pick a worse R than the full data would).
// Gaps (paired): object-level bootstrap [1, ch. 6; 2], B draws of G objects with replacement (seeded),
// the same objects at every R; d*_{b,i} = max_R r*_b(R) − r*_b(R_i). Point gap ĝ_i = best − r̂(R_i);
// its lower 95 % bound L_i = q_0.025(d*_i) − mean(d*_i) + ĝ_i (the bootstrap spread around the
// corrected point).
//   R_min: scan down from the top of the grid while no point is significantly beyond the tolerance
//   (L_i ≤ tol); the minimum is the lowest R_i in that run with ĝ_i ≤ tol. A single jagged point that
//   dips only by sampling noise does not push R_min up, while a drop shared by the objects does.
//   R_chance: the smallest R_i such that the object-level lower bound of r(R_j) (ClusteredProportion)
//   exceeds the uniform-guess recall 1/K for all j ≥ i.
// Both thresholds are bracketed by neighbouring grid values and carry the recall's object-level interval.
// References:
//  1. Efron, B. & Tibshirani, R. J., An Introduction to the Bootstrap, Chapman & Hall (1993), ch. 6 (standard
//     errors), §10.3 (bootstrap estimate of bias).
//  2. Davison, A. C. & Hinkley, D. V., Bootstrap Methods and their Application, CUP (1997), §3.8 (resampling
//     clusters: the outer stage only).
//  3. Hastie, T., Tibshirani, R. & Friedman, J., The Elements of Statistical Learning, 2nd ed., Springer (2009),
//     §7.10.2 (selection must not see the data that measures it).
namespace Triage.Core.Calibration;

/// <summary>
/// Per-object outcomes of one subtype at one S/N across the whole R grid: the paired data of the minimum-R table.
/// </summary>
/// <param name="Resolutions">Grid R, ascending.</param>
/// <param name="SpectraPerObject">m_g, spectra of each object (the same at every R).</param>
/// <param name="CorrectPerObject">k_g(R): <c>CorrectPerObject[g][i]</c> spectra of object g classified correctly at <c>Resolutions[i]</c>.</param>
public sealed record PairedOutcomes(
    string Subtype,
    double? Snr,
    IReadOnlyList<double> Resolutions,
    IReadOnlyList<int> SpectraPerObject,
    IReadOnlyList<IReadOnlyList<int>> CorrectPerObject);

/// <summary>Builds the minimum-R table.</summary>
public static class MinimumResolutionTable
{
    /// <summary>Bootstrap replicates used by <see cref="Build"/>. 2000 keeps the 2.5 % quantile's Monte-Carlo error near 0.005.</summary>
    public const int DefaultReplicates = 2000;

    /// <summary>One row per (subtype, S/N) curve.</summary>
    /// <param name="curves">Paired outcomes per subtype and S/N.</param>
    /// <param name="subtypeCount">K, for the chance recall 1/K.</param>
    /// <param name="tolerance">Recall tolerance (fraction, e.g. 0.05).</param>
    /// <param name="seed">Seed of the bootstrap.</param>
    /// <param name="replicates">Bootstrap replicates B, ≥ 100.</param>
    /// <exception cref="ArgumentException">A curve has no objects, no grid, or ragged outcome rows.</exception>
    public static IReadOnlyList<MinimumResolutionRow> Build(IReadOnlyList<PairedOutcomes> curves, int subtypeCount, double tolerance,
        int seed, int replicates = DefaultReplicates)
    {
        ArgumentNullException.ThrowIfNull(curves);
        ArgumentOutOfRangeException.ThrowIfLessThan(replicates, 100);
        double chance = 1.0 / subtypeCount;
        var rows = new List<MinimumResolutionRow>(curves.Count);
        for (int c = 0; c < curves.Count; c++)
            rows.Add(BuildRow(curves[c], chance, tolerance, new Random(unchecked(seed * 7919 + c)), replicates));
        return rows;
    }

    private static MinimumResolutionRow BuildRow(PairedOutcomes curve, double chance, double tolerance, Random random, int replicates)
    {
        int m = curve.Resolutions.Count, g = curve.SpectraPerObject.Count;
        if (m == 0 || g == 0) throw new ArgumentException($"The curve of {curve.Subtype} has no grid or no objects.", nameof(curve));
        if (curve.CorrectPerObject.Count != g || curve.CorrectPerObject.Any(row => row.Count != m))
            throw new ArgumentException($"The outcomes of {curve.Subtype} must have one row per object and one value per R.", nameof(curve));

        var observed = Recalls(curve, Enumerable.Range(0, g));
        int iBest = ArgMax(observed);

        // Paired bootstrap: gap[i][b] = max_R r*_b − r*_b(R_i).
        var gaps = new double[m][];
        for (int i = 0; i < m; i++) gaps[i] = new double[replicates];
        var draw = new int[g];
        for (int b = 0; b < replicates; b++)
        {
            for (int j = 0; j < g; j++) draw[j] = random.Next(g);
            var r = Recalls(curve, draw);
            double max = r.Max();
            for (int i = 0; i < m; i++) gaps[i][b] = max - r[i];
        }
        double best = g >= 2 ? HeldOutBest(curve, random) : observed[iBest];

        int iMin = m - 1;
        for (int i = m - 1; i >= 0; i--)
        {
            Array.Sort(gaps[i]);
            double gap = best - observed[i];
            double gapLow = Quantile(gaps[i], 0.025) - gaps[i].Average() + gap;
            if (gapLow > tolerance) break;
            if (gap <= tolerance) iMin = i;
        }

        var intervals = Enumerable.Range(0, m).Select(i => ClusteredProportion.Compute(
            Enumerable.Range(0, g).Select(o => new ObjectTally(curve.SpectraPerObject[o], curve.CorrectPerObject[o][i])))).ToArray();
        int iChance = m;
        while (iChance > 0 && intervals[iChance - 1].Low > chance) iChance--;
        var min = intervals[iMin];
        double? distinguishable = iChance < m ? curve.Resolutions[iChance] : null;
        ClusteredInterval? below = iChance > 0 ? intervals[iChance - 1] : null;
        return new MinimumResolutionRow(curve.Subtype, curve.Snr, tolerance, best, curve.Resolutions[iBest],
            curve.Resolutions[iMin], iMin > 0 ? curve.Resolutions[iMin - 1] : null, min.Estimate, min.Low, min.High,
            chance, distinguishable, iChance > 0 ? curve.Resolutions[iChance - 1] : null, below?.Estimate, below?.High)
        { BestRecallObserved = observed[iBest] };
    }

    /// <summary>Splits averaged by the held-out estimate of the best recall.</summary>
    public const int HeldOutSplits = 100;

    // Cross-fitted recall at the R each half of the objects chooses, measured on the other half.
    private static double HeldOutBest(PairedOutcomes curve, Random random)
    {
        int g = curve.SpectraPerObject.Count, m = curve.Resolutions.Count;
        var order = Enumerable.Range(0, g).ToArray();
        double sum = 0;
        for (int split = 0; split < HeldOutSplits; split++)
        {
            random.Shuffle(order);
            var a = order[..(g / 2)];
            var b = order[(g / 2)..];
            int chosenByA = ArgMax(Recalls(curve, a)), chosenByB = ArgMax(Recalls(curve, b));
            double correct = a.Sum(o => curve.CorrectPerObject[o][chosenByB]) + b.Sum(o => curve.CorrectPerObject[o][chosenByA]);
            sum += correct / curve.SpectraPerObject.Sum();
        }
        return sum / HeldOutSplits;
    }

    private static int ArgMax(double[] values)
    {
        int best = 0;
        for (int i = 1; i < values.Length; i++) if (values[i] > values[best]) best = i;
        return best;
    }

    private static double[] Recalls(PairedOutcomes curve, IEnumerable<int> objects)
    {
        int m = curve.Resolutions.Count;
        var correct = new double[m];
        double spectra = 0;
        foreach (int o in objects)
        {
            spectra += curve.SpectraPerObject[o];
            var row = curve.CorrectPerObject[o];
            for (int i = 0; i < m; i++) correct[i] += row[i];
        }
        for (int i = 0; i < m; i++) correct[i] = spectra > 0 ? correct[i] / spectra : 0;
        return correct;
    }

    // Linear interpolation between order statistics (type 7 of Hyndman & Fan 1996) of a sorted sample.
    private static double Quantile(double[] sorted, double q)
    {
        double h = (sorted.Length - 1) * q;
        int lo = (int)Math.Floor(h);
        int hi = Math.Min(lo + 1, sorted.Length - 1);
        return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
    }

    /// <summary>CSV form of the table (header row, invariant culture, empty field for null).</summary>
    public static string ToCsv(IReadOnlyList<MinimumResolutionRow> rows)
    {
        var ci = System.Globalization.CultureInfo.InvariantCulture;
        string F(double? v) => v is double d ? d.ToString("0.####", ci) : "";
        var sb = new System.Text.StringBuilder();
        sb.Append("subtype,snr,tolerance,best_recall,best_resolution,minimum_resolution,minimum_resolution_bracket_low,recall_at_minimum,recall_at_minimum_low,recall_at_minimum_high,chance_recall,distinguishable_from_resolution,chance_below_resolution,recall_at_chance_below,recall_at_chance_below_high,best_recall_observed\n");
        foreach (var r in rows)
            sb.Append(string.Join(",", r.Subtype, r.Snr is double s ? s.ToString(ci) : "native", F(r.Tolerance), F(r.BestRecall), F(r.BestResolution),
                F(r.MinimumResolution), F(r.MinimumResolutionBracketLow), F(r.RecallAtMinimum), F(r.RecallAtMinimumLow), F(r.RecallAtMinimumHigh),
                F(r.ChanceRecall), F(r.DistinguishableFromResolution), F(r.ChanceBelowResolution), F(r.RecallAtChanceBelow), F(r.RecallAtChanceBelowHigh),
                F(r.BestRecallObserved))).Append('\n');
        return sb.ToString();
    }
}
