// Degradation to one R as a sparse linear operator, built once for every spectrum sampled on one wavelength array.
//
// Without NaN every step of Degradation.Degrade is linear in the flux f: binning onto the working grid (B₁, row m
// the overlap-weighted mean of the input bins under working bin m), the kernel acting on g λ (D⁻¹ K D with
// D = diag(λ of the working centres) and K banded, its edge rows renormalised over the pixels that exist) and
// binning onto the output grid (B₂). So out = A B₁ f with A = B₂ D⁻¹ K D. Both factors are kept as rows of
// contiguous columns (first column, weights): B₁ has about one weight per input pixel (skipped when the working
// grid is the input's own), A about (output pixel + kernel width) weights per output pixel. Folding B₁ into A
// would multiply the weights at low R (an output pixel there spans the whole kernel of a coarse working grid).
// Applying is one dot product per row; rows are padded with zero weights to whole vectors. The sums are only
// reassociated, so results equal the step-by-step path to rounding (≈ 1e-15 relative).
// Independent input noise goes through the squared weights of the whole product: Var(out) = (A B₁)∘(A B₁) · σ².
// A flux with a NaN takes the step-by-step path (its convolution skips NaN and renormalises, which is not linear).
// References:
//  1. Golub, G. H. & Van Loan, C. F., "Matrix Computations", 4th ed., §1.2.5 (band matrices).
//  2. Papoulis, A., "Probability, Random Variables and Stochastic Processes", 3rd ed., §7-1 (variance of a linear sum
//     of independent variables: Σ w² σ²).
using System.Runtime.Intrinsics;

namespace Triage.Core.Spectra;

/// <summary>
/// <see cref="Degradation.Degrade(Spectrum, PixelBins, double, double?, DegradeOptions?)"/> to one R folded into a
/// sparse matrix for one wavelength array and source resolution; immutable, safe to share between threads.
/// </summary>
/// <remarks>
/// Build it once per (wavelength array, R, source R) and apply it to every spectrum sampled there: a synthetic
/// library shares one array, so a calibration builds one operator per R. Outputs equal the step-by-step
/// degradation to rounding (the oracle and property tests in DegradationOperatorTests).
/// </remarks>
public sealed class DegradationOperator
{
    private readonly DegradePlan _plan;
    private readonly PixelBins _input;
    private readonly SparseRows? _toWork;
    private readonly SparseRows? _toOutput;
    private SparseRows? _composed;

    private DegradationOperator(DegradePlan plan, PixelBins input, double resolution, double? sourceResolution, SparseRows? toWork,
        SparseRows? toOutput, bool stepByStep)
    {
        _plan = plan; _input = input; Resolution = resolution; SourceResolution = sourceResolution;
        _toWork = toWork; _toOutput = toOutput; StepByStep = stepByStep;
    }

    /// <summary>The output grid.</summary>
    public LogWavelengthGrid Grid => _plan.Output;

    /// <summary>The target resolving power R.</summary>
    public double Resolution { get; }

    /// <summary>The source resolving power the operator was built for (null: unknown).</summary>
    public double? SourceResolution { get; }

    /// <summary>Number of input pixels it takes.</summary>
    public int InputCount => _input.Edges.Length - 1;

    /// <summary>Stored weights (with the padding): the multiply-adds of one application.</summary>
    public int WeightCount => (_toWork?.Weights.Length ?? 0) + (_toOutput?.Weights.Length ?? 0);

    /// <summary>
    /// True when the operator only replays the step-by-step path (a working bin outside the input's range, which
    /// no grid built from the input's own edges has); false in every ordinary case.
    /// </summary>
    public bool StepByStep { get; }

    /// <summary>The operator for spectra sampled at <paramref name="wavelengthAngstrom"/> (pixel bins computed here).</summary>
    /// <exception cref="ArgumentOutOfRangeException">R ≤ 0 or not finite, or R above the source resolution.</exception>
    public static DegradationOperator Build(double[] wavelengthAngstrom, double resolution, double? sourceResolution, DegradeOptions? options = null) =>
        Build(wavelengthAngstrom, PixelBins.Of(wavelengthAngstrom), resolution, sourceResolution, options);

    /// <summary>As above with the bins of <paramref name="wavelengthAngstrom"/> computed once by <see cref="PixelBins.Of"/>.</summary>
    /// <exception cref="ArgumentException">The bins belong to another wavelength array.</exception>
    /// <exception cref="ArgumentOutOfRangeException">R ≤ 0 or not finite, or R above the source resolution.</exception>
    public static DegradationOperator Build(double[] wavelengthAngstrom, PixelBins input, double resolution, double? sourceResolution,
        DegradeOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(wavelengthAngstrom);
        ArgumentNullException.ThrowIfNull(input);
        if (input.Edges.Length != wavelengthAngstrom.Length + 1)
            throw new ArgumentException("The bins belong to another wavelength array.", nameof(input));
        var plan = Degradation.Plan(wavelengthAngstrom[0], wavelengthAngstrom[^1], input, resolution, sourceResolution, options ?? new DegradeOptions());
        if (plan.Identity) return new DegradationOperator(plan, input, resolution, sourceResolution, null, null, false);
        var work = plan.Work;
        SparseRows? toWork = null;
        if (!plan.WorkIsInput)
        {
            toWork = BinRows(input.Edges, work.Edges());
            if (toWork.HasNaNRows) return new DegradationOperator(plan, input, resolution, sourceResolution, null, null, true);
        }
        var toOutput = BinRows(work.Edges(), plan.Output.Edges());
        if (plan.KernelSigmaPixels > 0) toOutput = ThroughKernel(toOutput, work, plan.KernelSigmaPixels, plan.KernelHalfWidthSigma);
        return new DegradationOperator(plan, input, resolution, sourceResolution, toWork, toOutput, false);
    }

    /// <summary>
    /// True when this operator was built for <paramref name="bins"/> and <paramref name="sourceResolution"/> (the same
    /// edges, compared by value).
    /// </summary>
    public bool Fits(PixelBins bins, double? sourceResolution)
    {
        ArgumentNullException.ThrowIfNull(bins);
        return Nullable.Equals(sourceResolution, SourceResolution)
               && (ReferenceEquals(bins, _input) || bins.Edges.AsSpan().SequenceEqual(_input.Edges));
    }

    /// <summary>The degraded flux on <see cref="Grid"/> of <paramref name="flux"/> (one value per input pixel).</summary>
    /// <exception cref="ArgumentException">The flux has another length than the wavelength array.</exception>
    public double[] Apply(double[] flux)
    {
        ArgumentNullException.ThrowIfNull(flux);
        if (flux.Length != InputCount) throw new ArgumentException($"The flux has {flux.Length} values; the operator takes {InputCount}.", nameof(flux));
        if (StepByStep || _toOutput is null || SparseRows.HasNaN(flux))
            return Degradation.Apply(_plan, _input, flux);
        var result = new double[Grid.Count];
        if (_toWork is null) _toOutput.Apply(flux, result, false);
        else
        {
            var g = new double[_toWork.Rows];
            _toWork.Apply(flux, g, false);
            _toOutput.Apply(g, result, false);
        }
        return result;
    }

    /// <summary>
    /// <see cref="Apply(double[])"/> for many spectra at once: blocks of eight are interleaved so that each weight
    /// multiplies all eight in one vector operation (with 512-bit vectors; one by one without them, or for a block
    /// holding a NaN). Results are those of <see cref="Apply(double[])"/> to rounding.
    /// </summary>
    /// <param name="fluxes">Fluxes, each one value per input pixel.</param>
    /// <returns>The degraded fluxes on <see cref="Grid"/>, in the same order.</returns>
    /// <exception cref="ArgumentException">A flux has another length than the wavelength array.</exception>
    public double[][] Apply(IReadOnlyList<double[]> fluxes)
    {
        ArgumentNullException.ThrowIfNull(fluxes);
        var results = new double[fluxes.Count][];
        int n = InputCount, b = 0;
        if (Vector512.IsHardwareAccelerated && !StepByStep && _toOutput is not null && fluxes.Count >= SparseRows.Block)
        {
            // Each buffer is written in full before it is read.
            var x = GC.AllocateUninitializedArray<double>(SparseRows.Block * n);
            var g = _toWork is null ? null : GC.AllocateUninitializedArray<double>(SparseRows.Block * _toWork.Rows);
            var y = GC.AllocateUninitializedArray<double>(SparseRows.Block * Grid.Count);
            for (; b + SparseRows.Block <= fluxes.Count; b += SparseRows.Block)
            {
                for (int s = 0; s < SparseRows.Block; s++)
                {
                    var f = fluxes[b + s] ?? throw new ArgumentException("A flux is null.", nameof(fluxes));
                    if (f.Length != n) throw new ArgumentException($"A flux has {f.Length} values; the operator takes {n}.", nameof(fluxes));
                }
                // Long binning rows (low R) are cheaper one spectrum at a time than interleaving the input.
                bool direct = g is not null && _toWork!.MeanRowLength >= 12;
                bool clean = true;
                if (direct)
                    for (int s = 0; s < SparseRows.Block && clean; s++) clean = !SparseRows.HasNaN(fluxes[b + s]);
                else clean = SparseRows.Interleave(fluxes, b, x);
                if (!clean)
                {
                    for (int s = 0; s < SparseRows.Block; s++) results[b + s] = Apply(fluxes[b + s]);
                    continue;
                }
                if (g is null) _toOutput.ApplyInterleaved8(x, y);
                else
                {
                    if (direct)
                        for (int s = 0; s < SparseRows.Block; s++) _toWork!.Apply(fluxes[b + s], g, false, SparseRows.Block, s);
                    else _toWork!.ApplyInterleaved8(x, g);
                    _toOutput.ApplyInterleaved8(g, y);
                }
                SparseRows.Deinterleave(y, results, b, Grid.Count);
            }
        }
        for (; b < fluxes.Count; b++) results[b] = Apply(fluxes[b]);
        return results;
    }

    /// <summary>
    /// Variance per output pixel of the degraded flux when the input pixels carry independent noise of variance
    /// <paramref name="variance"/> (σ², one per input pixel): the variances through the squared weights.
    /// </summary>
    /// <exception cref="ArgumentException">Another length than the wavelength array.</exception>
    /// <exception cref="InvalidOperationException">A <see cref="StepByStep"/> operator, whose path is not a fixed matrix.</exception>
    public double[] ApplyVariance(double[] variance)
    {
        ArgumentNullException.ThrowIfNull(variance);
        if (variance.Length != InputCount) throw new ArgumentException($"{variance.Length} values; the operator takes {InputCount}.", nameof(variance));
        if (StepByStep) throw new InvalidOperationException("This operator replays the step-by-step path and has no fixed weights.");
        if (_toOutput is null) return (double[])variance.Clone();
        // Two stages cannot square separately: an input pixel split between two working bins correlates them.
        var whole = _toWork is null ? _toOutput : _composed ??= Compose(_toOutput, _toWork, InputCount);
        var result = new double[Grid.Count];
        whole.Apply(variance, result, true);
        return result;
    }

    /// <summary>
    /// The rows of <see cref="FluxRebinning.BinsToGrid(double[], double[], LogWavelengthGrid)"/> from bins with edges
    /// <paramref name="source"/> onto bins with edges <paramref name="target"/>: bin k takes (C(b) − C(a)) / (b − a) with C
    /// the running integral, i.e. each source bin's overlap with [a, b] over b − a. Edges outside the source's range (by
    /// more than 1e-12 relative) make the bin NaN, as there.
    /// </summary>
    private static SparseRows BinRows(double[] source, double[] target)
    {
        int n = source.Length - 1, m = target.Length - 1;
        var segment = new int[m + 1];
        var inside = new bool[m + 1];
        int s = 0;
        for (int k = 0; k <= m; k++)
        {
            double x = target[k];
            if (x < source[0] * (1 - 1e-12) || x > source[n] * (1 + 1e-12)) continue;
            while (s < n - 1 && source[s + 1] < x) s++;
            segment[k] = s;
            inside[k] = true;
        }
        var rows = new SparseRowsBuilder(m, n);
        for (int k = 0; k < m; k++)
        {
            if (!inside[k] || !inside[k + 1]) { rows.NaNRow(k); continue; }
            double a = target[k], b = target[k + 1], width = b - a;
            int sa = segment[k], sb = segment[k + 1];
            var row = rows.Row(k, sa, sb - sa + 1);
            for (int i = sa; i <= sb; i++)
            {
                double upper = i < sb ? source[i + 1] - source[i] : b - source[sb];
                double lower = i == sa ? a - source[sa] : 0;
                row[i - sa] = (upper - lower) / width;
            }
        }
        return rows.Build();
    }

    /// <summary>
    /// <paramref name="binning"/> (rows over the working grid) times D⁻¹ K D: the kernel of
    /// <see cref="Degradation.Convolve"/> acting on g λ, interior rows as they are, rows within half a kernel of an end
    /// renormalised over the pixels that exist.
    /// </summary>
    private static SparseRows ThroughKernel(SparseRows binning, LogWavelengthGrid work, double sigmaPixels, double halfWidthSigma)
    {
        var kernel = Degradation.Kernel(sigmaPixels, halfWidthSigma);
        int h = kernel.Length / 2, nw = work.Count;
        var centres = work.Centres();
        var scale = new double[nw];
        for (int j = 0; j < nw; j++)
        {
            double norm = 1;
            if (j < h || j >= nw - h)
            {
                double wsum = 0;
                for (int t = Math.Max(-h, -j); t <= Math.Min(h, nw - 1 - j); t++) wsum += kernel[t + h];
                norm = 1 / wsum;
            }
            scale[j] = norm / centres[j];
        }
        // Each row grows by the kernel's width, plus up to a vector of padding.
        var rows = new SparseRowsBuilder(binning.Rows, nw, binning.Weights.Length + binning.Rows * (2 * h + SparseRows.Lanes));
        for (int k = 0; k < binning.Rows; k++)
        {
            if (binning.IsNaNRow(k)) { rows.NaNRow(k); continue; }
            int j0 = binning.Start[k], len = binning.Length(k);
            int lo = Math.Max(0, j0 - h), hi = Math.Min(nw - 1, j0 + len - 1 + h);
            var row = rows.Row(k, lo, hi - lo + 1);
            var beta = binning.RowWeights(k);
            for (int q = 0; q < len; q++)
            {
                int j = j0 + q;
                double coef = beta[q] * scale[j];
                if (coef == 0) continue;
                int t0 = Math.Max(-h, -j), t1 = Math.Min(h, nw - 1 - j);
                AddScaledProduct(row.Slice(j + t0 - lo, t1 - t0 + 1), coef, kernel.AsSpan(t0 + h, t1 - t0 + 1), centres.AsSpan(j + t0, t1 - t0 + 1));
            }
        }
        return rows.Build();
    }

    /// <summary>destination[t] += coef · a[t] · b[t], vectorised (the same products and sums as the plain loop).</summary>
    private static void AddScaledProduct(Span<double> destination, double coef, ReadOnlySpan<double> a, ReadOnlySpan<double> b)
    {
        int i = 0;
        if (Vector512.IsHardwareAccelerated)
        {
            var c = Vector512.Create(coef);
            for (; i <= destination.Length - 8; i += 8)
            {
                var d = Vector512.Create<double>(destination[i..]) + c * Vector512.Create(a[i..]) * Vector512.Create(b[i..]);
                d.CopyTo(destination[i..]);
            }
        }
        for (; i < destination.Length; i++) destination[i] += coef * a[i] * b[i];
    }

    /// <summary>The product <paramref name="a"/> · <paramref name="b"/> (b's rows over <paramref name="columns"/> columns).</summary>
    private static SparseRows Compose(SparseRows a, SparseRows b, int columns)
    {
        var rows = new SparseRowsBuilder(a.Rows, columns);
        for (int k = 0; k < a.Rows; k++)
        {
            int m0 = a.Start[k], len = a.Length(k);
            if (a.IsNaNRow(k) || Enumerable.Range(m0, len).Any(b.IsNaNRow)) { rows.NaNRow(k); continue; }
            int lo = int.MaxValue, hi = -1;
            for (int m = m0; m < m0 + len; m++) { lo = Math.Min(lo, b.Start[m]); hi = Math.Max(hi, b.Start[m] + b.Length(m) - 1); }
            var row = rows.Row(k, lo, hi - lo + 1);
            var wa = a.RowWeights(k);
            for (int q = 0; q < len; q++)
            {
                if (wa[q] == 0) continue;
                var wb = b.RowWeights(m0 + q);
                int first = b.Start[m0 + q] - lo;
                for (int t = 0; t < wb.Length; t++) row[first + t] += wa[q] * wb[t];
            }
        }
        return rows.Build();
    }
}
