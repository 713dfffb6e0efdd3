// The minimum-R table.
//
// For subtype s at a fixed S/N, with recall r(R) on an ascending grid R₁ < … < R_m (phases pooled):
//   best = max r(R);  R_min = the smallest R_i such that r(R_i) ≥ best − tolerance and, for every j > i,
//   r(R_j) is not significantly below best − tolerance (the Wilson upper bound of r(R_j) reaches it).
//   A single grid point that dips below the tolerance only by sampling noise (rare classes have few
//   objects, so their curves are jagged) therefore does not push R_min to the top of the grid, while a
//   real drop still does.
//   R_chance: the smallest R_i such that the Wilson lower bound of r(R_j) exceeds the uniform-guess
//   recall 1/K for all j ≥ i; below it (R_{i−1}) the recall is not distinguishable from chance.
// Both thresholds are bracketed by neighbouring grid values, and carry the recall's interval.
// References:
//  1. Wilson, E. B., JASA 22, 209 (1927) (the interval used for "distinguishable from chance").
namespace Triage.Core.Calibration;

/// <summary>Builds the minimum-R table from calibration cells.</summary>
public static class MinimumResolutionTable
{
    /// <summary>One row per subtype and S/N level present among the pooled-phase cells.</summary>
    public static IReadOnlyList<MinimumResolutionRow> Build(IReadOnlyList<CalibrationCell> cells, int subtypeCount, double tolerance)
    {
        double chance = 1.0 / subtypeCount;
        var rows = new List<MinimumResolutionRow>();
        var pooled = cells.Where(c => c.PhaseBin == CalibrationSettings.AllPhases);
        foreach (var group in pooled.GroupBy(c => (c.Subtype, c.Snr)))
        {
            var curve = group.OrderBy(c => c.Resolution).ToArray();
            var best = curve.OrderByDescending(c => c.Recall).ThenBy(c => c.Resolution).First();
            double floor = best.Recall - tolerance;
            // Scan down from the top: the run of points consistent with the tolerance ends at the first
            // point whose whole interval lies below it; the minimum is the lowest point estimate within it.
            int iMin = curve.Length - 1;
            for (int i = curve.Length - 1; i >= 0 && curve[i].RecallHigh >= floor; i--)
                if (curve[i].Recall >= floor) iMin = i;
            int iChance = curve.Length;
            while (iChance > 0 && curve[iChance - 1].RecallLow > chance) iChance--;
            var min = curve[iMin];
            double? distinguishable = iChance < curve.Length ? curve[iChance].Resolution : null;
            var below = iChance > 0 ? curve[iChance - 1] : null;
            rows.Add(new MinimumResolutionRow(group.Key.Subtype, group.Key.Snr, tolerance, best.Recall, best.Resolution,
                min.Resolution, iMin > 0 ? curve[iMin - 1].Resolution : null, min.Recall, min.RecallLow, min.RecallHigh,
                chance, distinguishable, below?.Resolution, below?.Recall, below?.RecallHigh));
        }
        return rows;
    }

    /// <summary>CSV form of the table (header row, invariant culture, empty field for null).</summary>
    public static string ToCsv(IReadOnlyList<MinimumResolutionRow> rows)
    {
        var ci = System.Globalization.CultureInfo.InvariantCulture;
        string F(double? v) => v is double d ? d.ToString("0.####", ci) : "";
        var sb = new System.Text.StringBuilder();
        sb.Append("subtype,snr,tolerance,best_recall,best_resolution,minimum_resolution,minimum_resolution_bracket_low,recall_at_minimum,recall_at_minimum_low,recall_at_minimum_high,chance_recall,distinguishable_from_resolution,chance_below_resolution,recall_at_chance_below,recall_at_chance_below_high\n");
        foreach (var r in rows)
            sb.Append(string.Join(",", r.Subtype, r.Snr is double s ? s.ToString(ci) : "native", F(r.Tolerance), F(r.BestRecall), F(r.BestResolution),
                F(r.MinimumResolution), F(r.MinimumResolutionBracketLow), F(r.RecallAtMinimum), F(r.RecallAtMinimumLow), F(r.RecallAtMinimumHigh),
                F(r.ChanceRecall), F(r.DistinguishableFromResolution), F(r.ChanceBelowResolution), F(r.RecallAtChanceBelow), F(r.RecallAtChanceBelowHigh))).Append('\n');
        return sb.ToString();
    }
}
