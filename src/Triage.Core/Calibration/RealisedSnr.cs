// Realised S/N of calibration cells.
//
// A cell's achieved S/N is the median over its spectra of the realised S/N per element at the
// reference wavelength (infinite for noise-free spectra at the native level; an infinite median is
// reported as null). A numeric level is unreachable for a cell when its median realised S/N is below
// the label (spectra that reach a level realise it exactly, so: when half or more could not reach it);
// the cell then carries Reachable = false and the median reachable S/N, and is not a measurement at its label.
// References:
//  1. Stoehr, F. et al., ASP Conf. Ser. 394, 505 (2008) (the DER_SNR noise behind the reachable S/N).
using Triage.Core.Spectra;

namespace Triage.Core.Calibration;

/// <summary>Per-spectrum S/N after noising, as the scoring step needs it.</summary>
/// <param name="Realised">Realised S/N per element (+∞ when no noise at all).</param>
/// <param name="Reachable">Highest reachable S/N per element at this R (+∞ for a noise-free input).</param>
public readonly record struct SpectrumSnr(double Realised, double Reachable);

/// <summary>Annotates cells and summaries with their realised S/N and reachability.</summary>
public static class RealisedSnr
{
    /// <summary>
    /// Returns <paramref name="score"/> with every cell's <see cref="CalibrationCell.AchievedSnr"/>, reachability and
    /// the summary's achieved S/N set from <paramref name="perSpectrum"/> (indexed like <paramref name="predictions"/>).
    /// </summary>
    public static GridPointScore Annotate(GridPointScore score, IReadOnlyList<Prediction> predictions, IReadOnlyList<SpectrumSnr> perSpectrum,
        IReadOnlyList<PhaseBin> phaseBins, double? snrLabel)
    {
        var cells = score.Cells.Select(c =>
        {
            var bin = phaseBins.FirstOrDefault(b => b.Name == c.PhaseBin);
            var members = Enumerable.Range(0, predictions.Count)
                .Where(i => predictions[i].TrueSubtype == c.Subtype && (bin is null || (predictions[i].PhaseDays >= bin.FromDays && predictions[i].PhaseDays < bin.ToDays)))
                .ToArray();
            double achieved = Median(members.Select(i => perSpectrum[i].Realised));
            double reachable = Median(members.Select(i => perSpectrum[i].Reachable));
            // Spectra that reached the label realise it exactly, the others realise less: the median reaches the
            // label exactly when most spectra did.
            bool ok = snrLabel is not double label || achieved >= label * (1 - 1e-6);
            return c with
            {
                AchievedSnr = double.IsFinite(achieved) ? achieved : null,
                Reachable = ok,
                ReachableSnr = ok ? null : reachable,
            };
        }).ToArray();
        double all = Median(perSpectrum.Select(s => s.Realised));
        return score with { Cells = cells, Summary = score.Summary with { AchievedSnr = double.IsFinite(all) ? all : null } };
    }

    /// <summary>Median (mean of the middle two for an even count); NaN when empty.</summary>
    public static double Median(IEnumerable<double> values)
    {
        var v = values.Order().ToArray();
        if (v.Length == 0) return double.NaN;
        if (v.Length % 2 == 1) return v[v.Length / 2];
        double a = v[v.Length / 2 - 1], b = v[v.Length / 2];
        return double.IsPositiveInfinity(b) ? b : 0.5 * (a + b);
    }
}
