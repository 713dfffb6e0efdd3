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
//  1. Golub, G. H. & Van Loan, C. F., "Matrix Computations", 4th ed., §1.2.5 (band matrices), §1.1 (saxpy/dot forms).
//  2. Papoulis, A., "Probability, Random Variables and Stochastic Processes", 3rd ed., §7-1 (variance of a linear sum
//     of independent variables: Σ w² σ²).
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

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
        if (StepByStep || _toOutput is null || HasNaN(flux))
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
        if (Vector512.IsHardwareAccelerated && !StepByStep && _toOutput is not null && fluxes.Count >= Block)
        {
            var x = new double[Block * n];
            var g = _toWork is null ? null : new double[Block * _toWork.Rows];
            var y = new double[Block * Grid.Count];
            for (; b + Block <= fluxes.Count; b += Block)
            {
                bool clean = true;
                for (int s = 0; s < Block && clean; s++)
                {
                    var f = fluxes[b + s] ?? throw new ArgumentException("A flux is null.", nameof(fluxes));
                    if (f.Length != n) throw new ArgumentException($"A flux has {f.Length} values; the operator takes {n}.", nameof(fluxes));
                    clean = !HasNaN(f);
                }
                if (!clean)
                {
                    for (int s = 0; s < Block; s++) results[b + s] = Apply(fluxes[b + s]);
                    continue;
                }
                if (g is null)
                {
                    Interleave(fluxes, b, x);
                    _toOutput.ApplyInterleaved8(x, y);
                }
                else
                {
                    // Long binning rows (low R) are cheaper one spectrum at a time than interleaving the input.
                    if (_toWork!.MeanRowLength >= 12)
                        for (int s = 0; s < Block; s++) _toWork.Apply(fluxes[b + s], g, false, Block, s);
                    else
                    {
                        Interleave(fluxes, b, x);
                        _toWork.ApplyInterleaved8(x, g);
                    }
                    _toOutput.ApplyInterleaved8(g, y);
                }
                Deinterleave(y, results, b, Grid.Count);
            }
        }
        for (; b < fluxes.Count; b++) results[b] = Apply(fluxes[b]);
        return results;
    }

    private static void Interleave(IReadOnlyList<double[]> fluxes, int from, double[] x)
    {
        var f0 = fluxes[from]; var f1 = fluxes[from + 1]; var f2 = fluxes[from + 2]; var f3 = fluxes[from + 3];
        var f4 = fluxes[from + 4]; var f5 = fluxes[from + 5]; var f6 = fluxes[from + 6]; var f7 = fluxes[from + 7];
        int n = f0.Length;
        if (f1.Length != n || f2.Length != n || f3.Length != n || f4.Length != n || f5.Length != n || f6.Length != n || f7.Length != n
            || x.Length < Block * n)
            throw new ArgumentException("The fluxes of a block differ in length.", nameof(fluxes));
        int i = 0;
        if (Avx512F.IsSupported)
        {
            ref double xr = ref MemoryMarshal.GetArrayDataReference(x);
            for (; i <= n - Block; i += Block)
            {
                var r0 = Vector512.Create(f0, i); var r1 = Vector512.Create(f1, i); var r2 = Vector512.Create(f2, i); var r3 = Vector512.Create(f3, i);
                var r4 = Vector512.Create(f4, i); var r5 = Vector512.Create(f5, i); var r6 = Vector512.Create(f6, i); var r7 = Vector512.Create(f7, i);
                Transpose8(ref r0, ref r1, ref r2, ref r3, ref r4, ref r5, ref r6, ref r7);
                ref double d = ref Unsafe.Add(ref xr, Block * i);
                r0.StoreUnsafe(ref d, 0); r1.StoreUnsafe(ref d, 8); r2.StoreUnsafe(ref d, 16); r3.StoreUnsafe(ref d, 24);
                r4.StoreUnsafe(ref d, 32); r5.StoreUnsafe(ref d, 40); r6.StoreUnsafe(ref d, 48); r7.StoreUnsafe(ref d, 56);
            }
        }
        for (; i < n; i++)
            Vector512.Create(f0[i], f1[i], f2[i], f3[i], f4[i], f5[i], f6[i], f7[i]).CopyTo(x, Block * i);
    }

    /// <summary>The inverse of <see cref="Interleave"/>: y[8 k + s] into results[from + s][k].</summary>
    private static void Deinterleave(double[] y, double[][] results, int from, int count)
    {
        var d0 = results[from] = new double[count]; var d1 = results[from + 1] = new double[count];
        var d2 = results[from + 2] = new double[count]; var d3 = results[from + 3] = new double[count];
        var d4 = results[from + 4] = new double[count]; var d5 = results[from + 5] = new double[count];
        var d6 = results[from + 6] = new double[count]; var d7 = results[from + 7] = new double[count];
        int k = 0;
        if (Avx512F.IsSupported)
        {
            ref double yr = ref MemoryMarshal.GetArrayDataReference(y);
            for (; k <= count - Block; k += Block)
            {
                ref double src = ref Unsafe.Add(ref yr, Block * k);
                var r0 = Vector512.LoadUnsafe(ref src, 0); var r1 = Vector512.LoadUnsafe(ref src, 8);
                var r2 = Vector512.LoadUnsafe(ref src, 16); var r3 = Vector512.LoadUnsafe(ref src, 24);
                var r4 = Vector512.LoadUnsafe(ref src, 32); var r5 = Vector512.LoadUnsafe(ref src, 40);
                var r6 = Vector512.LoadUnsafe(ref src, 48); var r7 = Vector512.LoadUnsafe(ref src, 56);
                Transpose8(ref r0, ref r1, ref r2, ref r3, ref r4, ref r5, ref r6, ref r7);
                r0.CopyTo(d0, k); r1.CopyTo(d1, k); r2.CopyTo(d2, k); r3.CopyTo(d3, k);
                r4.CopyTo(d4, k); r5.CopyTo(d5, k); r6.CopyTo(d6, k); r7.CopyTo(d7, k);
            }
        }
        for (; k < count; k++)
        {
            d0[k] = y[Block * k]; d1[k] = y[Block * k + 1]; d2[k] = y[Block * k + 2]; d3[k] = y[Block * k + 3];
            d4[k] = y[Block * k + 4]; d5[k] = y[Block * k + 5]; d6[k] = y[Block * k + 6]; d7[k] = y[Block * k + 7];
        }
    }

    /// <summary>Transposes the 8 × 8 matrix whose rows are r0…r7, in three rounds of two-source permutes (1, 2, 4 elements).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static void Transpose8(ref Vector512<double> r0, ref Vector512<double> r1, ref Vector512<double> r2, ref Vector512<double> r3,
        ref Vector512<double> r4, ref Vector512<double> r5, ref Vector512<double> r6, ref Vector512<double> r7)
    {
        var lo2 = Vector512.Create(0L, 1, 8, 9, 4, 5, 12, 13);
        var hi2 = Vector512.Create(2L, 3, 10, 11, 6, 7, 14, 15);
        var lo4 = Vector512.Create(0L, 1, 2, 3, 8, 9, 10, 11);
        var hi4 = Vector512.Create(4L, 5, 6, 7, 12, 13, 14, 15);
        var a0 = Avx512F.UnpackLow(r0, r1); var a1 = Avx512F.UnpackHigh(r0, r1);
        var a2 = Avx512F.UnpackLow(r2, r3); var a3 = Avx512F.UnpackHigh(r2, r3);
        var a4 = Avx512F.UnpackLow(r4, r5); var a5 = Avx512F.UnpackHigh(r4, r5);
        var a6 = Avx512F.UnpackLow(r6, r7); var a7 = Avx512F.UnpackHigh(r6, r7);
        var b0 = Avx512F.PermuteVar8x64x2(a0, lo2, a2); var b2 = Avx512F.PermuteVar8x64x2(a0, hi2, a2);
        var b1 = Avx512F.PermuteVar8x64x2(a1, lo2, a3); var b3 = Avx512F.PermuteVar8x64x2(a1, hi2, a3);
        var b4 = Avx512F.PermuteVar8x64x2(a4, lo2, a6); var b6 = Avx512F.PermuteVar8x64x2(a4, hi2, a6);
        var b5 = Avx512F.PermuteVar8x64x2(a5, lo2, a7); var b7 = Avx512F.PermuteVar8x64x2(a5, hi2, a7);
        r0 = Avx512F.PermuteVar8x64x2(b0, lo4, b4); r1 = Avx512F.PermuteVar8x64x2(b1, lo4, b5);
        r2 = Avx512F.PermuteVar8x64x2(b2, lo4, b6); r3 = Avx512F.PermuteVar8x64x2(b3, lo4, b7);
        r4 = Avx512F.PermuteVar8x64x2(b0, hi4, b4); r5 = Avx512F.PermuteVar8x64x2(b1, hi4, b5);
        r6 = Avx512F.PermuteVar8x64x2(b2, hi4, b6); r7 = Avx512F.PermuteVar8x64x2(b3, hi4, b7);
    }

    /// <summary>Spectra per interleaved block (the doubles of a 512-bit vector).</summary>
    private const int Block = 8;

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

    private static bool HasNaN(double[] values)
    {
        int i = 0;
        if (Vector512.IsHardwareAccelerated)
            for (; i <= values.Length - 8; i += 8)
            {
                var v = Vector512.Create(values, i);
                if (!Vector512.EqualsAll(v, v)) return true;
            }
        for (; i < values.Length; i++) if (double.IsNaN(values[i])) return true;
        return false;
    }

    /// <summary>Lanes of the widest accelerated vector of doubles: the unit rows are padded to.</summary>
    private static readonly int Lanes = Vector512.IsHardwareAccelerated ? 8 : Vector256.IsHardwareAccelerated ? 4 : 1;

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
        var rows = new SparseRowsBuilder(binning.Rows, nw);
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
                for (int t = Math.Max(-h, -j); t <= Math.Min(h, nw - 1 - j); t++)
                    row[j + t - lo] += coef * kernel[t + h] * centres[j + t];
            }
        }
        return rows.Build();
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

    /// <summary>Rows of contiguous columns, each padded with zero weights to whole vectors when the input is long enough.</summary>
    private sealed class SparseRowsBuilder(int rows, int columns)
    {
        private readonly int[] _start = new int[rows];
        private readonly int[] _offset = new int[rows + 1];
        private readonly int[] _lead = new int[rows];
        private readonly int[] _length = new int[rows];
        private bool[]? _nan;
        private double[] _weights = new double[Math.Max(16, rows * 8)];
        private int _used;

        public void NaNRow(int k)
        {
            (_nan ??= new bool[rows])[k] = true;
            _offset[k + 1] = _used;
        }

        /// <summary>Row k over columns [first, first + length): a zeroed span to fill (the padding is outside it).</summary>
        public Span<double> Row(int k, int first, int length)
        {
            int padded = length;
            if (Lanes > 1 && columns >= Lanes && length % Lanes != 0) padded = (length / Lanes + 1) * Lanes;
            // Pad to the right, or to the left where the row ends near the last column.
            int start = Math.Min(first, columns - padded);
            if (start < 0) { start = first; padded = length; }
            if (_used + padded > _weights.Length) Array.Resize(ref _weights, Math.Max(_weights.Length * 2, _used + padded));
            _start[k] = start;
            _lead[k] = first - start;
            _length[k] = length;
            _used += padded;
            _offset[k + 1] = _used;
            return _weights.AsSpan(_offset[k] + (first - start), length);
        }

        public SparseRows Build() => new(_start, _offset, _lead, _length, _weights[.._used], _nan);
    }

    /// <summary>Rows of contiguous columns: row k has weights Weights[Offset[k] .. Offset[k + 1]) from column Start[k].</summary>
    private sealed class SparseRows(int[] start, int[] offset, int[] lead, int[] length, double[] weights, bool[]? nanRows)
    {
        public int[] Start => start;

        public double[] Weights => weights;

        public int Rows => start.Length;

        public bool HasNaNRows => nanRows is not null;

        public bool IsNaNRow(int k) => nanRows?[k] ?? false;

        public int Length(int k) => offset[k + 1] - offset[k];

        public ReadOnlySpan<double> RowWeights(int k) => weights.AsSpan(offset[k], Length(k));

        /// <summary>
        /// y = this · x for eight spectra at once, interleaved: x[8 c + s] is column c of spectrum s, y[8 k + s] row k.
        /// Each weight multiplies one vector of eight spectra (no horizontal sums, no padding).
        /// </summary>
        public void ApplyInterleaved8(ReadOnlySpan<double> x, Span<double> y)
        {
            ref double w = ref MemoryMarshal.GetArrayDataReference(weights);
            ref double xr = ref MemoryMarshal.GetReference(x);
            ref double yr = ref MemoryMarshal.GetReference(y);
            if (y.Length < Rows * 8) throw new ArgumentException("The output is too short.", nameof(y));
            for (int k = 0; k < Rows; k++)
            {
                if (nanRows is not null && nanRows[k]) { Vector512.Create(double.NaN).StoreUnsafe(ref yr, (nuint)(8 * k)); continue; }
                int len = length[k], first = start[k] + lead[k];
                if ((first + len) * 8 > x.Length) throw new ArgumentException("The row runs past the input.", nameof(x));
                ref double wk = ref Unsafe.Add(ref w, offset[k] + lead[k]);
                ref double xk = ref Unsafe.Add(ref xr, 8 * first);
                var a0 = Vector512<double>.Zero;
                var a1 = Vector512<double>.Zero;
                var a2 = Vector512<double>.Zero;
                var a3 = Vector512<double>.Zero;
                int j = 0;
                for (; j <= len - 4; j += 4)
                {
                    a0 = Vector512.FusedMultiplyAdd(Vector512.Create(Unsafe.Add(ref wk, j)), Vector512.LoadUnsafe(ref xk, (nuint)(8 * j)), a0);
                    a1 = Vector512.FusedMultiplyAdd(Vector512.Create(Unsafe.Add(ref wk, j + 1)), Vector512.LoadUnsafe(ref xk, (nuint)(8 * j + 8)), a1);
                    a2 = Vector512.FusedMultiplyAdd(Vector512.Create(Unsafe.Add(ref wk, j + 2)), Vector512.LoadUnsafe(ref xk, (nuint)(8 * j + 16)), a2);
                    a3 = Vector512.FusedMultiplyAdd(Vector512.Create(Unsafe.Add(ref wk, j + 3)), Vector512.LoadUnsafe(ref xk, (nuint)(8 * j + 24)), a3);
                }
                for (; j < len; j++)
                    a0 = Vector512.FusedMultiplyAdd(Vector512.Create(Unsafe.Add(ref wk, j)), Vector512.LoadUnsafe(ref xk, (nuint)(8 * j)), a0);
                ((a0 + a1) + (a2 + a3)).StoreUnsafe(ref yr, (nuint)(8 * k));
            }
        }

        /// <summary>Mean number of weights per row without the padding.</summary>
        public double MeanRowLength => length.Length == 0 ? 0 : length.Average();

        /// <summary>y[stride k + lane] = row k · x (with squared weights when <paramref name="squared"/>).</summary>
        public void Apply(ReadOnlySpan<double> x, Span<double> y, bool squared, int stride = 1, int lane = 0)
        {
            ref double w = ref MemoryMarshal.GetArrayDataReference(weights);
            ref double xr = ref MemoryMarshal.GetReference(x);
            if ((Rows - 1) * stride + lane >= y.Length) throw new ArgumentException("The output is too short.", nameof(y));
            for (int k = 0; k < Rows; k++)
            {
                int o = offset[k], len = offset[k + 1] - o;
                if (nanRows is not null && nanRows[k]) { y[stride * k + lane] = double.NaN; continue; }
                if (start[k] + len > x.Length) throw new ArgumentException("The row runs past the input.", nameof(x));
                ref double wk = ref Unsafe.Add(ref w, o);
                ref double xk = ref Unsafe.Add(ref xr, start[k]);
                y[stride * k + lane] = squared ? DotSquared(ref wk, ref xk, len) : Dot(ref wk, ref xk, len);
            }
        }

        private static double Dot(ref double w, ref double x, int n)
        {
            int i = 0;
            double s = 0;
            if (Vector512.IsHardwareAccelerated && n >= 8)
            {
                var a0 = Vector512<double>.Zero;
                var a1 = Vector512<double>.Zero;
                for (; i <= n - 16; i += 16)
                {
                    a0 = Vector512.FusedMultiplyAdd(Vector512.LoadUnsafe(ref w, (nuint)i), Vector512.LoadUnsafe(ref x, (nuint)i), a0);
                    a1 = Vector512.FusedMultiplyAdd(Vector512.LoadUnsafe(ref w, (nuint)(i + 8)), Vector512.LoadUnsafe(ref x, (nuint)(i + 8)), a1);
                }
                for (; i <= n - 8; i += 8)
                    a0 = Vector512.FusedMultiplyAdd(Vector512.LoadUnsafe(ref w, (nuint)i), Vector512.LoadUnsafe(ref x, (nuint)i), a0);
                s = Vector512.Sum(a0 + a1);
            }
            else if (Vector256.IsHardwareAccelerated && n >= 4)
            {
                var a0 = Vector256<double>.Zero;
                for (; i <= n - 4; i += 4)
                    a0 = Vector256.FusedMultiplyAdd(Vector256.LoadUnsafe(ref w, (nuint)i), Vector256.LoadUnsafe(ref x, (nuint)i), a0);
                s = Vector256.Sum(a0);
            }
            for (; i < n; i++) s += Unsafe.Add(ref w, i) * Unsafe.Add(ref x, i);
            return s;
        }

        private static double DotSquared(ref double w, ref double x, int n)
        {
            double s = 0;
            for (int i = 0; i < n; i++)
            {
                double wi = Unsafe.Add(ref w, i);
                s += wi * wi * Unsafe.Add(ref x, i);
            }
            return s;
        }
    }
}
