using System;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
#if NET
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;
#endif

namespace OnlineRidge.Internal
{
    /// <summary>
    /// Kernels of the covariance form on a dense symmetric matrix of order p held row-major with a padded row stride
    /// (<see cref="Stride"/>: p rounded up to the vector width of 4 doubles when the vector path runs, p otherwise). Both triangles are
    /// stored; the pad columns hold zeros. Every row is whole vectors, so neither kernel has a scalar tail, and the rank-one downdate
    /// A ← A − c·u·uᵀ keeps A bitwise symmetric by construction: entry (i, j) becomes fl(A_ij − c·fl(u_i·u_j)) (the outer step one rounding
    /// with FMA, two without), and fl(u_i·u_j) is the same number as fl(u_j·u_i). No square root is needed for the symmetry. On processors
    /// with AVX-512 the fused downdate-and-multiply pass takes its 16-column blocks in 512-bit vectors with the same per-column arithmetic,
    /// so both widths give the same bits (tested on both paths). No allocation; lengths are the caller's responsibility (checked in debug builds
    /// through the span accessors of the scalar path).
    /// </summary>
    internal static class CovarianceKernels
    {
        /// <summary>Whether the 256-bit FMA path runs (always false on the portable build).</summary>
        public static bool IsVectorized => GramKernels.IsVectorized;

        /// <summary>
        /// Row stride for order p: p rounded up to a multiple of 4 on the vector path, p otherwise; on the vector path a rounded value that
        /// is a multiple of 128 (rows a multiple of 1 KiB apart) gets 4 more. Rows a multiple of 4 KiB apart alias in the processor's
        /// store-to-load check, so with 1 KiB rows the loads of row j + 4 waited on the stores of row j (measured at p = 128 on one pinned
        /// core: 5.4 µs per covariance update with stride 128, 3.8–4.1 µs with 132; at p = 32 and 64 padding did not help).
        /// </summary>
        public static int Stride(int p)
        {
            if (!IsVectorized)
            {
                return p;
            }

            int rounded = (p + 3) & ~3;
            return rounded % 128 == 0 ? rounded + 4 : rounded;
        }

        /// <summary>
        /// a·b + c exactly as the kernels compute it: one rounding (fused) on the vector path, two otherwise. The estimator predicts the new
        /// diagonal with this before a downdate, so the prediction and the kernel agree to the bit.
        /// </summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public static double MultiplyAdd(double a, double b, double c) =>
#if NET
            IsVectorized ? Math.FusedMultiplyAdd(a, b, c) : (a * b) + c;
#else
            (a * b) + c;
#endif

        /// <summary>
        /// u ← A·x for the symmetric A (order p, stride s): u_i = Σⱼ xⱼ·A_ji accumulated over the rows j, entries 0 … s−1 of u written (the pad
        /// entries become 0); returns xᵀu. x has length at least s with zeros beyond p. p·s + s multiply-adds, no allocation. On the vector path
        /// even and odd rows are summed apart and added at the end, and xᵀu is accumulated block by block while u is in registers.
        /// </summary>
#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
#endif
        public static double Multiply(ReadOnlySpan<double> a, int s, int p, ReadOnlySpan<double> x, Span<double> u)
        {
#if NET
            if (IsVectorized)
            {
                return MultiplyVector(ref MemoryMarshal.GetReference(a.Slice(0, p * s)), s, p, ref MemoryMarshal.GetReference(x.Slice(0, s)), ref MemoryMarshal.GetReference(u.Slice(0, s)));
            }
#endif
            u.Slice(0, s).Clear();
            for (int j = 0; j < p; j++)
            {
                double xj = x[j];
                ReadOnlySpan<double> row = a.Slice(j * s, s);
                for (int i = 0; i < s; i++)
                {
                    u[i] = (xj * row[i]) + u[i];
                }
            }

            double q = 0.0;
            for (int i = 0; i < p; i++)
            {
                q += x[i] * u[i];
            }

            return q;
        }

        /// <summary>
        /// A ← A − c·t·tᵀ (the entries as <see cref="RankOneDowndate"/>) and then u ← A·x (the updated A) in one pass over A: each row is downdated, stored and accumulated into u while it
        /// is in registers, so A is read and written once instead of twice. The result is bit for bit that of <see cref="RankOneDowndate"/>
        /// followed by <see cref="Multiply"/> (the matrix, u and the returned xᵀu). 2·p·s + s multiply-adds, no allocation.
        /// </summary>
#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
#endif
        public static double DowndateAndMultiply(Span<double> a, int s, int p, ReadOnlySpan<double> t, double c, ReadOnlySpan<double> x, Span<double> u) =>
#if NET
            DowndateAndMultiplyCore(a, s, p, t, c, x, u, HasWideVectors);
#else
            DowndateAndMultiplyCore(a, s, p, t, c, x, u, false);
#endif

        /// <summary>
        /// <see cref="DowndateAndMultiply"/> without the 512-bit blocks (the path of processors without AVX-512), so that tests on an AVX-512
        /// machine also check the 256-bit code against its theorem. Same contract and bits.
        /// </summary>
        internal static double DowndateAndMultiplyNarrow(Span<double> a, int s, int p, ReadOnlySpan<double> t, double c, ReadOnlySpan<double> x, Span<double> u) =>
            DowndateAndMultiplyCore(a, s, p, t, c, x, u, false);

        /// <summary>The body of both entry points; <paramref name="wide"/> allows the 512-bit blocks (vector path only).</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static double DowndateAndMultiplyCore(Span<double> a, int s, int p, ReadOnlySpan<double> t, double c, ReadOnlySpan<double> x, Span<double> u, bool wide)
        {
#if NET
            if (IsVectorized)
            {
                return DowndateMultiplyVector(ref MemoryMarshal.GetReference(a.Slice(0, p * s)), s, p, ref MemoryMarshal.GetReference(t.Slice(0, s)), c, ref MemoryMarshal.GetReference(x.Slice(0, s)), ref MemoryMarshal.GetReference(u.Slice(0, s)), wide);
            }
#else
            _ = wide;
#endif
            RankOneDowndate(a, s, p, t, c);
            return Multiply(a, s, p, x, u);
        }

#if NET
        /// <summary>Whether the fused pass takes its 16-column blocks in 512-bit vectors (AVX-512 present and reported fast by the runtime).</summary>
        internal static readonly bool HasWideVectors = Vector512.IsHardwareAccelerated && Avx512F.IsSupported;
#endif

        /// <summary>
        /// The fixed-size projection for order p ≤ 4 (stride 4, A allocated with 4 rows whose rows p … 3 are zero): when
        /// <paramref name="downdate"/> is set, A ← A − c·t·tᵀ first (every row; t's pad is zero so the zero rows stay zero); then u ← A·x and
        /// the return value is xᵀu. Everything stays in four registers, with no loop and no second pass over u. Bit for bit the downdate of
        /// <see cref="RankOneDowndate"/> (the same product and FMA per entry); u and xᵀu are summed in a fixed order of their own.
        /// Vector path only (<see cref="IsVectorized"/>).
        /// </summary>
#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
#endif
        public static double ProjectSmall(Span<double> a, int p, bool downdate, ReadOnlySpan<double> t, double c, ReadOnlySpan<double> x, Span<double> u)
        {
#if NET
            ref double ar = ref MemoryMarshal.GetReference(a.Slice(0, 16));
            Vector256<double> r0 = Vector256.LoadUnsafe(ref ar);
            Vector256<double> r1 = Vector256.LoadUnsafe(ref ar, 4);
            Vector256<double> r2 = Vector256.LoadUnsafe(ref ar, 8);
            Vector256<double> r3 = Vector256.LoadUnsafe(ref ar, 12);
            if (downdate)
            {
                DowndateFour(ref r0, ref r1, ref r2, ref r3, Vector256.LoadUnsafe(ref MemoryMarshal.GetReference(t.Slice(0, 4))), c);
                r0.StoreUnsafe(ref ar);
                r1.StoreUnsafe(ref ar, 4);
                r2.StoreUnsafe(ref ar, 8);
                r3.StoreUnsafe(ref ar, 12);
            }

            Vector256<double> xv = p == 4
                ? Vector256.LoadUnsafe(ref MemoryMarshal.GetReference(x.Slice(0, 4)))
                : Vector256.Create(x[0], p > 1 ? x[1] : 0.0, p > 2 ? x[2] : 0.0, 0.0);
            Vector256<double> uv = MultiplyFour(r0, r1, r2, r3, xv);
            uv.StoreUnsafe(ref MemoryMarshal.GetReference(u.Slice(0, 4)));
            return GramUpdateKernels.SumOfLanes(xv * uv);
#else
            throw new PlatformNotSupportedException();
#endif
        }

#if NET
        /// <summary>
        /// The downdate of <see cref="ProjectSmall"/> on a 4×4 block held in four registers: rᵢ ← fl(rᵢ − c·fl(tᵢ·t)), the per-entry arithmetic of
        /// <see cref="RankOneDowndate"/>. Shared by the projection and the covariance form's p = 4 register step, so both give the same bits.
        /// </summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        internal static void DowndateFour(ref Vector256<double> r0, ref Vector256<double> r1, ref Vector256<double> r2, ref Vector256<double> r3, Vector256<double> t, double c)
        {
            Vector256<double> nc = Vector256.Create(-c);
            r0 = Fma.MultiplyAdd(nc, Vector256.Create(t.GetElement(0)) * t, r0);
            r1 = Fma.MultiplyAdd(nc, Vector256.Create(t.GetElement(1)) * t, r1);
            r2 = Fma.MultiplyAdd(nc, Vector256.Create(t.GetElement(2)) * t, r2);
            r3 = Fma.MultiplyAdd(nc, Vector256.Create(t.GetElement(3)) * t, r3);
        }

        /// <summary>The product u = A·x of <see cref="ProjectSmall"/> for a symmetric 4×4 block in four registers (rows combined in the fixed order (x₀r₀ + x₁r₁) + (x₂r₂ + x₃r₃)).</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        internal static Vector256<double> MultiplyFour(Vector256<double> r0, Vector256<double> r1, Vector256<double> r2, Vector256<double> r3, Vector256<double> x) =>
            Fma.MultiplyAdd(Vector256.Create(x.GetElement(1)), r1, Vector256.Create(x.GetElement(0)) * r0)
            + Fma.MultiplyAdd(Vector256.Create(x.GetElement(3)), r3, Vector256.Create(x.GetElement(2)) * r2);

        /// <summary><see cref="Dot"/> of two vectors of length 4 held in registers: the same operations (one FMA into zero, the second accumulator added, the lanes summed), so the same bits.</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        internal static double DotFour(Vector256<double> a, Vector256<double> b) =>
            GramUpdateKernels.SumOfLanes(Fma.MultiplyAdd(a, b, Vector256<double>.Zero) + Vector256<double>.Zero);

        /// <summary>The largest lane of v with the plain max instruction: exact for lanes that are not NaN (callers test NaN apart).</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        internal static double LargestLane(Vector256<double> v)
        {
            Vector128<double> half = Vector128.MaxNative(v.GetLower(), v.GetUpper());
            return Vector128.MaxNative(half, Vector128.Shuffle(half, Vector128.Create(1L, 0L))).ToScalar();
        }
#endif

        /// <summary>
        /// A ← A − c·t·tᵀ over rows 0 … p−1 and all s columns, entry by entry fl(A_ij − c·fl(t_i·t_j)) (<see cref="MultiplyAdd"/> of −c,
        /// fl(t_i·t_j) and A_ij), which is bitwise symmetric; t has length s, zero beyond p, so the pad stays zero. 2·p·s operations, in place,
        /// no allocation. The caller checks beforehand that the result is acceptable (positive diagonal, no overflow): this kernel cannot fail.
        /// </summary>
#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
#endif
        public static void RankOneDowndate(Span<double> a, int s, int p, ReadOnlySpan<double> t, double c)
        {
#if NET
            if (IsVectorized)
            {
                DowndateVector(ref MemoryMarshal.GetReference(a.Slice(0, p * s)), s, p, ref MemoryMarshal.GetReference(t.Slice(0, s)), c);
                return;
            }
#endif
            for (int i = 0; i < p; i++)
            {
                double ti = t[i];
                Span<double> row = a.Slice(i * s, s);
                for (int j = 0; j < s; j++)
                {
                    row[j] = (-c * (ti * t[j])) + row[j];
                }
            }
        }

        /// <summary>
        /// The vector part of a covariance-form step, over all s entries (pad included; v and θ have zero pads, which stay zero): θ' ← θ + ce·v.
        /// Returns max vⱼ², or NaN when an entry of v or θ' is not finite. In the same pass it tests the new diagonal of the downdate
        /// A ← A − c·v·vᵀ (A of order p, stride s): <paramref name="diagonalPositive"/> is true when every fl(Aᵢᵢ − c·fl(vᵢ²)), i &lt; p, computed
        /// with the downdate's own arithmetic (<see cref="MultiplyAdd"/>), is positive — the test <see cref="SmallestDowndatedDiagonal"/> makes,
        /// without the search for the index (the caller runs that only when this is false). About 5s operations, one pass, no allocation.
        /// </summary>
#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
#endif
        public static double GainStep(ReadOnlySpan<double> v, double ce, ReadOnlySpan<double> theta, Span<double> thetaNext, int s,
            ReadOnlySpan<double> a, int p, double c, out bool diagonalPositive)
        {
            int j = 0;
            double largest = 0.0;
            double probe = 0.0;
            bool positive = true;
#if NET
            if (IsVectorized)
            {
                ref double vr = ref MemoryMarshal.GetReference(v.Slice(0, s));
                ref double th = ref MemoryMarshal.GetReference(theta.Slice(0, s));
                ref double tn = ref MemoryMarshal.GetReference(thetaNext.Slice(0, s));
                ref double ar = ref MemoryMarshal.GetReference(a.Slice(0, p == 0 ? 0 : ((p - 1) * s) + p));
                Vector256<double> vc = Vector256.Create(ce);
                Vector256<double> nc = Vector256.Create(-c);
                Vector256<double> big = Vector256<double>.Zero, check = Vector256<double>.Zero, above = Vector256<double>.AllBitsSet;
                int full = p & ~3;
                for (; j < s; j += 4)
                {
                    Vector256<double> vj = Vector256.LoadUnsafe(ref vr, (nuint)j);
                    Vector256<double> theta2 = Fma.MultiplyAdd(vc, vj, Vector256.LoadUnsafe(ref th, (nuint)j));
                    theta2.StoreUnsafe(ref tn, (nuint)j);
                    Vector256<double> square = vj * vj;

                    // The plain max instruction: a NaN lane is caught by the finiteness test beside it (x − x is 0 for a finite x, NaN else).
                    big = Vector256.MaxNative(big, square);
                    check += (vj - vj) + (theta2 - theta2);
                    if (j < full)
                    {
                        Vector256<double> dj = Vector256.Create(Unsafe.Add(ref ar, j * (s + 1)), Unsafe.Add(ref ar, (j + 1) * (s + 1)), Unsafe.Add(ref ar, (j + 2) * (s + 1)), Unsafe.Add(ref ar, (j + 3) * (s + 1)));
                        above &= Vector256.GreaterThan(Fma.MultiplyAdd(nc, square, dj), Vector256<double>.Zero);
                    }
                }

                for (int i = full; i < p; i++)
                {
                    double vi = Unsafe.Add(ref vr, i);
                    positive &= MultiplyAdd(-c, vi * vi, Unsafe.Add(ref ar, i * (s + 1))) > 0.0;
                }

                diagonalPositive = positive && above.ExtractMostSignificantBits() == 0xF;
                return Vector256.EqualsAll(check, Vector256<double>.Zero) ? LargestLane(big) : double.NaN;
            }
#endif
            for (; j < s; j++)
            {
                double vj = v[j];
                double theta2 = (ce * vj) + theta[j];
                thetaNext[j] = theta2;
                largest = Math.Max(largest, vj * vj);
                probe += (vj - vj) + (theta2 - theta2);
                if (j < p)
                {
                    positive &= MultiplyAdd(-c, vj * vj, a[(j * s) + j]) > 0.0;
                }
            }

            diagonalPositive = positive;
            return probe == 0.0 ? largest : double.NaN;
        }

        /// <summary>
        /// <see cref="GainStep"/> for stride 4 (order p ≤ 4), inlined into the caller: one vector of v and θ, the same operations in the same
        /// order, so the same θ' and the same return value bit for bit. Falls back to <see cref="GainStep"/> off the vector path.
        /// </summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public static double GainStepFour(ReadOnlySpan<double> v, double c, ReadOnlySpan<double> theta, Span<double> thetaNext)
        {
#if NET
            if (IsVectorized)
            {
                Vector256<double> vj = Vector256.LoadUnsafe(ref MemoryMarshal.GetReference(v.Slice(0, 4)));
                Vector256<double> theta2 = Fma.MultiplyAdd(Vector256.Create(c), vj, Vector256.LoadUnsafe(ref MemoryMarshal.GetReference(theta.Slice(0, 4))));
                theta2.StoreUnsafe(ref MemoryMarshal.GetReference(thetaNext.Slice(0, 4)));
                Vector256<double> big = Vector256.Max(Vector256<double>.Zero, vj * vj);
                double largest = Math.Max(Math.Max(big.GetElement(0), big.GetElement(1)), Math.Max(big.GetElement(2), big.GetElement(3)));
                double probe = GramUpdateKernels.SumOfLanes(Vector256<double>.Zero + ((vj - vj) + (theta2 - theta2)));
                return probe == 0.0 ? largest : double.NaN;
            }
#endif
            return GainStep(v, c, theta, thetaNext, 4, ReadOnlySpan<double>.Empty, 0, 0.0, out _);
        }

        /// <summary>
        /// <see cref="SmallestDowndatedDiagonal"/> for order 4 at stride 4, inlined into the caller: the four diagonal entries in one vector,
        /// the same arithmetic, so the same value; a non-positive result (and every other order) goes to the general routine, which also
        /// finds the index.
        /// </summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public static double SmallestDowndatedDiagonalFour(ReadOnlySpan<double> a, int p, ReadOnlySpan<double> t, double c, out int index)
        {
#if NET
            if (IsVectorized && p == 4)
            {
                ref double ar = ref MemoryMarshal.GetReference(a.Slice(0, 16));
                Vector256<double> ti = Vector256.LoadUnsafe(ref MemoryMarshal.GetReference(t.Slice(0, 4)));
                Vector256<double> di = Vector256.Create(ar, Unsafe.Add(ref ar, 5), Unsafe.Add(ref ar, 10), Unsafe.Add(ref ar, 15));
                Vector256<double> low = Vector256.Min(Vector256.Create(double.PositiveInfinity), Fma.MultiplyAdd(Vector256.Create(-c), ti * ti, di));
                double rest = Math.Min(Math.Min(low.GetElement(0), low.GetElement(1)), Math.Min(low.GetElement(2), low.GetElement(3)));
                if (rest > 0.0 && rest <= double.MaxValue)
                {
                    index = -1;
                    return rest;
                }
            }
#endif
            return SmallestDowndatedDiagonal(a, 4, p, t, c, out index);
        }

        /// <summary>
        /// Smallest fl(A_ii − c·fl(tᵢ²)) over i &lt; p (computed as <see cref="MultiplyAdd"/>, the downdate's own arithmetic): the new diagonal's
        /// least entry before the downdate is applied. <paramref name="index"/> is the first index holding it when it is not positive, −1 when
        /// every entry is positive (then no search is made). The entries of A and t must be finite (the caller's overflow bound ensures it).
        /// 2p operations, four at a time on the vector path.
        /// </summary>
#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
#endif
        public static double SmallestDowndatedDiagonal(ReadOnlySpan<double> a, int s, int p, ReadOnlySpan<double> t, double c, out int index)
        {
#if NET
            if (IsVectorized && p >= 4)
            {
                // Four diagonal entries at a time; the common outcome (all positive) needs no search, only a failure looks for the index.
                ref double ar = ref MemoryMarshal.GetReference(a.Slice(0, ((p - 1) * s) + p));
                ref double tr = ref MemoryMarshal.GetReference(t.Slice(0, p));
                Vector256<double> low = Vector256.Create(double.PositiveInfinity);
                Vector256<double> nc = Vector256.Create(-c);
                int i = 0;
                for (; i + 4 <= p; i += 4)
                {
                    Vector256<double> ti = Vector256.LoadUnsafe(ref tr, (nuint)i);
                    Vector256<double> di = Vector256.Create(Unsafe.Add(ref ar, i * (s + 1)), Unsafe.Add(ref ar, (i + 1) * (s + 1)), Unsafe.Add(ref ar, (i + 2) * (s + 1)), Unsafe.Add(ref ar, (i + 3) * (s + 1)));
                    low = Vector256.Min(low, Fma.MultiplyAdd(nc, ti * ti, di));
                }

                double rest = Math.Min(Math.Min(low.GetElement(0), low.GetElement(1)), Math.Min(low.GetElement(2), low.GetElement(3)));
                for (; i < p; i++)
                {
                    double ti = Unsafe.Add(ref tr, i);
                    rest = Math.Min(rest, MultiplyAdd(-c, ti * ti, Unsafe.Add(ref ar, i * (s + 1))));
                }

                if (rest > 0.0 && rest <= double.MaxValue)
                {
                    index = -1;
                    return rest;
                }
            }
#endif
            double smallest = double.PositiveInfinity;
            index = -1;
            for (int i = 0; i < p; i++)
            {
                double ti = t[i];
                double d = MultiplyAdd(-c, ti * ti, a[(i * s) + i]);
                if (!(d >= smallest))
                {
                    smallest = d;
                    index = i;
                }
            }

            if (smallest > 0.0)
            {
                index = -1;
            }

            return smallest;
        }

        /// <summary>Σ aᵢbᵢ over a's length (b at least as long), the one dot product of the recursive forms (so a prediction and an update's a-priori error are the same number): four-wide FMA with two accumulators on the vector path, then the scalar tail. n multiply-adds.</summary>
#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
#endif
        public static double Dot(ReadOnlySpan<double> a, ReadOnlySpan<double> b)
        {
            int n = a.Length;
            int i = 0;
            double sum = 0.0;
#if NET
            if (IsVectorized && n >= 4)
            {
                ref double ar = ref MemoryMarshal.GetReference(a);
                ref double br = ref MemoryMarshal.GetReference(b.Slice(0, n));
                Vector256<double> s0 = Vector256<double>.Zero, s1 = s0;
                for (; i + 8 <= n; i += 8)
                {
                    s0 = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref ar, (nuint)i), Vector256.LoadUnsafe(ref br, (nuint)i), s0);
                    s1 = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref ar, (nuint)i + 4), Vector256.LoadUnsafe(ref br, (nuint)i + 4), s1);
                }

                if (i + 4 <= n)
                {
                    s0 = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref ar, (nuint)i), Vector256.LoadUnsafe(ref br, (nuint)i), s0);
                    i += 4;
                }

                sum = GramUpdateKernels.SumOfLanes(s0 + s1);
                for (; i < n; i++)
                {
                    sum = Math.FusedMultiplyAdd(Unsafe.Add(ref ar, i), Unsafe.Add(ref br, i), sum);
                }

                return sum;
            }
#endif
            for (; i < n; i++)
            {
                sum += a[i] * b[i];
            }

            return sum;
        }

        /// <summary>Largest |A_ij| over the p×p block (pad excluded). p² operations.</summary>
        public static double MaxAbs(ReadOnlySpan<double> a, int s, int p)
        {
            double m = 0.0;
            for (int i = 0; i < p; i++)
            {
                ReadOnlySpan<double> row = a.Slice(i * s, p);
                for (int j = 0; j < p; j++)
                {
                    m = Math.Max(m, Math.Abs(row[j]));
                }
            }

            return m;
        }

        /// <summary>A ← 2^k·A over the p×p block; exact (a power-of-two scaling) while no entry leaves the normal range. p² multiplications.</summary>
        public static void ScaleByPowerOfTwo(Span<double> a, int s, int p, int k)
        {
            double f = ScaleB(1.0, k);
            for (int i = 0; i < p; i++)
            {
                Span<double> row = a.Slice(i * s, p);
                for (int j = 0; j < p; j++)
                {
                    row[j] *= f;
                }
            }
        }

        /// <summary>Copies the upper triangle onto the lower one (after an update that wrote only rows j ≥ i of each row i). p(p−1)/2 copies.</summary>
        public static void Mirror(Span<double> a, int s, int p)
        {
            for (int i = 0; i < p; i++)
            {
                for (int j = i + 1; j < p; j++)
                {
                    a[(j * s) + i] = a[(i * s) + j];
                }
            }
        }

        /// <summary>x·2^k, exact for normal results (Math.ScaleB is not in netstandard2.0). |k| ≤ 1000.</summary>
        public static double ScaleB(double x, int k)
        {
#if NET
            return Math.ScaleB(x, k);
#else
            // 2^k as a double built from its exponent bits, applied in exact steps.
            while (k > 1000)
            {
                x *= BitConverter.Int64BitsToDouble((long)(1023 + 1000) << 52);
                k -= 1000;
            }

            while (k < -1000)
            {
                x *= BitConverter.Int64BitsToDouble((long)(1023 - 1000) << 52);
                k += 1000;
            }

            return x * BitConverter.Int64BitsToDouble((long)(1023 + k) << 52);
#endif
        }

        /// <summary>Binary exponent e of a positive normal x (2^e ≤ x &lt; 2^(e+1)).</summary>
        public static int Exponent(double x) => (int)((BitConverter.DoubleToInt64Bits(x) >> 52) & 0x7FF) - 1023;

#if NET
#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
#endif
        private static double MultiplyVector(ref double a, int s, int p, ref double x, ref double u)
        {
            int c = 0;
            Vector256<double> q = Vector256<double>.Zero;

            // Column blocks of 16, 8 and 4: each block's accumulators stay in registers over all p rows (two sets, for even and odd rows,
            // to halve the FMA latency chain), so A is streamed once and u written once.
            for (; c + 16 <= s; c += 16)
            {
                Vector256<double> e0 = Vector256<double>.Zero, e1 = e0, e2 = e0, e3 = e0, o0 = e0, o1 = e0, o2 = e0, o3 = e0;
                int j = 0;
                for (; j + 2 <= p; j += 2)
                {
                    ref double r0 = ref Unsafe.Add(ref a, (j * s) + c);
                    ref double r1 = ref Unsafe.Add(ref r0, s);
                    Vector256<double> x0 = Vector256.Create(Unsafe.Add(ref x, j));
                    Vector256<double> x1 = Vector256.Create(Unsafe.Add(ref x, j + 1));
                    e0 = Fma.MultiplyAdd(x0, Vector256.LoadUnsafe(ref r0), e0);
                    e1 = Fma.MultiplyAdd(x0, Vector256.LoadUnsafe(ref r0, 4), e1);
                    e2 = Fma.MultiplyAdd(x0, Vector256.LoadUnsafe(ref r0, 8), e2);
                    e3 = Fma.MultiplyAdd(x0, Vector256.LoadUnsafe(ref r0, 12), e3);
                    o0 = Fma.MultiplyAdd(x1, Vector256.LoadUnsafe(ref r1), o0);
                    o1 = Fma.MultiplyAdd(x1, Vector256.LoadUnsafe(ref r1, 4), o1);
                    o2 = Fma.MultiplyAdd(x1, Vector256.LoadUnsafe(ref r1, 8), o2);
                    o3 = Fma.MultiplyAdd(x1, Vector256.LoadUnsafe(ref r1, 12), o3);
                }

                if (j < p)
                {
                    ref double r0 = ref Unsafe.Add(ref a, (j * s) + c);
                    Vector256<double> x0 = Vector256.Create(Unsafe.Add(ref x, j));
                    e0 = Fma.MultiplyAdd(x0, Vector256.LoadUnsafe(ref r0), e0);
                    e1 = Fma.MultiplyAdd(x0, Vector256.LoadUnsafe(ref r0, 4), e1);
                    e2 = Fma.MultiplyAdd(x0, Vector256.LoadUnsafe(ref r0, 8), e2);
                    e3 = Fma.MultiplyAdd(x0, Vector256.LoadUnsafe(ref r0, 12), e3);
                }

                ref double uc = ref Unsafe.Add(ref u, c);
                ref double xc = ref Unsafe.Add(ref x, c);
                Vector256<double> u0 = e0 + o0, u1 = e1 + o1, u2 = e2 + o2, u3 = e3 + o3;
                u0.StoreUnsafe(ref uc);
                u1.StoreUnsafe(ref uc, 4);
                u2.StoreUnsafe(ref uc, 8);
                u3.StoreUnsafe(ref uc, 12);
                q = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref xc), u0, q);
                q = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref xc, 4), u1, q);
                q = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref xc, 8), u2, q);
                q = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref xc, 12), u3, q);
            }

            if (c + 8 <= s)
            {
                Vector256<double> e0 = Vector256<double>.Zero, e1 = e0, o0 = e0, o1 = e0;
                int j = 0;
                for (; j + 2 <= p; j += 2)
                {
                    ref double r0 = ref Unsafe.Add(ref a, (j * s) + c);
                    ref double r1 = ref Unsafe.Add(ref r0, s);
                    Vector256<double> x0 = Vector256.Create(Unsafe.Add(ref x, j));
                    Vector256<double> x1 = Vector256.Create(Unsafe.Add(ref x, j + 1));
                    e0 = Fma.MultiplyAdd(x0, Vector256.LoadUnsafe(ref r0), e0);
                    e1 = Fma.MultiplyAdd(x0, Vector256.LoadUnsafe(ref r0, 4), e1);
                    o0 = Fma.MultiplyAdd(x1, Vector256.LoadUnsafe(ref r1), o0);
                    o1 = Fma.MultiplyAdd(x1, Vector256.LoadUnsafe(ref r1, 4), o1);
                }

                if (j < p)
                {
                    ref double r0 = ref Unsafe.Add(ref a, (j * s) + c);
                    Vector256<double> x0 = Vector256.Create(Unsafe.Add(ref x, j));
                    e0 = Fma.MultiplyAdd(x0, Vector256.LoadUnsafe(ref r0), e0);
                    e1 = Fma.MultiplyAdd(x0, Vector256.LoadUnsafe(ref r0, 4), e1);
                }

                ref double uc = ref Unsafe.Add(ref u, c);
                ref double xc = ref Unsafe.Add(ref x, c);
                Vector256<double> u0 = e0 + o0, u1 = e1 + o1;
                u0.StoreUnsafe(ref uc);
                u1.StoreUnsafe(ref uc, 4);
                q = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref xc), u0, q);
                q = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref xc, 4), u1, q);
                c += 8;
            }

            if (c + 4 <= s)
            {
                Vector256<double> e0 = Vector256<double>.Zero, o0 = e0, e1 = e0, o1 = e0;
                int j = 0;
                for (; j + 4 <= p; j += 4)
                {
                    ref double r0 = ref Unsafe.Add(ref a, (j * s) + c);
                    e0 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref x, j)), Vector256.LoadUnsafe(ref r0), e0);
                    o0 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref x, j + 1)), Vector256.LoadUnsafe(ref Unsafe.Add(ref r0, s)), o0);
                    e1 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref x, j + 2)), Vector256.LoadUnsafe(ref Unsafe.Add(ref r0, 2 * s)), e1);
                    o1 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref x, j + 3)), Vector256.LoadUnsafe(ref Unsafe.Add(ref r0, 3 * s)), o1);
                }

                for (; j < p; j++)
                {
                    e0 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref x, j)), Vector256.LoadUnsafe(ref Unsafe.Add(ref a, (j * s) + c)), e0);
                }

                Vector256<double> u0 = (e0 + o0) + (e1 + o1);
                u0.StoreUnsafe(ref Unsafe.Add(ref u, c));
                q = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref Unsafe.Add(ref x, c)), u0, q);
            }

            return GramUpdateKernels.SumOfLanes(q);
        }

#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
#endif
        private static double DowndateMultiplyVector(ref double a, int s, int p, ref double t, double coefficient, ref double x, ref double u, bool wide)
        {
            Vector256<double> nc = Vector256.Create(-coefficient);
            int c = 0;
            Vector256<double> q = Vector256<double>.Zero;

            // As MultiplyVector (same blocks, the same even/odd accumulation order, so the same bits), with each row block downdated first.
            if (wide)
            {
                // The 16-column blocks in two 512-bit vectors: every lane does what the 256-bit code below does for its column (the same
                // product, FMA and even/odd sums), and xᵀu takes the four 4-column groups in the same order, so the result has the same
                // bits with half the instructions.
                c = DowndateMultiplyWide(ref a, s, p, ref t, coefficient, ref x, ref u, ref q);
            }

            for (; c + 16 <= s; c += 16)
            {
                ref double tc = ref Unsafe.Add(ref t, c);
                Vector256<double> t0 = Vector256.LoadUnsafe(ref tc), t1 = Vector256.LoadUnsafe(ref tc, 4), t2 = Vector256.LoadUnsafe(ref tc, 8), t3 = Vector256.LoadUnsafe(ref tc, 12);
                Vector256<double> e0 = Vector256<double>.Zero, e1 = e0, e2 = e0, e3 = e0, o0 = e0, o1 = e0, o2 = e0, o3 = e0;
                int j = 0;
                for (; j + 2 <= p; j += 2)
                {
                    ref double r0 = ref Unsafe.Add(ref a, (j * s) + c);
                    ref double r1 = ref Unsafe.Add(ref r0, s);
                    Vector256<double> m0 = Vector256.Create(Unsafe.Add(ref t, j));
                    Vector256<double> m1 = Vector256.Create(Unsafe.Add(ref t, j + 1));
                    Vector256<double> x0 = Vector256.Create(Unsafe.Add(ref x, j));
                    Vector256<double> x1 = Vector256.Create(Unsafe.Add(ref x, j + 1));
                    Vector256<double> a0 = Fma.MultiplyAdd(nc, m0 * t0, Vector256.LoadUnsafe(ref r0));
                    Vector256<double> a1 = Fma.MultiplyAdd(nc, m0 * t1, Vector256.LoadUnsafe(ref r0, 4));
                    Vector256<double> a2 = Fma.MultiplyAdd(nc, m0 * t2, Vector256.LoadUnsafe(ref r0, 8));
                    Vector256<double> a3 = Fma.MultiplyAdd(nc, m0 * t3, Vector256.LoadUnsafe(ref r0, 12));
                    Vector256<double> b0 = Fma.MultiplyAdd(nc, m1 * t0, Vector256.LoadUnsafe(ref r1));
                    Vector256<double> b1 = Fma.MultiplyAdd(nc, m1 * t1, Vector256.LoadUnsafe(ref r1, 4));
                    Vector256<double> b2 = Fma.MultiplyAdd(nc, m1 * t2, Vector256.LoadUnsafe(ref r1, 8));
                    Vector256<double> b3 = Fma.MultiplyAdd(nc, m1 * t3, Vector256.LoadUnsafe(ref r1, 12));
                    a0.StoreUnsafe(ref r0);
                    a1.StoreUnsafe(ref r0, 4);
                    a2.StoreUnsafe(ref r0, 8);
                    a3.StoreUnsafe(ref r0, 12);
                    b0.StoreUnsafe(ref r1);
                    b1.StoreUnsafe(ref r1, 4);
                    b2.StoreUnsafe(ref r1, 8);
                    b3.StoreUnsafe(ref r1, 12);
                    e0 = Fma.MultiplyAdd(x0, a0, e0);
                    e1 = Fma.MultiplyAdd(x0, a1, e1);
                    e2 = Fma.MultiplyAdd(x0, a2, e2);
                    e3 = Fma.MultiplyAdd(x0, a3, e3);
                    o0 = Fma.MultiplyAdd(x1, b0, o0);
                    o1 = Fma.MultiplyAdd(x1, b1, o1);
                    o2 = Fma.MultiplyAdd(x1, b2, o2);
                    o3 = Fma.MultiplyAdd(x1, b3, o3);
                }

                if (j < p)
                {
                    ref double r0 = ref Unsafe.Add(ref a, (j * s) + c);
                    Vector256<double> m0 = Vector256.Create(Unsafe.Add(ref t, j));
                    Vector256<double> x0 = Vector256.Create(Unsafe.Add(ref x, j));
                    Vector256<double> a0 = Fma.MultiplyAdd(nc, m0 * t0, Vector256.LoadUnsafe(ref r0));
                    Vector256<double> a1 = Fma.MultiplyAdd(nc, m0 * t1, Vector256.LoadUnsafe(ref r0, 4));
                    Vector256<double> a2 = Fma.MultiplyAdd(nc, m0 * t2, Vector256.LoadUnsafe(ref r0, 8));
                    Vector256<double> a3 = Fma.MultiplyAdd(nc, m0 * t3, Vector256.LoadUnsafe(ref r0, 12));
                    a0.StoreUnsafe(ref r0);
                    a1.StoreUnsafe(ref r0, 4);
                    a2.StoreUnsafe(ref r0, 8);
                    a3.StoreUnsafe(ref r0, 12);
                    e0 = Fma.MultiplyAdd(x0, a0, e0);
                    e1 = Fma.MultiplyAdd(x0, a1, e1);
                    e2 = Fma.MultiplyAdd(x0, a2, e2);
                    e3 = Fma.MultiplyAdd(x0, a3, e3);
                }

                ref double uc = ref Unsafe.Add(ref u, c);
                ref double xc = ref Unsafe.Add(ref x, c);
                Vector256<double> u0 = e0 + o0, u1 = e1 + o1, u2 = e2 + o2, u3 = e3 + o3;
                u0.StoreUnsafe(ref uc);
                u1.StoreUnsafe(ref uc, 4);
                u2.StoreUnsafe(ref uc, 8);
                u3.StoreUnsafe(ref uc, 12);
                q = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref xc), u0, q);
                q = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref xc, 4), u1, q);
                q = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref xc, 8), u2, q);
                q = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref xc, 12), u3, q);
            }

            if (c + 8 <= s)
            {
                ref double tc = ref Unsafe.Add(ref t, c);
                Vector256<double> t0 = Vector256.LoadUnsafe(ref tc), t1 = Vector256.LoadUnsafe(ref tc, 4);
                Vector256<double> e0 = Vector256<double>.Zero, e1 = e0, o0 = e0, o1 = e0;
                int j = 0;
                for (; j + 2 <= p; j += 2)
                {
                    ref double r0 = ref Unsafe.Add(ref a, (j * s) + c);
                    ref double r1 = ref Unsafe.Add(ref r0, s);
                    Vector256<double> m0 = Vector256.Create(Unsafe.Add(ref t, j));
                    Vector256<double> m1 = Vector256.Create(Unsafe.Add(ref t, j + 1));
                    Vector256<double> a0 = Fma.MultiplyAdd(nc, m0 * t0, Vector256.LoadUnsafe(ref r0));
                    Vector256<double> a1 = Fma.MultiplyAdd(nc, m0 * t1, Vector256.LoadUnsafe(ref r0, 4));
                    Vector256<double> b0 = Fma.MultiplyAdd(nc, m1 * t0, Vector256.LoadUnsafe(ref r1));
                    Vector256<double> b1 = Fma.MultiplyAdd(nc, m1 * t1, Vector256.LoadUnsafe(ref r1, 4));
                    a0.StoreUnsafe(ref r0);
                    a1.StoreUnsafe(ref r0, 4);
                    b0.StoreUnsafe(ref r1);
                    b1.StoreUnsafe(ref r1, 4);
                    e0 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref x, j)), a0, e0);
                    e1 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref x, j)), a1, e1);
                    o0 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref x, j + 1)), b0, o0);
                    o1 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref x, j + 1)), b1, o1);
                }

                if (j < p)
                {
                    ref double r0 = ref Unsafe.Add(ref a, (j * s) + c);
                    Vector256<double> m0 = Vector256.Create(Unsafe.Add(ref t, j));
                    Vector256<double> a0 = Fma.MultiplyAdd(nc, m0 * t0, Vector256.LoadUnsafe(ref r0));
                    Vector256<double> a1 = Fma.MultiplyAdd(nc, m0 * t1, Vector256.LoadUnsafe(ref r0, 4));
                    a0.StoreUnsafe(ref r0);
                    a1.StoreUnsafe(ref r0, 4);
                    e0 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref x, j)), a0, e0);
                    e1 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref x, j)), a1, e1);
                }

                ref double uc = ref Unsafe.Add(ref u, c);
                ref double xc = ref Unsafe.Add(ref x, c);
                Vector256<double> u0 = e0 + o0, u1 = e1 + o1;
                u0.StoreUnsafe(ref uc);
                u1.StoreUnsafe(ref uc, 4);
                q = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref xc), u0, q);
                q = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref xc, 4), u1, q);
                c += 8;
            }

            if (c + 4 <= s)
            {
                Vector256<double> t0 = Vector256.LoadUnsafe(ref Unsafe.Add(ref t, c));
                Vector256<double> e0 = Vector256<double>.Zero, o0 = e0, e1 = e0, o1 = e0;
                int j = 0;
                for (; j + 4 <= p; j += 4)
                {
                    ref double r0 = ref Unsafe.Add(ref a, (j * s) + c);
                    ref double r1 = ref Unsafe.Add(ref r0, s);
                    ref double r2 = ref Unsafe.Add(ref r0, 2 * s);
                    ref double r3 = ref Unsafe.Add(ref r0, 3 * s);
                    Vector256<double> a0 = Fma.MultiplyAdd(nc, Vector256.Create(Unsafe.Add(ref t, j)) * t0, Vector256.LoadUnsafe(ref r0));
                    Vector256<double> a1 = Fma.MultiplyAdd(nc, Vector256.Create(Unsafe.Add(ref t, j + 1)) * t0, Vector256.LoadUnsafe(ref r1));
                    Vector256<double> a2 = Fma.MultiplyAdd(nc, Vector256.Create(Unsafe.Add(ref t, j + 2)) * t0, Vector256.LoadUnsafe(ref r2));
                    Vector256<double> a3 = Fma.MultiplyAdd(nc, Vector256.Create(Unsafe.Add(ref t, j + 3)) * t0, Vector256.LoadUnsafe(ref r3));
                    a0.StoreUnsafe(ref r0);
                    a1.StoreUnsafe(ref r1);
                    a2.StoreUnsafe(ref r2);
                    a3.StoreUnsafe(ref r3);
                    e0 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref x, j)), a0, e0);
                    o0 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref x, j + 1)), a1, o0);
                    e1 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref x, j + 2)), a2, e1);
                    o1 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref x, j + 3)), a3, o1);
                }

                for (; j < p; j++)
                {
                    ref double r0 = ref Unsafe.Add(ref a, (j * s) + c);
                    Vector256<double> a0 = Fma.MultiplyAdd(nc, Vector256.Create(Unsafe.Add(ref t, j)) * t0, Vector256.LoadUnsafe(ref r0));
                    a0.StoreUnsafe(ref r0);
                    e0 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref x, j)), a0, e0);
                }

                Vector256<double> u0 = (e0 + o0) + (e1 + o1);
                u0.StoreUnsafe(ref Unsafe.Add(ref u, c));
                q = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref Unsafe.Add(ref x, c)), u0, q);
            }

            return GramUpdateKernels.SumOfLanes(q);
        }

        /// <summary>
        /// The 16-column blocks of <see cref="DowndateMultiplyVector"/> with 512-bit vectors (AVX-512): same per-column arithmetic and the same
        /// order of the xᵀu sum, hence the same bits. Returns the first column not yet done (a multiple of 16); <paramref name="q"/> carries
        /// the running xᵀu lanes.
        /// </summary>
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
        private static int DowndateMultiplyWide(ref double a, int s, int p, ref double t, double coefficient, ref double x, ref double u, ref Vector256<double> q)
        {
            Vector512<double> nc = Vector512.Create(-coefficient);
            int c = 0;
            for (; c + 16 <= s; c += 16)
            {
                ref double tc = ref Unsafe.Add(ref t, c);
                Vector512<double> t0 = Vector512.LoadUnsafe(ref tc), t1 = Vector512.LoadUnsafe(ref tc, 8);
                Vector512<double> e0 = Vector512<double>.Zero, e1 = e0, o0 = e0, o1 = e0;
                int j = 0;
                for (; j + 2 <= p; j += 2)
                {
                    ref double r0 = ref Unsafe.Add(ref a, (j * s) + c);
                    ref double r1 = ref Unsafe.Add(ref r0, s);
                    Vector512<double> m0 = Vector512.Create(Unsafe.Add(ref t, j));
                    Vector512<double> m1 = Vector512.Create(Unsafe.Add(ref t, j + 1));
                    Vector512<double> x0 = Vector512.Create(Unsafe.Add(ref x, j));
                    Vector512<double> x1 = Vector512.Create(Unsafe.Add(ref x, j + 1));
                    Vector512<double> a0 = Avx512F.FusedMultiplyAdd(nc, m0 * t0, Vector512.LoadUnsafe(ref r0));
                    Vector512<double> a1 = Avx512F.FusedMultiplyAdd(nc, m0 * t1, Vector512.LoadUnsafe(ref r0, 8));
                    Vector512<double> b0 = Avx512F.FusedMultiplyAdd(nc, m1 * t0, Vector512.LoadUnsafe(ref r1));
                    Vector512<double> b1 = Avx512F.FusedMultiplyAdd(nc, m1 * t1, Vector512.LoadUnsafe(ref r1, 8));
                    a0.StoreUnsafe(ref r0);
                    a1.StoreUnsafe(ref r0, 8);
                    b0.StoreUnsafe(ref r1);
                    b1.StoreUnsafe(ref r1, 8);
                    e0 = Avx512F.FusedMultiplyAdd(x0, a0, e0);
                    e1 = Avx512F.FusedMultiplyAdd(x0, a1, e1);
                    o0 = Avx512F.FusedMultiplyAdd(x1, b0, o0);
                    o1 = Avx512F.FusedMultiplyAdd(x1, b1, o1);
                }

                if (j < p)
                {
                    ref double r0 = ref Unsafe.Add(ref a, (j * s) + c);
                    Vector512<double> m0 = Vector512.Create(Unsafe.Add(ref t, j));
                    Vector512<double> x0 = Vector512.Create(Unsafe.Add(ref x, j));
                    Vector512<double> a0 = Avx512F.FusedMultiplyAdd(nc, m0 * t0, Vector512.LoadUnsafe(ref r0));
                    Vector512<double> a1 = Avx512F.FusedMultiplyAdd(nc, m0 * t1, Vector512.LoadUnsafe(ref r0, 8));
                    a0.StoreUnsafe(ref r0);
                    a1.StoreUnsafe(ref r0, 8);
                    e0 = Avx512F.FusedMultiplyAdd(x0, a0, e0);
                    e1 = Avx512F.FusedMultiplyAdd(x0, a1, e1);
                }

                ref double uc = ref Unsafe.Add(ref u, c);
                ref double xc = ref Unsafe.Add(ref x, c);
                Vector512<double> u0 = e0 + o0, u1 = e1 + o1;
                u0.StoreUnsafe(ref uc);
                u1.StoreUnsafe(ref uc, 8);
                q = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref xc), u0.GetLower(), q);
                q = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref xc, 4), u0.GetUpper(), q);
                q = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref xc, 8), u1.GetLower(), q);
                q = Fma.MultiplyAdd(Vector256.LoadUnsafe(ref xc, 12), u1.GetUpper(), q);
            }

            return c;
        }

#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
#endif
        private static void DowndateVector(ref double a, int s, int p, ref double t, double coefficient)
        {
            Vector256<double> nc = Vector256.Create(-coefficient);
            int c = 0;

            // Column blocks of 16, 8 and 4 with the block of t held in registers over all rows; every row operation is independent, so the
            // loop runs at the load/store throughput.
            for (; c + 16 <= s; c += 16)
            {
                ref double tc = ref Unsafe.Add(ref t, c);
                Vector256<double> t0 = Vector256.LoadUnsafe(ref tc), t1 = Vector256.LoadUnsafe(ref tc, 4), t2 = Vector256.LoadUnsafe(ref tc, 8), t3 = Vector256.LoadUnsafe(ref tc, 12);
                for (int i = 0; i < p; i++)
                {
                    ref double r = ref Unsafe.Add(ref a, (i * s) + c);
                    Vector256<double> m = Vector256.Create(Unsafe.Add(ref t, i));
                    Fma.MultiplyAdd(nc, m * t0, Vector256.LoadUnsafe(ref r)).StoreUnsafe(ref r);
                    Fma.MultiplyAdd(nc, m * t1, Vector256.LoadUnsafe(ref r, 4)).StoreUnsafe(ref r, 4);
                    Fma.MultiplyAdd(nc, m * t2, Vector256.LoadUnsafe(ref r, 8)).StoreUnsafe(ref r, 8);
                    Fma.MultiplyAdd(nc, m * t3, Vector256.LoadUnsafe(ref r, 12)).StoreUnsafe(ref r, 12);
                }
            }

            if (c + 8 <= s)
            {
                ref double tc = ref Unsafe.Add(ref t, c);
                Vector256<double> t0 = Vector256.LoadUnsafe(ref tc), t1 = Vector256.LoadUnsafe(ref tc, 4);
                for (int i = 0; i < p; i++)
                {
                    ref double r = ref Unsafe.Add(ref a, (i * s) + c);
                    Vector256<double> m = Vector256.Create(Unsafe.Add(ref t, i));
                    Fma.MultiplyAdd(nc, m * t0, Vector256.LoadUnsafe(ref r)).StoreUnsafe(ref r);
                    Fma.MultiplyAdd(nc, m * t1, Vector256.LoadUnsafe(ref r, 4)).StoreUnsafe(ref r, 4);
                }

                c += 8;
            }

            if (c + 4 <= s)
            {
                Vector256<double> t0 = Vector256.LoadUnsafe(ref Unsafe.Add(ref t, c));
                for (int i = 0; i < p; i++)
                {
                    ref double r = ref Unsafe.Add(ref a, (i * s) + c);
                    Fma.MultiplyAdd(nc, Vector256.Create(Unsafe.Add(ref t, i)) * t0, Vector256.LoadUnsafe(ref r)).StoreUnsafe(ref r);
                }
            }
        }
#endif
    }
}
