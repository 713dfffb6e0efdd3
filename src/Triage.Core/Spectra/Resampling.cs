// Flux-conserving resampling onto a grid uniform in ln λ.
//
// The input samples (λᵢ, fᵢ) define a piecewise-linear flux density f(λ). Its running
// integral C(λ) = ∫ f dλ is exact for each linear piece (trapezoid plus a quadratic term
// inside a piece), and an output bin [a, b] receives (C(b) − C(a)) / (b − a): the mean
// flux density over the bin. Hence Σ f_out Δλ_out equals the input integral over the
// covered bins. A grid uniform in x = ln λ has bin edges x₀ + kδ; at resolving power R
// sampled with P pixels per resolution element, δ = 1/(R P), and the number of
// resolution elements between λ₁ and λ₂ is N = R ln(λ₂/λ₁).
// References:
//  1. Carnall, A. C., "SpectRes: a fast spectral resampling tool in Python", arXiv:1705.05165 (2017), §2.
//  2. Horne, K., "An optimal extraction algorithm for CCD spectroscopy", PASP 98, 609 (1986) (flux conservation of binning).
namespace Triage.Core.Spectra;

/// <summary>
/// A wavelength grid uniform in ln λ: <see cref="Count"/> bins of width <see cref="StepLn"/>
/// (natural log) starting at edge <see cref="StartAngstrom"/>.
/// </summary>
public readonly record struct LogWavelengthGrid(double StartAngstrom, double StepLn, int Count)
{
    /// <summary>The grid covering [<paramref name="fromAngstrom"/>, <paramref name="toAngstrom"/>] with <paramref name="pixelsPerElement"/> bins per resolution element λ/R.</summary>
    public static LogWavelengthGrid ForResolution(double fromAngstrom, double toAngstrom, double resolution, double pixelsPerElement)
    {
        if (!(fromAngstrom > 0) || !(toAngstrom > fromAngstrom)) throw new ArgumentOutOfRangeException(nameof(toAngstrom), "Need 0 < from < to.");
        if (!(resolution > 0)) throw new ArgumentOutOfRangeException(nameof(resolution), "R must be positive.");
        if (!(pixelsPerElement > 0)) throw new ArgumentOutOfRangeException(nameof(pixelsPerElement), "Pixels per element must be positive.");
        double step = 1.0 / (resolution * pixelsPerElement);
        int n = Math.Max(1, (int)Math.Floor(Math.Log(toAngstrom / fromAngstrom) / step + 1e-9));
        return new LogWavelengthGrid(fromAngstrom, step, n);
    }

    /// <summary>The grid of <paramref name="count"/> bins exactly spanning [from, to].</summary>
    public static LogWavelengthGrid WithCount(double fromAngstrom, double toAngstrom, int count) =>
        new(fromAngstrom, Math.Log(toAngstrom / fromAngstrom) / count, count);

    /// <summary>Number of resolution elements at resolving power R between λ₁ and λ₂: N = R ln(λ₂/λ₁).</summary>
    public static double ResolutionElements(double resolution, double fromAngstrom, double toAngstrom) =>
        resolution * Math.Log(toAngstrom / fromAngstrom);

    /// <summary>Lower edge (Å) of bin <paramref name="i"/> (i = Count gives the top edge).</summary>
    public double EdgeAngstrom(int i) => StartAngstrom * Math.Exp(i * StepLn);

    /// <summary>Centre (Å, geometric mean of the edges) of bin <paramref name="i"/>.</summary>
    public double CentreAngstrom(int i) => StartAngstrom * Math.Exp((i + 0.5) * StepLn);

    /// <summary>All bin centres (Å).</summary>
    public double[] Centres() => Powers(StartAngstrom * Math.Exp(0.5 * StepLn), Count);

    /// <summary>All <see cref="Count"/> + 1 bin edges (Å), edge i = <see cref="EdgeAngstrom"/>(i).</summary>
    public double[] Edges() => Powers(StartAngstrom, Count + 1);

    // a·exp(i δ) for i < n with one exp per block of 16 and products by exp(j δ), j < 16, inside it: within
    // 2 units in the last place of the direct formula, at about a tenth of its cost.
    private double[] Powers(double a, int n)
    {
        const int block = 16;
        Span<double> steps = stackalloc double[block];
        for (int j = 0; j < block; j++) steps[j] = Math.Exp(j * StepLn);
        var v = new double[n];
        for (int b = 0; b < n; b += block)
        {
            double head = a * Math.Exp(b * StepLn);
            int m = Math.Min(block, n - b);
            for (int j = 0; j < m; j++) v[b + j] = head * steps[j];
        }
        return v;
    }

    /// <summary>
    /// Indices [from, to) of the bins whose centres may lie in [<paramref name="loAngstrom"/>, <paramref name="hiAngstrom"/>]
    /// (one bin of margin each side, clipped to the grid): callers test the centres of that range only.
    /// </summary>
    public (int From, int To) CandidateRange(double loAngstrom, double hiAngstrom)
    {
        double a = Math.Log(loAngstrom / StartAngstrom) / StepLn - 0.5, b = Math.Log(hiAngstrom / StartAngstrom) / StepLn - 0.5;
        int from = double.IsNaN(a) ? 0 : (int)Math.Clamp(Math.Floor(a) - 1, 0, Count);
        int to = double.IsNaN(b) ? Count : (int)Math.Clamp(Math.Ceiling(b) + 2, 0, Count);
        return (from, Math.Max(from, to));
    }
}

/// <summary>Flux-conserving binning of sampled spectra.</summary>
public static class FluxRebinning
{
    /// <summary>
    /// Mean flux density of the piecewise-linear interpolant of (<paramref name="wavelengthAngstrom"/>,
    /// <paramref name="flux"/>) over each bin of <paramref name="grid"/>, after multiplying every
    /// wavelength by <paramref name="wavelengthScale"/> (1/(1+z) moves to the rest frame).
    /// Bins not fully inside the sampled range are NaN.
    /// </summary>
    public static double[] ToGrid(ReadOnlySpan<double> wavelengthAngstrom, ReadOnlySpan<double> flux, LogWavelengthGrid grid,
        double wavelengthScale = 1.0)
    {
        int n = wavelengthAngstrom.Length;
        var result = new double[grid.Count];
        var edges = grid.Edges();
        double lo = wavelengthAngstrom[0] * wavelengthScale, hi = wavelengthAngstrom[n - 1] * wavelengthScale;
        // The integral of the interpolant up to sample s is summed as s moves forward (edges increase), term by term
        // in the order a table of all n running sums would hold, without the table.
        var at = new Segment();
        double prevEdge = edges[0];
        double prevC = prevEdge >= lo && prevEdge <= hi ? Cumulative(wavelengthAngstrom, flux, wavelengthScale, prevEdge, ref at) : double.NaN;
        for (int k = 0; k < grid.Count; k++)
        {
            double edge = edges[k + 1];
            double c = edge >= lo && edge <= hi ? Cumulative(wavelengthAngstrom, flux, wavelengthScale, edge, ref at) : double.NaN;
            result[k] = (c - prevC) / (edge - prevEdge); // NaN propagates for bins outside coverage
            prevEdge = edge;
            prevC = c;
        }
        return result;
    }

    /// <summary>A sample index and the integral of the interpolant from the first sample up to it.</summary>
    private struct Segment
    {
        public int Index;
        public double IntegralToIndex;
    }

    // Integral from the first sample to x of the linear interpolant; the segment only moves forward.
    private static double Cumulative(ReadOnlySpan<double> w, ReadOnlySpan<double> f, double scale, double x, ref Segment s)
    {
        int n = w.Length;
        while (s.Index < n - 2 && w[s.Index + 1] * scale < x)
        {
            s.Index++;
            s.IntegralToIndex += 0.5 * (f[s.Index] + f[s.Index - 1]) * (w[s.Index] - w[s.Index - 1]) * scale;
        }
        double x0 = w[s.Index] * scale, x1 = w[s.Index + 1] * scale;
        double t = x - x0;
        double slope = (f[s.Index + 1] - f[s.Index]) / (x1 - x0);
        return s.IntegralToIndex + f[s.Index] * t + 0.5 * slope * t * t;
    }

    /// <summary>
    /// Mean flux density over each bin of <paramref name="grid"/> of a spectrum given as bins: value i is the mean
    /// density between <paramref name="edgesAngstrom"/>[i] and [i + 1] (piecewise constant). Bins of the grid not
    /// fully inside the edges are NaN.
    /// </summary>
    public static double[] BinsToGrid(double[] edgesAngstrom, double[] flux, LogWavelengthGrid grid)
    {
        int n = flux.Length;
        var cum = new double[n + 1];
        for (int i = 0; i < n; i++) cum[i + 1] = cum[i] + flux[i] * (edgesAngstrom[i + 1] - edgesAngstrom[i]);
        var result = new double[grid.Count];
        var gridEdges = grid.Edges();
        int seg = 0;
        double prevEdge = gridEdges[0], prevC = Cumulative(prevEdge, ref seg);
        for (int k = 0; k < grid.Count; k++)
        {
            double edge = gridEdges[k + 1];
            double c = Cumulative(edge, ref seg);
            result[k] = (c - prevC) / (edge - prevEdge);
            prevEdge = edge;
            prevC = c;
        }
        return result;

        double Cumulative(double x, ref int s)
        {
            if (x < edgesAngstrom[0] * (1 - 1e-12) || x > edgesAngstrom[n] * (1 + 1e-12)) return double.NaN;
            while (s < n - 1 && edgesAngstrom[s + 1] < x) s++;
            return cum[s] + flux[s] * (x - edgesAngstrom[s]);
        }
    }

    /// <summary>As above for bins on a log grid <paramref name="source"/>.</summary>
    public static double[] BinsToGrid(LogWavelengthGrid source, double[] flux, LogWavelengthGrid grid) =>
        BinsToGrid(source.Edges(), flux, grid);

    /// <summary>Integral ∫ f dλ of the piecewise-linear interpolant (trapezoid rule, Å × flux units).</summary>
    public static double Integral(ReadOnlySpan<double> wavelengthAngstrom, ReadOnlySpan<double> flux)
    {
        double s = 0;
        for (int i = 1; i < wavelengthAngstrom.Length; i++)
            s += 0.5 * (flux[i] + flux[i - 1]) * (wavelengthAngstrom[i] - wavelengthAngstrom[i - 1]);
        return s;
    }

    /// <summary>Integral Σ f Δλ of a binned spectrum on <paramref name="grid"/>, skipping NaN bins.</summary>
    public static double Integral(LogWavelengthGrid grid, ReadOnlySpan<double> binned)
    {
        double s = 0;
        for (int k = 0; k < grid.Count; k++)
            if (!double.IsNaN(binned[k])) s += binned[k] * (grid.EdgeAngstrom(k + 1) - grid.EdgeAngstrom(k));
        return s;
    }
}

/// <summary>
/// <see cref="FluxRebinning.ToGrid"/> (wavelength scale 1) as fixed weights for one wavelength array and one grid, for
/// binning many sampled curves that share the array. Results equal <see cref="FluxRebinning.ToGrid"/> to rounding.
/// </summary>
/// <remarks>
/// Bin [a, b] takes (C(b) − C(a)) / (b − a) with C the running integral of the piecewise-linear interpolant: the
/// trapezoids of the whole segments between a and b, plus inside the segments of a and b (t from its left sample,
/// h its width) the terms f_s (t − t²/2h) + f_{s+1} t²/2h, all linear in the values. Bins not fully inside the
/// samples are NaN; values holding a NaN take <see cref="FluxRebinning.ToGrid"/> itself (its running sum carries the
/// NaN on, which fixed weights would not).
/// </remarks>
public sealed class GridBinning
{
    private readonly double[] _wavelengths;
    private readonly SparseRows _rows;
    private readonly double[]? _sampleWeights;

    private GridBinning(double[] wavelengths, LogWavelengthGrid grid, SparseRows rows, double[]? sampleWeights)
    {
        _wavelengths = wavelengths; Grid = grid; _rows = rows; _sampleWeights = sampleWeights;
    }

    /// <summary>The grid binned onto.</summary>
    public LogWavelengthGrid Grid { get; }

    /// <summary>The binning of curves sampled at <paramref name="wavelengthAngstrom"/> (increasing, at least two) onto <paramref name="grid"/>.</summary>
    /// <param name="sampleWeights">When given, value i is multiplied by sampleWeights[i] before binning (folded into the weights).</param>
    public static GridBinning Build(double[] wavelengthAngstrom, LogWavelengthGrid grid, double[]? sampleWeights = null)
    {
        ArgumentNullException.ThrowIfNull(wavelengthAngstrom);
        var w = wavelengthAngstrom;
        int n = w.Length;
        if (n < 2) throw new ArgumentException("Need at least two samples.", nameof(wavelengthAngstrom));
        var edges = grid.Edges();
        var segment = new int[grid.Count + 1];
        var inside = new bool[grid.Count + 1];
        int s = 0;
        for (int k = 0; k <= grid.Count; k++)
        {
            double x = edges[k];
            if (!(x >= w[0] && x <= w[n - 1])) continue;
            while (s < n - 2 && w[s + 1] < x) s++;
            segment[k] = s;
            inside[k] = true;
        }
        var rows = new SparseRowsBuilder(grid.Count, n);
        for (int k = 0; k < grid.Count; k++)
        {
            if (!inside[k] || !inside[k + 1]) { rows.NaNRow(k); continue; }
            double a = edges[k], b = edges[k + 1], width = b - a;
            int sa = segment[k], sb = segment[k + 1];
            var row = rows.Row(k, sa, sb - sa + 2);
            for (int i = sa; i < sb; i++)
            {
                double half = 0.5 * (w[i + 1] - w[i]);
                row[i - sa] += half;
                row[i + 1 - sa] += half;
            }
            double tb = b - w[sb], hb = w[sb + 1] - w[sb], ta = a - w[sa], ha = w[sa + 1] - w[sa];
            row[sb - sa] += tb - 0.5 * tb * tb / hb;
            row[sb + 1 - sa] += 0.5 * tb * tb / hb;
            row[0] -= ta - 0.5 * ta * ta / ha;
            row[1] -= 0.5 * ta * ta / ha;
            for (int q = 0; q < row.Length; q++) row[q] = row[q] / width * (sampleWeights?[sa + q] ?? 1);
        }
        return new GridBinning(w, grid, rows.Build(), sampleWeights);
    }

    /// <summary>The mean over each bin of the interpolant of <paramref name="values"/> (one per sample, times its sample weight).</summary>
    /// <exception cref="ArgumentException">Another length than the wavelength array.</exception>
    public double[] Apply(double[] values)
    {
        ArgumentNullException.ThrowIfNull(values);
        if (values.Length != _wavelengths.Length) throw new ArgumentException($"{values.Length} values for {_wavelengths.Length} samples.", nameof(values));
        if (SparseRows.HasNaN(values))
            return FluxRebinning.ToGrid(_wavelengths, _sampleWeights is null ? values : values.Select((v, i) => v * _sampleWeights[i]).ToArray(), Grid);
        var result = new double[Grid.Count];
        _rows.Apply(values, result, false);
        return result;
    }

    /// <summary>As <see cref="Apply(double[])"/> for many curves at once (interleaved blocks of eight).</summary>
    /// <exception cref="ArgumentException">A curve of another length than the wavelength array.</exception>
    public double[][] Apply(IReadOnlyList<double[]> values)
    {
        ArgumentNullException.ThrowIfNull(values);
        foreach (var v in values)
            if (v is null || v.Length != _wavelengths.Length) throw new ArgumentException("Every curve needs one value per sample.", nameof(values));
        return _rows.ApplyMany(values, _wavelengths.Length, Apply);
    }
}
