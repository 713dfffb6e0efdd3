// The equal-exposure view of a calibration: what resolution buys at a fixed number of photons.
//
// A calibration cell fixes the S/N per resolution element, so moving along R at one S/N level mixes two
// effects: finer sampling (resolution) and more photons (a higher-R element is narrower, so the same S/N
// per element needs more photons per Å). At a fixed exposure (photons per Å) in the background- or
// read-noise-limited regime, an element of width Δλ = λ/R collects photons ∝ Δλ while its noise grows as
// √Δλ, so S/N per element ∝ √Δλ ∝ √(1/R) ([1]; common practice):
//   S(R) = S_ref · √(R_ref / R).
// Each numeric S/N level S_ref of the calibration at the grid's highest R (R_ref) defines one
// equal-exposure curve. Accuracy, balanced accuracy and broad-class accuracy along it are interpolated
// linearly in ln S/N between the measured levels at each grid R (the planner's interpolation); where
// S(R) lies outside the measured levels the point is reported without a value ("not measured"), never
// extrapolated.
// References:
//  1. Howell, S. B., Handbook of CCD Astronomy, 2nd ed., CUP (2006), ch. 4 (the CCD equation: with background
//     and read noise per pixel, S/N over n pixels grows as √n at a fixed signal per pixel; chapter from memory).
namespace Triage.Core.Calibration;

/// <summary>One point of an equal-exposure curve.</summary>
/// <param name="ReferenceResolution">R_ref, where the curve has S/N <paramref name="ReferenceSnr"/>.</param>
/// <param name="ReferenceSnr">S_ref, S/N per element at R_ref.</param>
/// <param name="Resolution">Grid R.</param>
/// <param name="Snr">S(R) = S_ref·√(R_ref/R): the S/N per element the same photons per Å give at R.</param>
/// <param name="Accuracy">Fraction of spectra identified correctly at (R, S(R)); null when S(R) lies outside the measured levels.</param>
/// <param name="BalancedAccuracy">Mean per-subtype recall there; null likewise.</param>
/// <param name="BroadAccuracy">Broad-class accuracy there; null likewise.</param>
public sealed record EqualExposurePoint(
    double ReferenceResolution,
    double ReferenceSnr,
    double Resolution,
    double Snr,
    double? Accuracy,
    double? BalancedAccuracy,
    double? BroadAccuracy);

/// <summary>Builds the equal-exposure view from a calibration's summaries.</summary>
public static class EqualExposureView
{
    /// <summary>
    /// One curve per numeric S/N level, referenced at the highest grid R, over every grid R.
    /// </summary>
    /// <param name="summaries">Per (R, S/N) summaries (native ones are ignored).</param>
    public static IReadOnlyList<EqualExposurePoint> Build(IReadOnlyList<AccuracySummary> summaries)
    {
        ArgumentNullException.ThrowIfNull(summaries);
        var numeric = summaries.Where(s => s.Snr is > 0).ToArray();
        if (numeric.Length == 0) return [];
        var resolutions = numeric.Select(s => s.Resolution).Distinct().Order().ToArray();
        var levels = numeric.Select(s => s.Snr!.Value).Distinct().Order().ToArray();
        double rRef = resolutions[^1];
        var points = new List<EqualExposurePoint>();
        foreach (double sRef in levels)
        {
            foreach (double r in resolutions)
            {
                double snr = sRef * Math.Sqrt(rRef / r);
                var atR = numeric.Where(s => s.Resolution == r).OrderBy(s => s.Snr).ToArray();
                var value = Interpolate(atR, snr);
                points.Add(new EqualExposurePoint(rRef, sRef, r, snr, value?.Accuracy, value?.Balanced, value?.Broad));
            }
        }
        return points;
    }

    private static (double Accuracy, double Balanced, double Broad)? Interpolate(AccuracySummary[] atR, double snr)
    {
        const double tolerance = 1e-9;
        for (int i = 0; i < atR.Length; i++)
        {
            double si = atR[i].Snr!.Value;
            if (Math.Abs(snr - si) <= tolerance * si) return (atR[i].Accuracy, atR[i].BalancedAccuracy, atR[i].BroadAccuracy);
            if (i + 1 < atR.Length && snr > si && snr < atR[i + 1].Snr!.Value)
            {
                double t = Math.Log(snr / si) / Math.Log(atR[i + 1].Snr!.Value / si);
                double Lerp(Func<AccuracySummary, double> f) => (1 - t) * f(atR[i]) + t * f(atR[i + 1]);
                return (Lerp(s => s.Accuracy), Lerp(s => s.BalancedAccuracy), Lerp(s => s.BroadAccuracy));
            }
        }
        return null;
    }
}
