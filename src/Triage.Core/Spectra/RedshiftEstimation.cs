// Redshift of a spectrum by cross-correlation with rest-frame templates (Tonry & Davis 1979).
//
// On a grid uniform in x = ln λ with step δ, a spectrum at redshift z is a rest-frame spectrum shifted by
// ln(1 + z)/δ pixels. Both the spectrum g (observed frame) and each template t (rest frame) are binned
// flux-conservingly onto the same grid, divided by a running-mean continuum (g/c − 1: the broad and narrow
// features, not the colour), tapered at the ends of their coverage by a cosine bell and scaled to unit rms.
// The normalised correlation c(k) = (1/N) Σₙ g(n) t(n − k) is evaluated for every lag k with 0 ≤ z ≤ z_max;
// the best template and lag give the peak, refined by a parabola through its neighbours, and
// z = exp(k δ) − 1. The peak's significance is r = h / (√2 σ_a), h the peak height and σ_a the rms of the
// antisymmetric part of c about the peak (eq. 24 of ref. 1); below a threshold the estimate is not trusted
// and the templates' median redshift (the prior) is returned instead, marked as such.
// The templates are means, per label, of spectra with known redshift (the training folds of a calibration).
// References:
//  1. Tonry, J. & Davis, M., "A survey of galaxy redshifts. I. Data reduction techniques", AJ 84, 1511 (1979),
//     §III (log-λ grid, continuum removal, apodisation), §IV (correlation peak, eq. 24 for r).
//  2. Blondin, S. & Tonry, J. L., "Determining the type, redshift, and age of a supernova spectrum",
//     ApJ 666, 1024 (2007), §2 (the method applied to supernova templates; continuum division, 5 % apodisation).
using System.Numerics;

namespace Triage.Core.Spectra;

/// <summary>Options of <see cref="RedshiftEstimation"/>; defaults are stated with their reason.</summary>
public sealed record RedshiftSearchOptions
{
    /// <summary>Largest redshift searched. Default 0.2 (the calibration's rest grid reaches 8600 Å only up to z ≈ 0.07 at a 9200 Å red limit, so wider is only a safety margin).</summary>
    public double MaxRedshift { get; init; } = 0.2;

    /// <summary>Blue edge (Å) of the correlation grid, shared by observed and rest frames. Default 2500.</summary>
    public double GridFromAngstrom { get; init; } = 2500;

    /// <summary>Red edge (Å) of the correlation grid. Default 11000.</summary>
    public double GridToAngstrom { get; init; } = 11000;

    /// <summary>
    /// Grid step in ln λ, at every R. Default 0.001 (300 km/s; the calibration's feature bins are never finer than
    /// 0.0087 in ln λ, and the parabolic peak refines to a fraction of a step). A step of 1/(2R) at low R was
    /// measured worse (the lags became coarser than the redshift range searched allows).
    /// </summary>
    public double StepLn { get; init; } = 0.001;

    /// <summary>Full width (in ln λ) of the running mean taken as the continuum. Default 0.1 (≈ 600 Å at 6000 Å: wider than the broad features, as the spline of ref. 2 with knots every ≈ 0.1 in ln λ).</summary>
    public double ContinuumWidthLn { get; init; } = 0.1;

    /// <summary>Share of the covered range tapered by a cosine bell at each end. Default 0.05 (ref. 2).</summary>
    public double TaperShare { get; init; } = 0.05;

    /// <summary>
    /// Least peak significance r (Tonry–Davis) for the estimate to be used; below it the templates' median redshift
    /// is returned. Default 3 (common practice: peaks with r below about 3 are mostly noise).
    /// </summary>
    public double MinimumSignificance { get; init; } = 3;
}

/// <summary>A redshift estimated from a spectrum.</summary>
/// <param name="Redshift">The redshift used: the correlation peak's, or the prior when <paramref name="FromPrior"/>.</param>
/// <param name="PeakRedshift">The correlation peak's redshift, whether used or not.</param>
/// <param name="Significance">Tonry–Davis r of the peak (0 when there was nothing to correlate).</param>
/// <param name="Template">Label of the best template (null when there was nothing to correlate).</param>
/// <param name="FromPrior">True when the peak was below <see cref="RedshiftSearchOptions.MinimumSignificance"/> and the prior was used.</param>
public sealed record RedshiftEstimate(double Redshift, double PeakRedshift, double Significance, string? Template, bool FromPrior);

/// <summary>
/// Rest-frame correlation templates at one resolving power: the mean continuum-divided spectrum per label of spectra
/// whose redshift is known, and their median redshift (the prior).
/// </summary>
public sealed class RedshiftTemplates
{
    private RedshiftTemplates(RedshiftSearchOptions options, double resolution, LogWavelengthGrid grid,
        IReadOnlyList<(string Label, float[] Values, int From, int To)> templates, double prior)
    {
        Options = options; Resolution = resolution; Grid = grid; Items = templates; PriorRedshift = prior;
    }

    /// <summary>The search options the templates were built with.</summary>
    public RedshiftSearchOptions Options { get; }

    /// <summary>Resolving power of the spectra the templates were built from (and of those they are meant for).</summary>
    public double Resolution { get; }

    /// <summary>The shared correlation grid.</summary>
    public LogWavelengthGrid Grid { get; }

    /// <summary>The median known redshift of the spectra the templates were built from.</summary>
    public double PriorRedshift { get; }

    /// <summary>Template labels, in the order built.</summary>
    public IEnumerable<string> Labels => Items.Select(t => t.Label);

    internal IReadOnlyList<(string Label, float[] Values, int From, int To)> Items { get; }

    /// <summary>
    /// Builds one template per label from spectra of known redshift (observed-frame wavelengths in Å, flux, redshift),
    /// all at resolving power <paramref name="resolution"/>. Spectra that do not reach the grid are skipped.
    /// </summary>
    /// <exception cref="ArgumentException">No spectrum could be used.</exception>
    public static RedshiftTemplates Build(IEnumerable<(string Label, double[] WavelengthAngstrom, double[] Flux, double Redshift)> spectra,
        double resolution, RedshiftSearchOptions? options = null)
    {
        options ??= new RedshiftSearchOptions();
        var grid = RedshiftEstimation.GridAt(resolution, options);
        var inputs = new List<(string Label, float[] Values, int From, int To)>();
        var redshifts = new List<double>();
        foreach (var (label, w, f, z) in spectra)
        {
            var g = RedshiftEstimation.Features(w, f, 1.0 / (1.0 + z), grid, options, out int from, out int to);
            if (g is null) continue;
            inputs.Add((label, g, from, to));
            redshifts.Add(z);
        }
        if (redshifts.Count == 0) throw new ArgumentException("No spectrum of known redshift reaches the correlation grid.", nameof(spectra));
        var sums = new Dictionary<string, (double[] Sum, int[] Count)>(StringComparer.Ordinal);
        var order = new List<string>();
        foreach (var (label, g, from, to) in inputs)
        {
            if (!sums.TryGetValue(label, out var acc))
            {
                acc = (new double[grid.Count], new int[grid.Count]);
                sums[label] = acc;
                order.Add(label);
            }
            for (int i = from; i < to; i++) { acc.Sum[i] += g[i]; acc.Count[i]++; }
        }
        var items = new List<(string, float[], int, int)>();
        foreach (string label in order)
        {
            var (sum, count) = sums[label];
            var v = new float[grid.Count];
            int from = Array.FindIndex(count, c => c > 0), to = Array.FindLastIndex(count, c => c > 0) + 1;
            for (int i = from; i < to; i++) v[i] = count[i] > 0 ? (float)(sum[i] / count[i]) : 0f;
            if (RedshiftEstimation.ScaleToUnitRms(v, from, to)) items.Add((label, v, from, to));
        }
        redshifts.Sort();
        double median = redshifts.Count % 2 == 1 ? redshifts[redshifts.Count / 2]
            : 0.5 * (redshifts[redshifts.Count / 2 - 1] + redshifts[redshifts.Count / 2]);
        return new RedshiftTemplates(options, resolution, grid, items, median);
    }
}

/// <summary>Estimates the redshift of a spectrum by cross-correlation with <see cref="RedshiftTemplates"/>.</summary>
public static class RedshiftEstimation
{
    /// <summary>
    /// The redshift of a spectrum sampled at <paramref name="wavelengthAngstrom"/> (observed frame, Å; ascending),
    /// at the resolving power of <paramref name="templates"/>. Non-finite samples are skipped.
    /// </summary>
    /// <remarks>
    /// Accuracy depends on R, S/N and the features present; measured in docs/calibration.md ("Redshift from the
    /// spectrum"). A spectrum with nothing to correlate (under a tenth of the grid covered, or a flat continuum)
    /// gets the prior with significance 0.
    /// </remarks>
    public static RedshiftEstimate Estimate(ReadOnlySpan<double> wavelengthAngstrom, ReadOnlySpan<double> flux, RedshiftTemplates templates)
    {
        var o = templates.Options;
        var grid = templates.Grid;
        var (w, f) = Preprocessing.Finite(wavelengthAngstrom, flux);
        var g = Features(w, f, 1.0, grid, o, out int from, out int to);
        if (g is null || templates.Items.Count == 0) return new RedshiftEstimate(templates.PriorRedshift, double.NaN, 0, null, true);
        int maxLag = Math.Max(1, (int)Math.Ceiling(Math.Log(1 + o.MaxRedshift) / grid.StepLn));
        double best = double.NegativeInfinity;
        int bestLag = 0, bestTemplate = 0;
        for (int ti = 0; ti < templates.Items.Count; ti++)
        {
            var t = templates.Items[ti].Values;
            for (int k = 0; k <= maxLag; k++)
            {
                double c = Correlation(g, t, from, to, k);
                if (c > best) { best = c; bestLag = k; bestTemplate = ti; }
            }
        }
        var tBest = templates.Items[bestTemplate].Values;
        // The correlation on both sides of the peak, for the parabola and for σ_a.
        int half = maxLag;
        var around = new double[2 * half + 1];
        for (int j = -half; j <= half; j++) around[j + half] = Correlation(g, tBest, from, to, bestLag + j);
        double offset = 0;
        double cm = around[half - 1], c0 = around[half], cp = around[half + 1];
        double curvature = cm - 2 * c0 + cp;
        if (curvature < 0) offset = Math.Clamp(0.5 * (cm - cp) / curvature, -0.5, 0.5);
        double sumA = 0;
        for (int j = 1; j <= half; j++)
        {
            double a = 0.5 * (around[half + j] - around[half - j]);
            sumA += a * a;
        }
        double sigmaA = Math.Sqrt(sumA / half);
        double r = sigmaA > 0 ? c0 / (Math.Sqrt(2) * sigmaA) : 0;
        double peakZ = Math.Max(0, Math.Exp((bestLag + offset) * grid.StepLn) - 1);
        bool prior = !(r >= o.MinimumSignificance);
        return new RedshiftEstimate(prior ? templates.PriorRedshift : peakZ, peakZ, r, templates.Items[bestTemplate].Label, prior);
    }

    internal static LogWavelengthGrid GridAt(double resolution, RedshiftSearchOptions o)
    {
        if (!(resolution > 0)) throw new ArgumentOutOfRangeException(nameof(resolution), "R must be positive.");
        double step = o.StepLn;
        int n = (int)Math.Floor(Math.Log(o.GridToAngstrom / o.GridFromAngstrom) / step);
        return new LogWavelengthGrid(o.GridFromAngstrom, step, n);
    }

    // (1/N) Σ g(n) t(n − k) over the covered pixels [from, to) of g; t is zero outside its coverage.
    private static double Correlation(float[] g, float[] t, int from, int to, int k)
    {
        int lo = Math.Max(from, k), hi = Math.Min(to, t.Length + k);
        if (hi <= lo) return 0;
        var a = g.AsSpan(lo, hi - lo);
        var b = t.AsSpan(lo - k, hi - lo);
        int n = a.Length, i = 0, width = Vector<float>.Count;
        var acc = Vector<float>.Zero;
        for (; i <= n - width; i += width) acc += new Vector<float>(a.Slice(i, width)) * new Vector<float>(b.Slice(i, width));
        double sum = Vector.Sum(acc);
        for (; i < n; i++) sum += a[i] * b[i];
        return sum / (to - from);
    }

    /// <summary>
    /// Continuum-divided, tapered, unit-rms spectrum on <paramref name="grid"/> (zero outside the covered bins
    /// [<paramref name="from"/>, <paramref name="to"/>)); null when under a tenth of the grid is covered or nothing varies.
    /// </summary>
    internal static float[]? Features(double[] w, double[] f, double scale, LogWavelengthGrid grid, RedshiftSearchOptions o,
        out int from, out int to)
    {
        var binned = FluxRebinning.ToGrid(w, f, grid, scale);
        from = Array.FindIndex(binned, v => !double.IsNaN(v));
        to = Array.FindLastIndex(binned, v => !double.IsNaN(v)) + 1;
        if (from < 0 || to - from < grid.Count / 10) { from = to = 0; return null; }
        for (int i = from + 1; i < to; i++)
            if (double.IsNaN(binned[i])) binned[i] = binned[i - 1];
        int n = to - from;
        var prefix = new double[n + 1];
        double meanAbs = 0;
        for (int i = 0; i < n; i++) { prefix[i + 1] = prefix[i] + binned[from + i]; meanAbs += Math.Abs(binned[from + i]); }
        meanAbs /= n;
        int halfWidth = Math.Max(1, (int)Math.Round(0.5 * o.ContinuumWidthLn / grid.StepLn));
        var v = new float[grid.Count];
        for (int i = 0; i < n; i++)
        {
            int a = Math.Max(0, i - halfWidth), b = Math.Min(n, i + halfWidth + 1);
            double c = (prefix[b] - prefix[a]) / (b - a);
            // A continuum near zero (the noisy blue end of a faint spectrum) carries no usable ratio.
            double x = c > 1e-3 * meanAbs ? binned[from + i] / c - 1 : 0;
            v[from + i] = (float)Math.Clamp(x, -2, 2);
        }
        int taper = Math.Max(1, (int)Math.Round(o.TaperShare * n));
        for (int i = 0; i < Math.Min(taper, n); i++)
        {
            float bell = (float)(0.5 * (1 - Math.Cos(Math.PI * (i + 0.5) / taper)));
            v[from + i] *= bell;
            v[to - 1 - i] *= bell;
        }
        return ScaleToUnitRms(v, from, to) ? v : null;
    }

    // Scales v to unit rms over [from, to), after removing its mean there; false when it does not vary.
    internal static bool ScaleToUnitRms(float[] v, int from, int to)
    {
        if (to <= from) return false;
        double mean = 0;
        for (int i = from; i < to; i++) mean += v[i];
        mean /= to - from;
        double ss = 0;
        for (int i = from; i < to; i++) { v[i] -= (float)mean; ss += v[i] * (double)v[i]; }
        double rms = Math.Sqrt(ss / (to - from));
        if (!(rms > 1e-12)) return false;
        for (int i = from; i < to; i++) v[i] = (float)(v[i] / rms);
        return true;
    }
}
