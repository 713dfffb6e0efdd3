// Scoring of out-of-fold predictions at one grid point (R, S/N).
//
// Every spectrum has exactly one prediction, made by the model of the fold that held it out.
// Per subtype s and phase bin b: recall = (correct of s in b) / (spectra of s in b) with an
// object-level 95 % interval (spectra of one object are correlated; ClusteredProportion),
// precision = (correct of s in b) / (predicted s in b); accuracy is the fraction of all spectra
// predicted correctly, broad accuracy the same after mapping both labels to their broad class
// (both with object-level intervals), and balanced accuracy the mean of the per-subtype recalls.
// References:
//  1. Wilson, E. B., JASA 22, 209 (1927); Korn, E. L. & Graubard, B. I., Survey Methodology 24, 193 (1998)
//     (intervals on the effective number of spectra, see ClusteredProportion).
//  2. Sokolova, M. & Lapalme, G., "A systematic analysis of performance measures for classification tasks",
//     Inf. Proc. Manag. 45, 427 (2009), Table 3 (multi-class recall, precision, confusion).
using Triage.Core.Spectra;

namespace Triage.Core.Calibration;

/// <summary>One out-of-fold prediction.</summary>
public readonly record struct Prediction(string ObjectId, string TrueSubtype, string PredictedSubtype, double PhaseDays);

/// <summary>Cells, confusion matrices and summary of one grid point.</summary>
public sealed record GridPointScore(
    IReadOnlyList<CalibrationCell> Cells,
    IReadOnlyList<ConfusionMatrix> Confusions,
    AccuracySummary Summary);

/// <summary>Turns predictions into calibration cells.</summary>
public static class CalibrationScoring
{
    /// <summary>Scores the predictions of one (R, S/N) grid point over each phase bin and over all phases.</summary>
    public static GridPointScore Score(IReadOnlyList<Prediction> predictions, IReadOnlyList<string> subtypes, Taxonomy taxonomy,
        IReadOnlyList<PhaseBin> phaseBins, double resolution, double? snr)
    {
        var cells = new List<CalibrationCell>();
        var confusions = new List<ConfusionMatrix>();
        var bins = phaseBins.Select(b => (b.Name, Filter: (Func<double, bool>)(p => p >= b.FromDays && p < b.ToDays)))
            .Append((CalibrationSettings.AllPhases, _ => true));
        var index = subtypes.Select((s, i) => (s, i)).ToDictionary(p => p.s, p => p.i, StringComparer.Ordinal);
        foreach (var (name, inBin) in bins)
        {
            var subset = predictions.Where(p => inBin(p.PhaseDays)).ToArray();
            var counts = new int[subtypes.Count][];
            for (int i = 0; i < counts.Length; i++) counts[i] = new int[subtypes.Count];
            foreach (var p in subset) counts[index[p.TrueSubtype]][index[p.PredictedSubtype]]++;
            confusions.Add(new ConfusionMatrix(resolution, snr, name, subtypes, counts));
            for (int i = 0; i < subtypes.Count; i++)
            {
                int support = counts[i].Sum();
                if (support == 0) continue;
                int correct = counts[i][i];
                int predicted = counts.Sum(row => row[i]);
                var w = ClusteredProportion.Compute(Tallies(subset.Where(p => p.TrueSubtype == subtypes[i]), p => p.TrueSubtype == p.PredictedSubtype));
                cells.Add(new CalibrationCell(subtypes[i], resolution, snr, name, w.Estimate, w.Low, w.High,
                    predicted == 0 ? 0 : correct / (double)predicted, support, w.Objects)
                { EffectiveSpectra = w.EffectiveSpectra, DesignEffect = w.DesignEffect });
            }
        }
        int n = predictions.Count;
        var acc = ClusteredProportion.Compute(Tallies(predictions, p => p.TrueSubtype == p.PredictedSubtype));
        var broad = ClusteredProportion.Compute(Tallies(predictions, p => taxonomy.BroadClassOf(p.TrueSubtype) == taxonomy.BroadClassOf(p.PredictedSubtype)));
        double balanced = cells.Where(c => c.PhaseBin == CalibrationSettings.AllPhases).Select(c => c.Recall).DefaultIfEmpty(0).Average();
        return new GridPointScore(cells, confusions,
            new AccuracySummary(resolution, snr, acc.Estimate, acc.Low, acc.High, broad.Estimate, broad.Low, broad.High, balanced, n));
    }

    /// <summary>
    /// The paired per-object outcomes of every subtype at one S/N across the R grid (input of the minimum-R table).
    /// </summary>
    /// <param name="spectra">Object id and true subtype of each library spectrum.</param>
    /// <param name="resolutions">Grid R, ascending.</param>
    /// <param name="snr">The S/N level (null: native).</param>
    /// <param name="correct"><c>correct[i][j]</c>: spectrum j was classified correctly at <c>resolutions[i]</c>.</param>
    /// <param name="subtypes">Subtypes, in the order of the output.</param>
    public static IReadOnlyList<PairedOutcomes> Paired(IReadOnlyList<(string ObjectId, string Subtype)> spectra, IReadOnlyList<double> resolutions,
        double? snr, IReadOnlyList<IReadOnlyList<bool>> correct, IReadOnlyList<string> subtypes)
    {
        var result = new List<PairedOutcomes>();
        foreach (var subtype in subtypes)
        {
            var objects = new Dictionary<string, int>(StringComparer.Ordinal);
            var sizes = new List<int>();
            var hits = new List<int[]>();
            for (int j = 0; j < spectra.Count; j++)
            {
                if (spectra[j].Subtype != subtype) continue;
                if (!objects.TryGetValue(spectra[j].ObjectId, out int o))
                {
                    o = sizes.Count;
                    objects[spectra[j].ObjectId] = o;
                    sizes.Add(0);
                    hits.Add(new int[resolutions.Count]);
                }
                sizes[o]++;
                for (int i = 0; i < resolutions.Count; i++) if (correct[i][j]) hits[o][i]++;
            }
            if (sizes.Count > 0) result.Add(new PairedOutcomes(subtype, snr, resolutions, sizes, hits));
        }
        return result;
    }

    /// <summary>Spectra and successes per object (objects in first-seen order).</summary>
    public static IReadOnlyList<ObjectTally> Tallies(IEnumerable<Prediction> predictions, Func<Prediction, bool> success)
    {
        var index = new Dictionary<string, int>(StringComparer.Ordinal);
        var tallies = new List<ObjectTally>();
        foreach (var p in predictions)
        {
            if (!index.TryGetValue(p.ObjectId, out int i))
            {
                i = tallies.Count;
                index[p.ObjectId] = i;
                tallies.Add(default);
            }
            var t = tallies[i];
            tallies[i] = new ObjectTally(t.Spectra + 1, t.Correct + (success(p) ? 1 : 0));
        }
        return tallies;
    }

    /// <summary>Uniform-guess and majority-class baselines of a library's labels.</summary>
    public static CalibrationBaselines Baselines(IReadOnlyList<string> labels, IReadOnlyList<string> subtypes, Taxonomy taxonomy)
    {
        var bySubtype = labels.GroupBy(l => l).OrderByDescending(g => g.Count()).ThenBy(g => g.Key, StringComparer.Ordinal).First();
        var byBroad = labels.GroupBy(taxonomy.BroadClassOf).OrderByDescending(g => g.Count()).ThenBy(g => g.Key, StringComparer.Ordinal).First();
        int broadClasses = subtypes.Select(taxonomy.BroadClassOf).Distinct().Count();
        return new CalibrationBaselines(1.0 / subtypes.Count, bySubtype.Count() / (double)labels.Count, bySubtype.Key,
            1.0 / broadClasses, byBroad.Count() / (double)labels.Count, byBroad.Key);
    }
}
