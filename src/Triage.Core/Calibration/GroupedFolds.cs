// Stratified k-fold assignment grouped by object.
//
// All spectra of one object share a fold, so no object is on both sides of any split.
// Stratification: within each subtype the objects (shuffled with a seed, then ordered by
// decreasing number of spectra) go one by one to the fold holding the fewest spectra of that
// subtype so far (ties: fewest objects of the subtype, then fewest spectra overall). A subtype
// with at least k objects therefore appears in every fold, and fold sizes differ by at most one
// object's spectra per subtype.
// References:
//  1. Kohavi, R., "A study of cross-validation and bootstrap for accuracy estimation and model selection", IJCAI (1995) (stratified k-fold).
//  2. Roberts, D. R. et al., "Cross-validation strategies for data with temporal, spatial, hierarchical, or phylogenetic structure", Ecography 40, 913 (2017) (grouped folds).
namespace Triage.Core.Calibration;

/// <summary>Grouped, stratified fold assignment.</summary>
public static class GroupedFolds
{
    /// <summary>
    /// Assigns each item (spectrum) to one of <paramref name="folds"/> folds, grouped by
    /// <c>ObjectId</c> and stratified by <c>Label</c>.
    /// </summary>
    /// <returns>The fold index (0 … k−1) of each item.</returns>
    /// <exception cref="ArgumentException">k &lt; 2, or an object carries two labels.</exception>
    public static int[] Assign(IReadOnlyList<(string ObjectId, string Label)> items, int folds, int seed)
    {
        if (folds < 2) throw new ArgumentException("At least two folds are needed.", nameof(folds));
        var objects = new Dictionary<string, (string Label, List<int> Items)>(StringComparer.Ordinal);
        for (int i = 0; i < items.Count; i++)
        {
            var (id, label) = items[i];
            if (objects.TryGetValue(id, out var o))
            {
                if (o.Label != label) throw new ArgumentException($"Object '{id}' carries two labels ('{o.Label}', '{label}').", nameof(items));
                o.Items.Add(i);
            }
            else objects[id] = (label, [i]);
        }
        var rng = new Random(seed);
        var foldOf = new int[items.Count];
        var total = new int[folds];
        foreach (var group in objects.GroupBy(kv => kv.Value.Label).OrderBy(g => g.Key, StringComparer.Ordinal))
        {
            var spectra = new int[folds];
            var count = new int[folds];
            var ordered = group.OrderBy(kv => kv.Key, StringComparer.Ordinal).ToArray();
            rng.Shuffle(ordered);
            foreach (var (_, (_, members)) in ordered.OrderByDescending(kv => kv.Value.Items.Count))
            {
                int best = 0;
                for (int f = 1; f < folds; f++)
                    if ((spectra[f], count[f], total[f]).CompareTo((spectra[best], count[best], total[best])) < 0) best = f;
                spectra[best] += members.Count;
                count[best]++;
                total[best] += members.Count;
                foreach (int i in members) foldOf[i] = best;
            }
        }
        return foldOf;
    }
}
