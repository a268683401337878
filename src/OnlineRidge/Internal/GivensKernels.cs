using System;
using System.Diagnostics.CodeAnalysis;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
#if NET
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.Arm;
using System.Runtime.Intrinsics.X86;
#endif

namespace OnlineRidge.Internal
{
    /// <summary>
    /// Givens-rotation kernels on a dense row-major upper-triangular array T of order c (stride c): rotate a new row into T
    /// (annihilating it, MATH.md §3.2), optionally folding a forgetting scale q into the same pass, and scale T. Only spans; no allocation.
    /// </summary>
    /// <remarks>
    /// <para>Rotation convention (Golub and Van Loan 2013, §5.1.8): for column j with a = q·T[j,j] ≥ 0 and t = u[j] ≠ 0, r = hypot(a, t),
    /// γ = a/r, σ = t/r and (T[j,k], u[k]) ← (γq·T[j,k] + σ·u[k], −σq·T[j,k] + γ·u[k]) for k &gt; j; this keeps diag(T) ≥ 0. A column whose
    /// entry in u is exactly 0 is skipped (its row is only scaled by q). With forgetting, row j of T is multiplied by q in the same pass
    /// (γq, σq folded into the rotation).</para>
    /// <para><b>Latency.</b> The rotations form a serial chain: rotation j + 1 needs the entry u[j + 1] that rotation j produces, and
    /// each link costs a square root and a division (about 20 and 13 cycles on current x64 cores, against 4 for a multiply-add). Two
    /// measures keep the chain short. (1) The next pivot is computed as u[j + 1] ← (a·u[j + 1] − t·q·T[j,j+1]) / r — algebraically
    /// γ·u[j + 1] − σq·T[j,j+1] — whose numerator does not wait for r: the link is then one fused multiply-add, one square root and one
    /// division, and the rest of the row (which nothing in the chain waits for) overlaps the next rotation. (2) hypot(a, t) is
    /// √(a² + t²) when a² + t² lies in [10⁻²⁹⁰, 10²⁹⁰] (then the larger square is normal and nothing overflowed; the smaller square's
    /// underflow is below rounding), with the scaled formula as a rarely taken fallback. The numerator form is used only when its two
    /// products are safely normal (|a·u| + |t·qT| in [10⁻³⁰⁷, max]): an underflowed product then contributes an absolute error below
    /// ε times their sum, i.e. below rounding; otherwise (e.g. zeros of an empty factor, or extreme magnitudes) the textbook form
    /// γ·u − σq·T is used. Both forms are backward stable and agree to a few ulps.</para>
    /// <para><b>Builds.</b> The net10.0 build uses 256- and 128-bit vectors for the row tails and fused multiply-adds where the hardware
    /// has them; the netstandard2.0 build runs the same algorithm in scalar code with separate roundings, so the two builds may differ in
    /// the last bits. The kernels are compiled fully optimized from the first call (no tiered start-up phase), because a real-time loop
    /// should not run unoptimized code for its first second.</para>
    /// </remarks>
    internal static class GivensKernels
    {
        // Range of a² + t² in which √(a² + t²) is accurate to rounding (see the remarks).
        private const double SafeSquareLow = 1e-290;
        private const double SafeSquareHigh = 1e290;

        // |a·u| + |t·qT| at least this: an underflowed product's absolute error (≤ 2⁻¹⁰⁷⁴ each) is below ε/2 times the sum.
        private const double SafeProductLow = 1e-307;

        /// <summary>
        /// T ← rotations of [q·T; u] back to triangular form; u is overwritten (annihilated: every entry from <paramref name="start"/> on
        /// ends as exactly 0). Entries of u before <paramref name="start"/> must be zero; rows above it are only scaled by q. q = 1 skips the
        /// scaling. Cost ≈ 2·(c − start)² multiply-adds, c − start square roots and about 3(c − start) divisions; no allocation.
        /// Accuracy: backward stable (each rotation has relative error of a few ε in its parameters, Golub and Van Loan 2013, §5.1.10), for
        /// any finite magnitudes whose squares sum below the overflow threshold.
        /// </summary>
        /// <exception cref="ArgumentException">A span is shorter than the order needs, or <paramref name="start"/> is outside [0, c].</exception>
#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
#endif
        public static void ScaleAndRotateIn(Span<double> t, int c, double q, Span<double> u, int start)
        {
            if (c < 0 || (uint)start > (uint)c || t.Length < c * c || u.Length < c)
            {
                ThrowShape(c, t.Length, u.Length, start);
            }

            if (q != 1.0)
            {
                // Rows above start are only scaled (u is zero there).
                for (int j = 0; j < start; j++)
                {
                    ScaleRange(t.Slice((j * c) + j, c - j), q);
                }
            }

            if (start < c)
            {
                RotateIn(ref MemoryMarshal.GetReference(t), c, q, ref MemoryMarshal.GetReference(u), start);
            }
        }

        /// <summary>Multiplies every entry of the upper triangle of T (order c) by s. Cost c(c+1)/2.</summary>
        public static void ScaleTriangle(Span<double> t, int c, double s)
        {
            for (int j = 0; j < c; j++)
            {
                ScaleRange(t.Slice((j * c) + j, c - j), s);
            }
        }

        /// <summary>
        /// √(a² + b²) without overflow or harmful underflow: the direct formula when a² + b² lies in [10⁻²⁹⁰, 10²⁹⁰] (the common case), else
        /// the scaled form of <see cref="ScaledHypot"/>. Relative error a few ε; 0 only for a = b = 0.
        /// </summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public static double Hypot(double a, double b)
        {
            double s = (a * a) + (b * b);
            return s >= SafeSquareLow && s <= SafeSquareHigh ? Math.Sqrt(s) : ScaledHypot(a, b);
        }

        /// <summary>
        /// √(a² + b²) as m·√(1 + (n/m)²) with m = max(|a|, |b|), n = min(|a|, |b|): no overflow unless the result overflows, no loss to
        /// underflow; relative error a few ε. Cost one division and one square root more than the direct formula (the slow path of
        /// <see cref="Hypot"/>).
        /// </summary>
        [MethodImpl(MethodImplOptions.NoInlining)]
        public static double ScaledHypot(double a, double b)
        {
            a = Math.Abs(a);
            b = Math.Abs(b);
            if (a < b)
            {
                (a, b) = (b, a);
            }

            if (a == 0.0)
            {
                return 0.0;
            }

            double ratio = b / a;
            return a * Math.Sqrt(1.0 + (ratio * ratio));
        }

        /// <summary>
        /// The rotation chain of <see cref="ScaleAndRotateIn"/> from column <paramref name="start"/> &lt; c on, on references to T[0,0] and
        /// u[0] (the caller checked the lengths). The diagonal entry and the entry of u of the current column are addressed by two moving
        /// references; the pivot of the next rotation is carried in a register. The loop has no call: a column outside the safe ranges of
        /// the type remarks hands the rest of the chain to <see cref="RotateInCareful"/> before anything of that column is written.
        /// </summary>
#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
#endif
        private static void RotateIn(ref double t0, int c, double q, ref double u0, int start)
        {
            int stride = c + 1;
            ref double d = ref Unsafe.Add(ref t0, (start * c) + start);
            ref double uj = ref Unsafe.Add(ref u0, start);
            double tj = uj;
            int len = c - start - 1;
            for (; ; len--)
            {
                // len = number of entries right of the diagonal in the current row.
                if (tj == 0.0)
                {
                    if (q != 1.0)
                    {
                        ScaleRange(ref d, len + 1, q);
                    }

                    if (len == 0)
                    {
                        return;
                    }

                    tj = Unsafe.Add(ref uj, 1);
                    d = ref Unsafe.Add(ref d, stride);
                    uj = ref Unsafe.Add(ref uj, 1);
                    continue;
                }

                double a = q * d;
                double s = MultiplyAdd(tj, tj, a * a);
                if (len == 0)
                {
                    if (!(s >= SafeSquareLow && s <= SafeSquareHigh))
                    {
                        break;
                    }

                    d = Math.Sqrt(s);
                    uj = 0.0;
                    return;
                }

                // Everything of the next pivot that does not need r, issued before the square root.
                double t1 = Unsafe.Add(ref d, 1);
                double u1 = Unsafe.Add(ref uj, 1);
                double qt1 = q * t1;
                double p1 = a * u1;
                double p2 = tj * qt1;
                double size = Math.Abs(p1) + Math.Abs(p2);
                if (!((s >= SafeSquareLow) & (s <= SafeSquareHigh) & (size >= SafeProductLow) & (size <= double.MaxValue)))
                {
                    break;
                }

                double r = Math.Sqrt(s);
                double next = (p1 - p2) / r;
                double gamma = a / r;
                double sigma = tj / r;
                double gq = gamma * q;
                double sq = sigma * q;
                d = r;
                uj = 0.0;
                Unsafe.Add(ref d, 1) = MultiplyAdd(gq, t1, sigma * u1);
                Unsafe.Add(ref uj, 1) = next;
                if (len > 1)
                {
                    Rotate(ref Unsafe.Add(ref d, 2), ref Unsafe.Add(ref uj, 2), len - 1, gamma, sigma, gq, sq);
                }

                tj = next;
                d = ref Unsafe.Add(ref d, stride);
                uj = ref Unsafe.Add(ref uj, 1);
            }

            RotateInCareful(ref d, ref uj, c, len, q);
        }

        /// <summary>
        /// The textbook chain (γ = a/r, σ = t/r, r = <see cref="Hypot"/>(a, t), then every entry of the row from γ and σ) from the column
        /// whose diagonal entry is <paramref name="d"/> and whose entry of u is <paramref name="uj"/> to the end: the path for zeros of an
        /// empty factor and for extreme magnitudes. Same results as the fast chain up to rounding.
        /// </summary>
        [MethodImpl(MethodImplOptions.NoInlining)]
        private static void RotateInCareful(ref double d, ref double uj, int c, int len, double q)
        {
            int stride = c + 1;
            for (; ; len--)
            {
                double tj = uj;
                if (tj == 0.0)
                {
                    if (q != 1.0)
                    {
                        ScaleRange(ref d, len + 1, q);
                    }
                }
                else
                {
                    double a = q * d;
                    double r = Hypot(a, tj);
                    d = r;
                    uj = 0.0;
                    if (len > 0)
                    {
                        double gamma = a / r;
                        double sigma = tj / r;
                        Rotate(ref Unsafe.Add(ref d, 1), ref Unsafe.Add(ref uj, 1), len, gamma, sigma, gamma * q, sigma * q);
                    }
                }

                if (len == 0)
                {
                    return;
                }

                d = ref Unsafe.Add(ref d, stride);
                uj = ref Unsafe.Add(ref uj, 1);
            }
        }

        /// <summary>(t, u) ← (γq·t + σ·u, −σq·t + γ·u) elementwise over n entries, with gq = γq and sq = σq.</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static void Rotate(ref double t, ref double u, int n, double gamma, double sigma, double gq, double sq)
        {
            int k = 0;
#if NET
            if (Vector256.IsHardwareAccelerated && n >= 4)
            {
                Vector256<double> vgq = Vector256.Create(gq);
                Vector256<double> vsq = Vector256.Create(sq);
                Vector256<double> vg = Vector256.Create(gamma);
                Vector256<double> vs = Vector256.Create(sigma);
                for (; k <= n - 4; k += 4)
                {
                    Vector256<double> tk = Vector256.LoadUnsafe(ref t, (nuint)k);
                    Vector256<double> uk = Vector256.LoadUnsafe(ref u, (nuint)k);
                    MultiplyAdd(vgq, tk, vs * uk).StoreUnsafe(ref t, (nuint)k);
                    MultiplyAdd(vg, uk, -(vsq * tk)).StoreUnsafe(ref u, (nuint)k);
                }
            }

            if (Vector128.IsHardwareAccelerated && k <= n - 2)
            {
                Vector128<double> tk = Vector128.LoadUnsafe(ref t, (nuint)k);
                Vector128<double> uk = Vector128.LoadUnsafe(ref u, (nuint)k);
                MultiplyAdd(Vector128.Create(gq), tk, Vector128.Create(sigma) * uk).StoreUnsafe(ref t, (nuint)k);
                MultiplyAdd(Vector128.Create(gamma), uk, -(Vector128.Create(sq) * tk)).StoreUnsafe(ref u, (nuint)k);
                k += 2;
            }
#endif
            for (; k < n; k++)
            {
                double tk = Unsafe.Add(ref t, k);
                double uk = Unsafe.Add(ref u, k);
                Unsafe.Add(ref t, k) = MultiplyAdd(gq, tk, sigma * uk);
                Unsafe.Add(ref u, k) = MultiplyAdd(gamma, uk, -(sq * tk));
            }
        }

        private static void ScaleRange(Span<double> v, double s) => ScaleRange(ref MemoryMarshal.GetReference(v), v.Length, s);

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static void ScaleRange(ref double v, int n, double s)
        {
            int k = 0;
#if NET
            if (Vector256.IsHardwareAccelerated && n >= 4)
            {
                Vector256<double> vs = Vector256.Create(s);
                for (; k <= n - 4; k += 4)
                {
                    (Vector256.LoadUnsafe(ref v, (nuint)k) * vs).StoreUnsafe(ref v, (nuint)k);
                }
            }
#endif
            for (; k < n; k++)
            {
                Unsafe.Add(ref v, k) *= s;
            }
        }

        /// <summary>a·b + c, fused (one rounding) where the hardware has a fused multiply-add, else with two roundings.</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static double MultiplyAdd(double a, double b, double c)
        {
#if NET
            if (Fma.IsSupported || AdvSimd.IsSupported)
            {
                return Math.FusedMultiplyAdd(a, b, c);
            }
#endif
            return (a * b) + c;
        }

#if NET
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static Vector256<double> MultiplyAdd(Vector256<double> a, Vector256<double> b, Vector256<double> c) =>
            Fma.IsSupported ? Fma.MultiplyAdd(a, b, c) : (a * b) + c;

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static Vector128<double> MultiplyAdd(Vector128<double> a, Vector128<double> b, Vector128<double> c) =>
            Fma.IsSupported ? Fma.MultiplyAdd(a, b, c) : AdvSimd.Arm64.IsSupported ? AdvSimd.Arm64.FusedMultiplyAdd(c, a, b) : (a * b) + c;
#endif

        [DoesNotReturn]
        private static void ThrowShape(int c, int tLength, int uLength, int start) =>
            throw new ArgumentException(FormattableString.Invariant($"Givens kernel: order {c}, start {start}, triangle length {tLength}, row length {uLength} do not fit."));
    }
}
