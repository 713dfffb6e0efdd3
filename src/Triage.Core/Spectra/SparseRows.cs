// Sparse matrices whose rows cover contiguous columns (a first column and the weights), the form of the resampling and
// degradation operators: rows are padded with zero weights to whole vectors for one-at-a-time dot products, and blocks
// of eight inputs are interleaved (8 × 8 transposes) so that each weight multiplies eight inputs in one 512-bit
// multiply-add with no horizontal sums.
// References:
//  1. Golub, G. H. & Van Loan, C. F., "Matrix Computations", 4th ed., §1.2.5 (band matrices), §1.1 (saxpy/dot forms).
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace Triage.Core.Spectra;

/// <summary>Rows of contiguous columns, each padded with zero weights to whole vectors when the input is long enough.</summary>
internal sealed class SparseRowsBuilder(int rows, int columns, int capacity = 0)
{
    private readonly int[] _start = new int[rows];
    private readonly int[] _offset = new int[rows + 1];
    private readonly int[] _lead = new int[rows];
    private readonly int[] _length = new int[rows];
    private bool[]? _nan;
    // capacity: the weights expected with the padding, when the caller knows them (no regrowing).
    private double[] _weights = new double[Math.Max(16, Math.Max(capacity, rows * 8))];
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
        if (SparseRows.Lanes > 1 && columns >= SparseRows.Lanes && length % SparseRows.Lanes != 0) padded = (length / SparseRows.Lanes + 1) * SparseRows.Lanes;
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
internal sealed class SparseRows(int[] start, int[] offset, int[] lead, int[] length, double[] weights, bool[]? nanRows)
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
        int k = 0;
        for (; k + 1 < Rows; k += 2)
        {
            // Two neighbouring rows overlap in most of their columns: each input vector there is loaded once for both.
            int f0 = start[k] + lead[k], e0 = f0 + length[k], f1 = start[k + 1] + lead[k + 1], e1 = f1 + length[k + 1];
            if ((nanRows is not null && (nanRows[k] || nanRows[k + 1])) || f1 < f0 || e1 < e0 || f1 > e0)
            {
                ApplyRow8(ref w, ref xr, x.Length, ref yr, k);
                ApplyRow8(ref w, ref xr, x.Length, ref yr, k + 1);
                continue;
            }
            if (e1 * 8 > x.Length) throw new ArgumentException("The row runs past the input.", nameof(x));
            // w0[c] and w1[c]: the weights of rows k and k + 1 at column c.
            ref double w0 = ref Unsafe.Subtract(ref Unsafe.Add(ref w, offset[k] + lead[k]), f0);
            ref double w1 = ref Unsafe.Subtract(ref Unsafe.Add(ref w, offset[k + 1] + lead[k + 1]), f1);
            var a0 = Vector512<double>.Zero; var a1 = Vector512<double>.Zero;
            var b0 = Vector512<double>.Zero; var b1 = Vector512<double>.Zero;
            int c = f0;
            for (; c < f1; c++)
                a0 = Vector512.FusedMultiplyAdd(Vector512.Create(Unsafe.Add(ref w0, c)), Vector512.LoadUnsafe(ref xr, (nuint)(8 * c)), a0);
            for (; c + 1 < e0; c += 2)
            {
                var x0 = Vector512.LoadUnsafe(ref xr, (nuint)(8 * c));
                var x1 = Vector512.LoadUnsafe(ref xr, (nuint)(8 * c + 8));
                a0 = Vector512.FusedMultiplyAdd(Vector512.Create(Unsafe.Add(ref w0, c)), x0, a0);
                b0 = Vector512.FusedMultiplyAdd(Vector512.Create(Unsafe.Add(ref w1, c)), x0, b0);
                a1 = Vector512.FusedMultiplyAdd(Vector512.Create(Unsafe.Add(ref w0, c + 1)), x1, a1);
                b1 = Vector512.FusedMultiplyAdd(Vector512.Create(Unsafe.Add(ref w1, c + 1)), x1, b1);
            }
            if (c < e0)
            {
                var x0 = Vector512.LoadUnsafe(ref xr, (nuint)(8 * c));
                a0 = Vector512.FusedMultiplyAdd(Vector512.Create(Unsafe.Add(ref w0, c)), x0, a0);
                b0 = Vector512.FusedMultiplyAdd(Vector512.Create(Unsafe.Add(ref w1, c)), x0, b0);
                c++;
            }
            for (; c < e1; c++)
                b1 = Vector512.FusedMultiplyAdd(Vector512.Create(Unsafe.Add(ref w1, c)), Vector512.LoadUnsafe(ref xr, (nuint)(8 * c)), b1);
            (a0 + a1).StoreUnsafe(ref yr, (nuint)(8 * k));
            (b0 + b1).StoreUnsafe(ref yr, (nuint)(8 * k + 8));
        }
        for (; k < Rows; k++) ApplyRow8(ref w, ref xr, x.Length, ref yr, k);
    }

    /// <summary>Row k of <see cref="ApplyInterleaved8"/> on its own.</summary>
    private void ApplyRow8(ref double w, ref double xr, int xLength, ref double yr, int k)
    {
        if (nanRows is not null && nanRows[k]) { Vector512.Create(double.NaN).StoreUnsafe(ref yr, (nuint)(8 * k)); return; }
        int len = length[k], first = start[k] + lead[k];
        if ((first + len) * 8 > xLength) throw new ArgumentException("The row runs past the input.", "x");
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

    /// <summary>
    /// y = this · x for each x, in interleaved blocks of eight with 512-bit vectors (one at a time without them, or for a
    /// block holding a NaN, which <paramref name="one"/> handles).
    /// </summary>
    public double[][] ApplyMany(IReadOnlyList<double[]> xs, int columns, Func<double[], double[]> one)
    {
        var results = new double[xs.Count][];
        int b = 0;
        if (Vector512.IsHardwareAccelerated && xs.Count >= Block)
        {
            var x = GC.AllocateUninitializedArray<double>(Block * columns);
            var y = GC.AllocateUninitializedArray<double>(Block * Rows);
            for (; b + Block <= xs.Count; b += Block)
            {
                bool clean = true;
                for (int s = 0; s < Block; s++) clean &= xs[b + s].Length == columns;
                if (!clean || !Interleave(xs, b, x))
                {
                    for (int s = 0; s < Block; s++) results[b + s] = one(xs[b + s]);
                    continue;
                }
                ApplyInterleaved8(x, y);
                Deinterleave(y, results, b, Rows);
            }
        }
        for (; b < xs.Count; b++) results[b] = one(xs[b]);
        return results;
    }

    internal static bool HasNaN(double[] values)
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
    internal static readonly int Lanes = Vector512.IsHardwareAccelerated ? 8 : Vector256.IsHardwareAccelerated ? 4 : 1;


    /// <summary>
    /// x[8 i + s] = fluxes[from + s][i] for the eight fluxes of a block, by 8 × 8 transposes; false when a value is NaN
    /// (seen on the way, so the fluxes are read once).
    /// </summary>
    internal static bool Interleave(IReadOnlyList<double[]> fluxes, int from, double[] x)
    {
        var f0 = fluxes[from]; var f1 = fluxes[from + 1]; var f2 = fluxes[from + 2]; var f3 = fluxes[from + 3];
        var f4 = fluxes[from + 4]; var f5 = fluxes[from + 5]; var f6 = fluxes[from + 6]; var f7 = fluxes[from + 7];
        int n = f0.Length;
        if (f1.Length != n || f2.Length != n || f3.Length != n || f4.Length != n || f5.Length != n || f6.Length != n || f7.Length != n
            || x.Length < Block * n)
            throw new ArgumentException("The fluxes of a block differ in length.", nameof(fluxes));
        int i = 0;
        bool clean = true;
        if (Avx512F.IsSupported)
        {
            ref double xr = ref MemoryMarshal.GetArrayDataReference(x);
            var same = Vector512<double>.AllBitsSet;
            for (; i <= n - Block; i += Block)
            {
                var r0 = Vector512.Create(f0, i); var r1 = Vector512.Create(f1, i); var r2 = Vector512.Create(f2, i); var r3 = Vector512.Create(f3, i);
                var r4 = Vector512.Create(f4, i); var r5 = Vector512.Create(f5, i); var r6 = Vector512.Create(f6, i); var r7 = Vector512.Create(f7, i);
                // NaN is the one value unequal to itself.
                same &= Vector512.Equals(r0, r0) & Vector512.Equals(r1, r1) & Vector512.Equals(r2, r2) & Vector512.Equals(r3, r3)
                        & Vector512.Equals(r4, r4) & Vector512.Equals(r5, r5) & Vector512.Equals(r6, r6) & Vector512.Equals(r7, r7);
                Transpose8(ref r0, ref r1, ref r2, ref r3, ref r4, ref r5, ref r6, ref r7);
                ref double d = ref Unsafe.Add(ref xr, Block * i);
                r0.StoreUnsafe(ref d, 0); r1.StoreUnsafe(ref d, 8); r2.StoreUnsafe(ref d, 16); r3.StoreUnsafe(ref d, 24);
                r4.StoreUnsafe(ref d, 32); r5.StoreUnsafe(ref d, 40); r6.StoreUnsafe(ref d, 48); r7.StoreUnsafe(ref d, 56);
            }
            clean = Vector512.EqualsAll(same.AsUInt64(), Vector512<ulong>.AllBitsSet);
        }
        for (; i < n; i++)
        {
            var v = Vector512.Create(f0[i], f1[i], f2[i], f3[i], f4[i], f5[i], f6[i], f7[i]);
            clean &= Vector512.EqualsAll(v, v);
            v.CopyTo(x, Block * i);
        }
        return clean;
    }

    /// <summary>The inverse of <see cref="Interleave"/>: y[8 k + s] into results[from + s][k].</summary>
    internal static void Deinterleave(double[] y, double[][] results, int from, int count)
    {
        // Every value is written below, so the arrays need no zeroing.
        var d0 = results[from] = GC.AllocateUninitializedArray<double>(count); var d1 = results[from + 1] = GC.AllocateUninitializedArray<double>(count);
        var d2 = results[from + 2] = GC.AllocateUninitializedArray<double>(count); var d3 = results[from + 3] = GC.AllocateUninitializedArray<double>(count);
        var d4 = results[from + 4] = GC.AllocateUninitializedArray<double>(count); var d5 = results[from + 5] = GC.AllocateUninitializedArray<double>(count);
        var d6 = results[from + 6] = GC.AllocateUninitializedArray<double>(count); var d7 = results[from + 7] = GC.AllocateUninitializedArray<double>(count);
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
    internal const int Block = 8;
}
