using System;
#if NET
using System.Numerics;
using System.Runtime.InteropServices;
#endif

namespace OnlineRidge.Internal
{
    /// <summary>
    /// Span kernels of the covariance and information forms on symmetric matrices held as a packed upper triangle: row i of an order-d
    /// matrix starts at <see cref="RowOffset"/>(i, d) and holds the entries (i, i), (i, i+1), …, (i, d−1) contiguously, d(d+1)/2 values in all.
    /// Every row operation is a contiguous dot product or axpy (vectorized with <c>System.Numerics.Vector</c> in the net10.0 build).
    /// No allocation. Exact symmetry holds by construction: only one copy of each off-diagonal entry exists.
    /// </summary>
    internal static class RecursiveKernels
    {
        /// <summary>Number of values in a packed upper triangle of order d.</summary>
        public static int PackedLength(int d) => d * (d + 1) / 2;

        /// <summary>Offset of entry (i, i) in a packed upper triangle of order d.</summary>
        public static int RowOffset(int i, int d) => (i * d) - (i * (i - 1) / 2);

        /// <summary>Offset of entry (i, j), i ≤ j, in a packed upper triangle of order d.</summary>
        public static int Index(int i, int j, int d) => RowOffset(i, d) + (j - i);

        /// <summary>v = P·x for symmetric P (packed upper triangle, order d). d² multiply-adds.</summary>
        public static void SymmetricMultiply(ReadOnlySpan<double> packed, int d, ReadOnlySpan<double> x, Span<double> v)
        {
            v.Slice(0, d).Clear();
            int o = 0;
            for (int i = 0; i < d; i++)
            {
                int len = d - i;
                ReadOnlySpan<double> row = packed.Slice(o, len);

                // Row i of the upper triangle contributes (P x)_i over j ≥ i and, through symmetry, x_i·P_ij to (P x)_j for j > i:
                // one pass over the row does both, so each entry is loaded once.
                v[i] += (row[0] * x[i]) + DotAxpy(row.Slice(1), x.Slice(i + 1, len - 1), x[i], v.Slice(i + 1, len - 1));
                o += len;
            }
        }

        /// <summary>Returns Σ rⱼ bⱼ and sets y ← y + a·r, over r's length, in one pass.</summary>
        private static double DotAxpy(ReadOnlySpan<double> r, ReadOnlySpan<double> b, double a, Span<double> y)
        {
            int n = r.Length;
            int j = 0;
            double s = 0.0;
#if NET
            if (Vector.IsHardwareAccelerated && n >= Vector<double>.Count)
            {
                ReadOnlySpan<Vector<double>> vr = MemoryMarshal.Cast<double, Vector<double>>(r);
                ReadOnlySpan<Vector<double>> vb = MemoryMarshal.Cast<double, Vector<double>>(b.Slice(0, n));
                Span<Vector<double>> vy = MemoryMarshal.Cast<double, Vector<double>>(y.Slice(0, n));
                var va = new Vector<double>(a);
                Vector<double> acc = Vector<double>.Zero;
                for (int k = 0; k < vr.Length; k++)
                {
                    Vector<double> rk = vr[k];
                    acc += rk * vb[k];
                    vy[k] += va * rk;
                }

                s = GramUpdateKernels.SumOfLanes(acc);
                j = vr.Length * Vector<double>.Count;
            }
#endif
            for (; j < n; j++)
            {
                s += r[j] * b[j];
                y[j] += a * r[j];
            }

            return s;
        }

        /// <summary>
        /// Symmetric covariance update (MATH.md §2.2 item 1): destination ← (source − g·v·vᵀ)/β over the upper triangle, from the computed
        /// v = P·x only. Returns 0 when every new entry is finite and every new diagonal entry positive; otherwise a non-zero code
        /// (1 = non-finite, 2 = non-positive diagonal) with the offending row in <paramref name="failIndex"/> and value in <paramref name="failValue"/>.
        /// 1.5·d(d+1)/2 operations (a division per entry when β ≠ 1: division keeps the forgetting exact to rounding, a reciprocal would
        /// bias every step in the same direction). With <paramref name="stride"/> &gt; 0 the matrices are dense row-major with that row stride
        /// instead of packed, and only the upper triangle (j ≥ i) of each row is written.
        /// </summary>
        public static int CovarianceUpdate(ReadOnlySpan<double> source, Span<double> destination, int d, double g, ReadOnlySpan<double> v, double beta, out int failIndex, out double failValue, int stride = 0)
        {
            // One pass per row: destination = (source + a·v)/β with a = −g·vᵢ, and the finiteness probe of the new row, fused so that each
            // entry is loaded and stored once (the same operations, in the same order, as copy, axpy, divide and check in turn).
            int o = 0;
            for (int i = 0; i < d; i++)
            {
                int len = d - i;
                ReadOnlySpan<double> src = source.Slice(o, len);
                Span<double> dst = destination.Slice(o, len);
                double probe = beta == 1.0
                    ? RankOneRow(src, dst, -g * v[i], v.Slice(i, len))
                    : RankOneRowDivide(src, dst, -g * v[i], v.Slice(i, len), beta);

                // 0·value is 0 for finite values and NaN for ±∞ and NaN, so one sum tests the whole row without branches and cannot overflow.
                int code = probe != 0.0 ? 1 : (dst[0] > 0.0 ? 0 : 2);
                if (code != 0)
                {
                    failIndex = i;
                    failValue = dst[0];
                    return code;
                }

                o += stride == 0 ? len : stride + 1;
            }

            failIndex = -1;
            failValue = double.NaN;
            return 0;
        }

        /// <summary>dst ← src + a·x over x's length; returns Σ 0·dstⱼ (0 exactly when every new entry is finite).</summary>
        private static double RankOneRow(ReadOnlySpan<double> src, Span<double> dst, double a, ReadOnlySpan<double> x)
        {
            int n = x.Length;
            int j = 0;
            double probe = 0.0;
#if NET
            if (Vector.IsHardwareAccelerated && n >= Vector<double>.Count)
            {
                ReadOnlySpan<Vector<double>> vs = MemoryMarshal.Cast<double, Vector<double>>(src.Slice(0, n));
                ReadOnlySpan<Vector<double>> vx = MemoryMarshal.Cast<double, Vector<double>>(x);
                Span<Vector<double>> vd = MemoryMarshal.Cast<double, Vector<double>>(dst.Slice(0, n));
                var va = new Vector<double>(a);
                Vector<double> acc = Vector<double>.Zero;
                for (int k = 0; k < vx.Length; k++)
                {
                    Vector<double> value = vs[k] + (va * vx[k]);
                    vd[k] = value;
                    acc += Vector<double>.Zero * value;
                }

                probe = GramUpdateKernels.SumOfLanes(acc);
                j = vx.Length * Vector<double>.Count;
            }
#endif
            for (; j < n; j++)
            {
                double value = src[j] + (a * x[j]);
                dst[j] = value;
                probe += 0.0 * value;
            }

            return probe;
        }

        /// <summary>dst ← (src + a·x)/β over x's length; returns Σ 0·dstⱼ (0 exactly when every new entry is finite).</summary>
        private static double RankOneRowDivide(ReadOnlySpan<double> src, Span<double> dst, double a, ReadOnlySpan<double> x, double beta)
        {
            int n = x.Length;
            int j = 0;
            double probe = 0.0;
#if NET
            if (Vector.IsHardwareAccelerated && n >= Vector<double>.Count)
            {
                ReadOnlySpan<Vector<double>> vs = MemoryMarshal.Cast<double, Vector<double>>(src.Slice(0, n));
                ReadOnlySpan<Vector<double>> vx = MemoryMarshal.Cast<double, Vector<double>>(x);
                Span<Vector<double>> vd = MemoryMarshal.Cast<double, Vector<double>>(dst.Slice(0, n));
                var va = new Vector<double>(a);
                var vb = new Vector<double>(beta);
                Vector<double> acc = Vector<double>.Zero;
                for (int k = 0; k < vx.Length; k++)
                {
                    Vector<double> value = (vs[k] + (va * vx[k])) / vb;
                    vd[k] = value;
                    acc += Vector<double>.Zero * value;
                }

                probe = GramUpdateKernels.SumOfLanes(acc);
                j = vx.Length * Vector<double>.Count;
            }
#endif
            for (; j < n; j++)
            {
                double value = (src[j] + (a * x[j])) / beta;
                dst[j] = value;
                probe += 0.0 * value;
            }

            return probe;
        }

        /// <summary>
        /// Joseph-like covariance update (MATH.md §2.2 item 2, Bucy &amp; Joseph 1968): destination ← (source − k·vᵀ − v·kᵀ + (d/w)·k·kᵀ)/β,
        /// upper triangle, with the computed gain k. Same return convention and <paramref name="stride"/> meaning as <see cref="CovarianceUpdate"/>.
        /// About 2.5·d(d+1)/2 operations.
        /// </summary>
        public static int JosephUpdate(ReadOnlySpan<double> source, Span<double> destination, int d, ReadOnlySpan<double> k, ReadOnlySpan<double> v, double dOverW, double beta, out int failIndex, out double failValue, int stride = 0)
        {
            int o = 0;
            for (int i = 0; i < d; i++)
            {
                int len = d - i;
                ReadOnlySpan<double> src = source.Slice(o, len);
                Span<double> dst = destination.Slice(o, len);
                src.CopyTo(dst);
                Axpy(-k[i], v.Slice(i, len), dst);
                Axpy(-v[i], k.Slice(i, len), dst);
                Axpy(dOverW * k[i], k.Slice(i, len), dst);
                if (beta != 1.0)
                {
                    Divide(dst, beta);
                }

                int code = CheckRow(dst);
                if (code != 0)
                {
                    failIndex = i;
                    failValue = dst[0];
                    return code;
                }

                o += stride == 0 ? len : stride + 1;
            }

            failIndex = -1;
            failValue = double.NaN;
            return 0;
        }

        /// <summary>
        /// EFRA covariance update (MATH.md §2.4c, Salgado, Goodwin &amp; Middleton 1988) on dense symmetric matrices of order d with row stride
        /// <paramref name="stride"/> (both triangles stored in the source): destination ← source/β − g·v·vᵀ + b·I − c·source², upper triangle
        /// only (the caller mirrors it), with g = α·w/(1 + w·xᵀPx) and v = P·x computed by the caller. Entry (i, j) of source² is the dot
        /// product of rows i and j (symmetry), so the cost is about d³/2 + 2·d² multiply-adds. Same return convention as <see cref="CovarianceUpdate"/>.
        /// </summary>
        public static int ResettingUpdate(ReadOnlySpan<double> source, Span<double> destination, int d, int stride, double g, ReadOnlySpan<double> v, double beta, double addition, double contraction, out int failIndex, out double failValue)
        {
            for (int i = 0; i < d; i++)
            {
                ReadOnlySpan<double> rowI = source.Slice(i * stride, d);
                ReadOnlySpan<double> src = source.Slice((i * stride) + i, d - i);
                Span<double> dst = destination.Slice((i * stride) + i, d - i);
                double gi = g * v[i];
                for (int j = 0; j < dst.Length; j++)
                {
                    double square = CovarianceKernels.Dot(source.Slice((i + j) * stride, d), rowI);
                    dst[j] = (src[j] / beta) - (gi * v[i + j]) - (contraction * square);
                }

                dst[0] += addition;
                int code = CheckRow(dst);
                if (code != 0)
                {
                    failIndex = i;
                    failValue = dst[0];
                    return code;
                }
            }

            failIndex = -1;
            failValue = double.NaN;
            return 0;
        }

        /// <summary>Writes the full d×d row-major matrix (both triangles) of a packed upper triangle.</summary>
        public static void Unpack(ReadOnlySpan<double> packed, int d, Span<double> full)
        {
            int o = 0;
            for (int i = 0; i < d; i++)
            {
                for (int j = i; j < d; j++)
                {
                    double value = packed[o + (j - i)];
                    full[(i * d) + j] = value;
                    full[(j * d) + i] = value;
                }

                o += d - i;
            }
        }

        /// <summary>y ← y + a·x over x's length.</summary>
        public static void Axpy(double a, ReadOnlySpan<double> x, Span<double> y)
        {
            int n = x.Length;
            int i = 0;
#if NET
            if (Vector.IsHardwareAccelerated && n >= Vector<double>.Count)
            {
                ReadOnlySpan<Vector<double>> vx = MemoryMarshal.Cast<double, Vector<double>>(x);
                Span<Vector<double>> vy = MemoryMarshal.Cast<double, Vector<double>>(y.Slice(0, n));
                var va = new Vector<double>(a);
                for (int k = 0; k < vx.Length; k++)
                {
                    vy[k] += va * vx[k];
                }

                i = vx.Length * Vector<double>.Count;
            }
#endif
            for (; i < n; i++)
            {
                y[i] += a * x[i];
            }
        }

        private static void Divide(Span<double> y, double divisor)
        {
            int n = y.Length;
            int i = 0;
#if NET
            if (Vector.IsHardwareAccelerated && n >= Vector<double>.Count)
            {
                Span<Vector<double>> vy = MemoryMarshal.Cast<double, Vector<double>>(y);
                var vd = new Vector<double>(divisor);
                for (int k = 0; k < vy.Length; k++)
                {
                    vy[k] /= vd;
                }

                i = vy.Length * Vector<double>.Count;
            }
#endif
            for (; i < n; i++)
            {
                y[i] /= divisor;
            }
        }

        /// <summary>0 if the row (diagonal first) is finite with a positive diagonal; 1 if an entry is not finite; 2 if the diagonal is not positive.</summary>
        private static int CheckRow(ReadOnlySpan<double> row)
        {
            // 0·value is 0 for finite values and NaN for ±∞ and NaN, so one sum tests the whole row without branches and cannot overflow.
            double probe = 0.0;
            for (int j = 0; j < row.Length; j++)
            {
                probe += 0.0 * row[j];
            }

            if (probe != 0.0)
            {
                return 1;
            }

            return row[0] > 0.0 ? 0 : 2;
        }
    }
}
