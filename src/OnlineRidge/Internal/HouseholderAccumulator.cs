using System;
#if NET
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;
#endif

namespace OnlineRidge.Internal
{
    /// <summary>
    /// Streams rows [x, y] (c = p + 1 columns) into the upper-triangular factor T = [[R, z], [0, ρ]] of the stacked rows by Householder
    /// reflections applied to blocks of rows (structured QR of [T; block], cf. LAPACK's triangular-pentagonal QR). Each row is read once;
    /// cost ≈ c² multiply-adds per row (a dot product and an update over the block rows for every pair of columns); memory c² + c·blockRows.
    /// After <see cref="Flush"/> the diagonal of T is non-negative.
    /// Backward stable (Golub and Van Loan 2013, §5.2): RᵀR equals the Gram matrix of the rows up to rounding of order ε·‖rows‖².
    /// </summary>
    /// <remarks>
    /// The block is column-major, so the dot products and updates of a reflection run down contiguous columns. On x64 with AVX2 and FMA
    /// two consecutive reflectors are applied per pass over the trailing columns (H_{j+1}H_j a = a − s₀v_j − s₁v_{j+1} with
    /// s₁ corrected by the cross product v_{j+1}ᵀv_j), four columns at a time with 256-bit fused multiply-adds, so each pass does twice the
    /// work per load and store of the block; elsewhere a portable scalar loop applies one reflector at a time. Both give the same bits for the same input on the same machine; they may differ from each other in the last bits
    /// (different summation order in the dot products, fused versus separate rounding).
    /// </remarks>
    internal sealed class HouseholderAccumulator
    {
        /// <summary>Default rows per block.</summary>
        public const int DefaultBlockRows = 128;

        // Sum-of-squares range inside which the unscaled norm is exact to rounding (no overflow, no loss to underflow).
        private const double SmallSquares = 1e-280;
        private const double LargeSquares = 1e280;
        private const double LargeEntry = 1e140;

        private readonly int columns;
        private readonly int blockRows;
        private readonly double[] factor;   // c×c row-major, upper triangular
        private readonly double[] block;    // column-major: block[k * blockRows + r]
        private int pending;

        public HouseholderAccumulator(int columns, int blockRows = DefaultBlockRows)
        {
            this.columns = columns;
            this.blockRows = blockRows;
            factor = new double[columns * columns];
            block = new double[columns * blockRows];
        }

        /// <summary>Number of columns c.</summary>
        public int Columns => columns;

        /// <summary>Rows per block (the column stride of <see cref="Block"/>).</summary>
        public int BlockRows => blockRows;

        /// <summary>Rows buffered and not yet reflected.</summary>
        public int Pending => pending;

        /// <summary>The block buffer, column-major (entry (r, k) at <c>k·BlockRows + r</c>); rows from <see cref="Pending"/> on are free.</summary>
        public double[] Block => block;

        /// <summary>The factor T (c×c row-major, upper triangular). Valid after <see cref="Flush"/>.</summary>
        public double[] Factor => factor;

        /// <summary>Empties the accumulator (factor zero, no pending rows) so it can be reused for another set of rows.</summary>
        public void Reset()
        {
            Array.Clear(factor, 0, factor.Length);
            pending = 0;
        }

        /// <summary>Buffers one row (length c); reflects the block into the factor when the block is full.</summary>
        public void AddRow(ReadOnlySpan<double> row)
        {
            for (int k = 0; k < columns; k++)
            {
                block[(k * blockRows) + pending] = row[k];
            }

            Commit(1);
        }

        /// <summary>Commits <paramref name="rows"/> rows written into <see cref="Block"/> after the pending ones; reflects a full block.</summary>
        public void Commit(int rows)
        {
            pending += rows;
            if (pending >= blockRows)
            {
                ReduceBlock(block, pending);
                pending = 0;
            }
        }

        /// <summary>
        /// Reflects an external column-major block (stride <see cref="BlockRows"/>, <paramref name="rows"/> ≤ BlockRows rows) into the
        /// factor. The block is overwritten (it receives the Householder vectors). Rows pending in the internal block are not touched.
        /// </summary>
        public void ReduceExternal(Span<double> external, int rows)
        {
            if (rows > blockRows || external.Length < ((columns - 1) * blockRows) + rows)
            {
                Guard.ThrowArgument(nameof(external), "external block too short or too many rows.");
            }

            if (rows > 0)
            {
                ReduceBlock(external, rows);
            }
        }

        /// <summary>Reflects any buffered rows into the factor and makes its diagonal non-negative.</summary>
        public void Flush()
        {
            if (pending > 0)
            {
                ReduceBlock(block, pending);
                pending = 0;
            }

            for (int j = 0; j < columns; j++)
            {
                int row = j * columns;
                if (factor[row + j] < 0.0)
                {
                    for (int k = j; k < columns; k++)
                    {
                        factor[row + k] = -factor[row + k];
                    }
                }
            }
        }

        private void ReduceBlock(Span<double> v, int m)
        {
            int c = columns;
            int b = blockRows;
            double[] t = factor;
            int j = 0;
            while (j < c)
            {
                Span<double> vj = v.Slice(j * b, m);
                if (!Reflector(vj, t[(j * c) + j], out double beta, out double tau))
                {
                    j++;
                    continue;
                }

                t[(j * c) + j] = beta;
#if NET
                if (GramKernels.IsVectorized && c - j >= 6)
                {
                    // Two reflectors per pass over the trailing columns: apply H_j to column j+1, form H_{j+1}, then update every further
                    // column by both (the cross term w = v_{j+1}ᵀv_j corrects the second dot product), halving the passes over the block.
                    ApplyOne(v, b, m, j, j + 1, t, tau);
                    Span<double> vj1 = v.Slice((j + 1) * b, m);
                    if (!Reflector(vj1, t[((j + 1) * c) + j + 1], out double beta1, out double tau1))
                    {
                        ApplyRest(v, b, m, j, j + 2, t, tau);
                        j += 2;
                        continue;
                    }

                    t[((j + 1) * c) + j + 1] = beta1;
                    double w = Dot(vj1, vj);
                    int k = j + 2;
                    for (; k + 4 <= c; k += 4)
                    {
                        Apply2x4(v, b, m, j, k, t, c, tau, tau1, w);
                    }

                    for (; k < c; k++)
                    {
                        Span<double> vk = v.Slice(k * b, m);
                        double s0 = tau * (t[(j * c) + k] + Dot(vj, vk));
                        double s1 = tau1 * ((t[((j + 1) * c) + k] + Dot(vj1, vk)) - (s0 * w));
                        t[(j * c) + k] -= s0;
                        t[((j + 1) * c) + k] -= s1;
                        Axpy(-s0, vj, vk);
                        Axpy(-s1, vj1, vk);
                    }

                    j += 2;
                    continue;
                }
#endif
                ApplyRest(v, b, m, j, j + 1, t, tau);
                j++;
            }
        }

        /// <summary>Applies reflector j to columns from..c−1.</summary>
        private void ApplyRest(Span<double> v, int b, int m, int j, int from, double[] t, double tau)
        {
            int c = columns;
            int k = from;
#if NET
            if (GramKernels.IsVectorized)
            {
                for (; k + 4 <= c; k += 4)
                {
                    Apply4(v, b, m, j, k, t, (j * c) + k, tau);
                }
            }
#endif
            for (; k < c; k++)
            {
                ApplyOne(v, b, m, j, k, t, tau);
            }
        }

        /// <summary>Applies reflector j to column k.</summary>
        private void ApplyOne(Span<double> v, int b, int m, int j, int k, double[] t, double tau)
        {
            int c = columns;
            Span<double> vj = v.Slice(j * b, m);
            Span<double> vk = v.Slice(k * b, m);
            double s = t[(j * c) + k] + Dot(vj, vk);
            s *= tau;
            t[(j * c) + k] -= s;
            Axpy(-s, vj, vk);
        }

        /// <summary>
        /// The reflector of column j, H = I − τ·[1; v][1; v]ᵀ, that maps [α; x] to [β; 0]: scales x into v in place.
        /// Returns false when x is zero (no reflection needed).
        /// </summary>
        private static bool Reflector(Span<double> x, double alpha, out double beta, out double tau)
        {
            double ss = SumOfSquares(x);
            double norm;
            if (ss > SmallSquares && ss < LargeSquares && Math.Abs(alpha) < LargeEntry)
            {
                norm = Math.Sqrt((alpha * alpha) + ss);
            }
            else
            {
                // Rare: entries so large or small that the squares over- or underflow; scale by the largest entry first.
                double scale = 0.0;
                for (int r = 0; r < x.Length; r++)
                {
                    scale = Math.Max(scale, Math.Abs(x[r]));
                }

                if (scale == 0.0)
                {
                    beta = 0.0;
                    tau = 0.0;
                    return false;
                }

                double xnorm2 = 0.0;
                for (int r = 0; r < x.Length; r++)
                {
                    double q = x[r] / scale;
                    xnorm2 += q * q;
                }

                double a = alpha / scale;
                norm = scale * Math.Sqrt((a * a) + xnorm2);
            }

            beta = alpha >= 0.0 ? -norm : norm;
            double v0 = alpha - beta;
            tau = (beta - alpha) / beta;
            double inv = 1.0 / v0;
            for (int r = 0; r < x.Length; r++)
            {
                x[r] *= inv;
            }

            return true;
        }

        private static double SumOfSquares(ReadOnlySpan<double> x) => Dot(x, x);

        private static double Dot(ReadOnlySpan<double> a, ReadOnlySpan<double> b)
        {
            int n = a.Length;
            int r = 0;
            double s = 0.0;
#if NET
            if (GramKernels.IsVectorized && n >= 8)
            {
                ref double ar = ref MemoryMarshal.GetReference(a);
                ref double br = ref MemoryMarshal.GetReference(b);
                Vector256<double> s0 = Vector256<double>.Zero;
                Vector256<double> s1 = Vector256<double>.Zero;
                for (; r + 8 <= n; r += 8)
                {
                    s0 = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref ar, (nuint)r), Vector256.LoadUnsafe(ref br, (nuint)r), s0);
                    s1 = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref ar, (nuint)r + 4), Vector256.LoadUnsafe(ref br, (nuint)r + 4), s1);
                }

                s = HorizontalSum(s0 + s1);
                for (; r < n; r++)
                {
                    s = Math.FusedMultiplyAdd(a[r], b[r], s);
                }

                return s;
            }
#endif
            for (; r < n; r++)
            {
                s += a[r] * b[r];
            }

            return s;
        }

        private static void Axpy(double alpha, ReadOnlySpan<double> x, Span<double> y)
        {
            int n = x.Length;
            int r = 0;
#if NET
            if (GramKernels.IsVectorized)
            {
                ref double xr = ref MemoryMarshal.GetReference(x);
                ref double yr = ref MemoryMarshal.GetReference(y);
                Vector256<double> va = Vector256.Create(alpha);
                for (; r + 4 <= n; r += 4)
                {
                    Fma.MultiplyAdd(va, Vector256.LoadUnsafe(ref xr, (nuint)r), Vector256.LoadUnsafe(ref yr, (nuint)r)).StoreUnsafe(ref yr, (nuint)r);
                }

                for (; r < n; r++)
                {
                    y[r] = Math.FusedMultiplyAdd(alpha, x[r], y[r]);
                }

                return;
            }
#endif
            for (; r < n; r++)
            {
                y[r] += alpha * x[r];
            }
        }

#if NET
        private static double HorizontalSum(Vector256<double> v)
        {
            Vector128<double> h = v.GetLower() + v.GetUpper();
            return h.GetElement(0) + h.GetElement(1);
        }

        /// <summary>Applies reflector j to columns k..k+3: one pass of four dot products, then one pass of four updates.</summary>
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
        private static void Apply4(Span<double> v, int b, int m, int j, int k, double[] t, int tj, double tau)
        {
            ref double vr = ref MemoryMarshal.GetReference(v);
            ref double pj = ref Unsafe.Add(ref vr, j * b);
            ref double p0 = ref Unsafe.Add(ref vr, k * b);
            ref double p1 = ref Unsafe.Add(ref p0, b);
            ref double p2 = ref Unsafe.Add(ref p1, b);
            ref double p3 = ref Unsafe.Add(ref p2, b);
            Vector256<double> a0 = Vector256<double>.Zero;
            Vector256<double> a1 = Vector256<double>.Zero;
            Vector256<double> a2 = Vector256<double>.Zero;
            Vector256<double> a3 = Vector256<double>.Zero;
            Vector256<double> e0 = Vector256<double>.Zero;
            Vector256<double> e1 = Vector256<double>.Zero;
            Vector256<double> e2 = Vector256<double>.Zero;
            Vector256<double> e3 = Vector256<double>.Zero;
            int r = 0;
            for (; r + 8 <= m; r += 8)
            {
                nuint u = (nuint)r;
                Vector256<double> x = Vector256.LoadUnsafe(ref pj, u);
                a0 = Fma.MultiplyAdd(x, Vector256.LoadUnsafe(ref p0, u), a0);
                a1 = Fma.MultiplyAdd(x, Vector256.LoadUnsafe(ref p1, u), a1);
                a2 = Fma.MultiplyAdd(x, Vector256.LoadUnsafe(ref p2, u), a2);
                a3 = Fma.MultiplyAdd(x, Vector256.LoadUnsafe(ref p3, u), a3);
                x = Vector256.LoadUnsafe(ref pj, u + 4);
                e0 = Fma.MultiplyAdd(x, Vector256.LoadUnsafe(ref p0, u + 4), e0);
                e1 = Fma.MultiplyAdd(x, Vector256.LoadUnsafe(ref p1, u + 4), e1);
                e2 = Fma.MultiplyAdd(x, Vector256.LoadUnsafe(ref p2, u + 4), e2);
                e3 = Fma.MultiplyAdd(x, Vector256.LoadUnsafe(ref p3, u + 4), e3);
            }

            double d0 = HorizontalSum(a0 + e0);
            double d1 = HorizontalSum(a1 + e1);
            double d2 = HorizontalSum(a2 + e2);
            double d3 = HorizontalSum(a3 + e3);
            for (int i = r; i < m; i++)
            {
                double x = Unsafe.Add(ref pj, i);
                d0 = Math.FusedMultiplyAdd(x, Unsafe.Add(ref p0, i), d0);
                d1 = Math.FusedMultiplyAdd(x, Unsafe.Add(ref p1, i), d1);
                d2 = Math.FusedMultiplyAdd(x, Unsafe.Add(ref p2, i), d2);
                d3 = Math.FusedMultiplyAdd(x, Unsafe.Add(ref p3, i), d3);
            }

            double s0 = (t[tj] + d0) * tau;
            double s1 = (t[tj + 1] + d1) * tau;
            double s2 = (t[tj + 2] + d2) * tau;
            double s3 = (t[tj + 3] + d3) * tau;
            t[tj] -= s0;
            t[tj + 1] -= s1;
            t[tj + 2] -= s2;
            t[tj + 3] -= s3;
            Vector256<double> n0 = Vector256.Create(-s0);
            Vector256<double> n1 = Vector256.Create(-s1);
            Vector256<double> n2 = Vector256.Create(-s2);
            Vector256<double> n3 = Vector256.Create(-s3);
            r = 0;
            for (; r + 4 <= m; r += 4)
            {
                nuint u = (nuint)r;
                Vector256<double> x = Vector256.LoadUnsafe(ref pj, u);
                Fma.MultiplyAdd(n0, x, Vector256.LoadUnsafe(ref p0, u)).StoreUnsafe(ref p0, u);
                Fma.MultiplyAdd(n1, x, Vector256.LoadUnsafe(ref p1, u)).StoreUnsafe(ref p1, u);
                Fma.MultiplyAdd(n2, x, Vector256.LoadUnsafe(ref p2, u)).StoreUnsafe(ref p2, u);
                Fma.MultiplyAdd(n3, x, Vector256.LoadUnsafe(ref p3, u)).StoreUnsafe(ref p3, u);
            }

            for (; r < m; r++)
            {
                double x = Unsafe.Add(ref pj, r);
                Unsafe.Add(ref p0, r) = Math.FusedMultiplyAdd(-s0, x, Unsafe.Add(ref p0, r));
                Unsafe.Add(ref p1, r) = Math.FusedMultiplyAdd(-s1, x, Unsafe.Add(ref p1, r));
                Unsafe.Add(ref p2, r) = Math.FusedMultiplyAdd(-s2, x, Unsafe.Add(ref p2, r));
                Unsafe.Add(ref p3, r) = Math.FusedMultiplyAdd(-s3, x, Unsafe.Add(ref p3, r));
            }
        }
        /// <summary>Applies reflectors j and j+1 to columns k..k+3: one pass of eight dot products, then one pass of eight updates.</summary>
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
        private static void Apply2x4(Span<double> v, int b, int m, int j, int k, double[] t, int c, double tau0, double tau1, double w)
        {
            int tj = (j * c) + k;
            ref double vr = ref MemoryMarshal.GetReference(v);
            ref double pa = ref Unsafe.Add(ref vr, j * b);
            ref double pb = ref Unsafe.Add(ref pa, b);
            ref double p0 = ref Unsafe.Add(ref vr, k * b);
            ref double p1 = ref Unsafe.Add(ref p0, b);
            ref double p2 = ref Unsafe.Add(ref p1, b);
            ref double p3 = ref Unsafe.Add(ref p2, b);
            Vector256<double> a0 = Vector256<double>.Zero;
            Vector256<double> a1 = Vector256<double>.Zero;
            Vector256<double> a2 = Vector256<double>.Zero;
            Vector256<double> a3 = Vector256<double>.Zero;
            Vector256<double> e0 = Vector256<double>.Zero;
            Vector256<double> e1 = Vector256<double>.Zero;
            Vector256<double> e2 = Vector256<double>.Zero;
            Vector256<double> e3 = Vector256<double>.Zero;
            int r = 0;
            for (; r + 4 <= m; r += 4)
            {
                nuint u = (nuint)r;
                Vector256<double> x = Vector256.LoadUnsafe(ref pa, u);
                Vector256<double> y = Vector256.LoadUnsafe(ref pb, u);
                Vector256<double> z0 = Vector256.LoadUnsafe(ref p0, u);
                Vector256<double> z1 = Vector256.LoadUnsafe(ref p1, u);
                Vector256<double> z2 = Vector256.LoadUnsafe(ref p2, u);
                Vector256<double> z3 = Vector256.LoadUnsafe(ref p3, u);
                a0 = Fma.MultiplyAdd(x, z0, a0);
                a1 = Fma.MultiplyAdd(x, z1, a1);
                a2 = Fma.MultiplyAdd(x, z2, a2);
                a3 = Fma.MultiplyAdd(x, z3, a3);
                e0 = Fma.MultiplyAdd(y, z0, e0);
                e1 = Fma.MultiplyAdd(y, z1, e1);
                e2 = Fma.MultiplyAdd(y, z2, e2);
                e3 = Fma.MultiplyAdd(y, z3, e3);
            }

            double d0 = HorizontalSum(a0);
            double d1 = HorizontalSum(a1);
            double d2 = HorizontalSum(a2);
            double d3 = HorizontalSum(a3);
            double f0 = HorizontalSum(e0);
            double f1 = HorizontalSum(e1);
            double f2 = HorizontalSum(e2);
            double f3 = HorizontalSum(e3);
            for (int i = r; i < m; i++)
            {
                double x = Unsafe.Add(ref pa, i);
                double y = Unsafe.Add(ref pb, i);
                d0 = Math.FusedMultiplyAdd(x, Unsafe.Add(ref p0, i), d0);
                d1 = Math.FusedMultiplyAdd(x, Unsafe.Add(ref p1, i), d1);
                d2 = Math.FusedMultiplyAdd(x, Unsafe.Add(ref p2, i), d2);
                d3 = Math.FusedMultiplyAdd(x, Unsafe.Add(ref p3, i), d3);
                f0 = Math.FusedMultiplyAdd(y, Unsafe.Add(ref p0, i), f0);
                f1 = Math.FusedMultiplyAdd(y, Unsafe.Add(ref p1, i), f1);
                f2 = Math.FusedMultiplyAdd(y, Unsafe.Add(ref p2, i), f2);
                f3 = Math.FusedMultiplyAdd(y, Unsafe.Add(ref p3, i), f3);
            }

            int tn = tj + c; // row j+1 of T, same columns
            double s0 = tau0 * (t[tj] + d0);
            double s1 = tau0 * (t[tj + 1] + d1);
            double s2 = tau0 * (t[tj + 2] + d2);
            double s3 = tau0 * (t[tj + 3] + d3);
            double q0 = tau1 * ((t[tn] + f0) - (s0 * w));
            double q1 = tau1 * ((t[tn + 1] + f1) - (s1 * w));
            double q2 = tau1 * ((t[tn + 2] + f2) - (s2 * w));
            double q3 = tau1 * ((t[tn + 3] + f3) - (s3 * w));
            t[tj] -= s0;
            t[tj + 1] -= s1;
            t[tj + 2] -= s2;
            t[tj + 3] -= s3;
            t[tn] -= q0;
            t[tn + 1] -= q1;
            t[tn + 2] -= q2;
            t[tn + 3] -= q3;
            Vector256<double> n0 = Vector256.Create(-s0);
            Vector256<double> n1 = Vector256.Create(-s1);
            Vector256<double> n2 = Vector256.Create(-s2);
            Vector256<double> n3 = Vector256.Create(-s3);
            Vector256<double> m0 = Vector256.Create(-q0);
            Vector256<double> m1 = Vector256.Create(-q1);
            Vector256<double> m2 = Vector256.Create(-q2);
            Vector256<double> m3 = Vector256.Create(-q3);
            r = 0;
            for (; r + 4 <= m; r += 4)
            {
                nuint u = (nuint)r;
                Vector256<double> x = Vector256.LoadUnsafe(ref pa, u);
                Vector256<double> y = Vector256.LoadUnsafe(ref pb, u);
                Fma.MultiplyAdd(m0, y, Fma.MultiplyAdd(n0, x, Vector256.LoadUnsafe(ref p0, u))).StoreUnsafe(ref p0, u);
                Fma.MultiplyAdd(m1, y, Fma.MultiplyAdd(n1, x, Vector256.LoadUnsafe(ref p1, u))).StoreUnsafe(ref p1, u);
                Fma.MultiplyAdd(m2, y, Fma.MultiplyAdd(n2, x, Vector256.LoadUnsafe(ref p2, u))).StoreUnsafe(ref p2, u);
                Fma.MultiplyAdd(m3, y, Fma.MultiplyAdd(n3, x, Vector256.LoadUnsafe(ref p3, u))).StoreUnsafe(ref p3, u);
            }

            for (; r < m; r++)
            {
                double x = Unsafe.Add(ref pa, r);
                double y = Unsafe.Add(ref pb, r);
                Unsafe.Add(ref p0, r) = Math.FusedMultiplyAdd(-q0, y, Math.FusedMultiplyAdd(-s0, x, Unsafe.Add(ref p0, r)));
                Unsafe.Add(ref p1, r) = Math.FusedMultiplyAdd(-q1, y, Math.FusedMultiplyAdd(-s1, x, Unsafe.Add(ref p1, r)));
                Unsafe.Add(ref p2, r) = Math.FusedMultiplyAdd(-q2, y, Math.FusedMultiplyAdd(-s2, x, Unsafe.Add(ref p2, r)));
                Unsafe.Add(ref p3, r) = Math.FusedMultiplyAdd(-q3, y, Math.FusedMultiplyAdd(-s3, x, Unsafe.Add(ref p3, r)));
            }
        }
#endif
    }
}
