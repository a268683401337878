using System;
using System.Runtime.CompilerServices;
#if NET
using System.Numerics;
using System.Runtime.InteropServices;
#endif

namespace OnlineRidge.Internal
{
    /// <summary>
    /// Givens-rotation kernels on a dense row-major upper-triangular array T of order c (stride c): rotate a new row into T
    /// (annihilating it, MATH.md §3.2), optionally folding a forgetting scale q into the same pass, and scale T. Only spans; no allocation.
    /// </summary>
    /// <remarks>
    /// Rotation convention (Golub and Van Loan 2013, §5.1.8): for column j with a = T[j,j] ≥ 0 and t = u[j] ≠ 0, r = hypot(a, t), γ = a/r,
    /// σ = t/r and (T[j,k], u[k]) ← (γ·T[j,k] + σ·u[k], −σ·T[j,k] + γ·u[k]) for k ≥ j; this keeps diag(T) ≥ 0. A column whose entry in u is
    /// exactly 0 is skipped. With forgetting, row j of T is multiplied by q in the same pass (γq, σq folded into the rotation).
    /// </remarks>
    internal static class GivensKernels
    {
        /// <summary>
        /// T ← rotations of [q·T; u] back to triangular form; u is overwritten (annihilated). Entries of u before <paramref name="start"/>
        /// must be zero. q = 1 skips the scaling. Cost ≈ 2·(c − start)² multiply-adds and c − start square roots.
        /// </summary>
        public static void ScaleAndRotateIn(Span<double> t, int c, double q, Span<double> u, int start)
        {
            if (q != 1.0)
            {
                // Rows above start are only scaled (u is zero there).
                for (int j = 0; j < start; j++)
                {
                    ScaleRange(t.Slice((j * c) + j, c - j), q);
                }
            }

            // The entry of u that the next rotation annihilates is carried in a register: it is the first element of the current row's
            // tail, computed before the rest of the tail so that the next square root and divisions (the latency chain of the update)
            // can start while the current row is still being rotated, and without a store-to-load round trip through u.
            double tj = start < c ? u[start] : 0.0;
            for (int j = start; j < c; j++)
            {
                int row = j * c;
                int len = c - j - 1;
                if (tj == 0.0)
                {
                    if (q != 1.0)
                    {
                        ScaleRange(t.Slice(row + j, c - j), q);
                    }

                    tj = len > 0 ? u[j + 1] : 0.0;
                    continue;
                }

                double a = q * t[row + j];
                double r = Hypot(a, tj);
                t[row + j] = r;
                u[j] = 0.0;
                if (len == 0)
                {
                    break;
                }

                double gamma = a / r;
                double sigma = tj / r;
                double gq = gamma * q;
                double sq = sigma * q;
                double t1 = t[row + j + 1];
                double u1 = u[j + 1];
                t[row + j + 1] = (gq * t1) + (sigma * u1);
                double next = (gamma * u1) - (sq * t1);
                u[j + 1] = next;
                if (len > 1)
                {
                    Rotate(t.Slice(row + j + 2, len - 1), u.Slice(j + 2, len - 1), gamma, sigma, gq, sq);
                }

                tj = next;
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

        /// <summary>√(a² + b²) without overflow or harmful underflow; the direct formula in the safe range (the common case).</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public static double Hypot(double a, double b)
        {
            // Direct formula when the sum of squares is comfortably normal: then the larger square is normal, the smaller one's underflow
            // is negligible and nothing overflowed; the test is off the critical path of the rotation chain (no abs/compare/swap before it).
            double s = (a * a) + (b * b);
            if (s >= 1e-290 && s <= 1e290)
            {
                return Math.Sqrt(s);
            }

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

        /// <summary>(t, u) ← (γq·t + σ·u, −σq·t + γ·u) elementwise, with gq = γq and sq = σq.</summary>
        private static void Rotate(Span<double> t, Span<double> u, double gamma, double sigma, double gq, double sq)
        {
            int k = 0;
#if NET
            if (Vector.IsHardwareAccelerated && t.Length >= Vector<double>.Count)
            {
                Span<Vector<double>> tv = MemoryMarshal.Cast<double, Vector<double>>(t);
                Span<Vector<double>> uv = MemoryMarshal.Cast<double, Vector<double>>(u.Slice(0, t.Length));
                var vgq = new Vector<double>(gq);
                var vsq = new Vector<double>(sq);
                var vg = new Vector<double>(gamma);
                var vs = new Vector<double>(sigma);
                for (int m = 0; m < tv.Length; m++)
                {
                    Vector<double> tk = tv[m];
                    Vector<double> uk = uv[m];
                    tv[m] = (vgq * tk) + (vs * uk);
                    uv[m] = (vg * uk) - (vsq * tk);
                }

                k = tv.Length * Vector<double>.Count;
            }
#endif
            for (; k < t.Length; k++)
            {
                double tk = t[k];
                double uk = u[k];
                t[k] = (gq * tk) + (sigma * uk);
                u[k] = (gamma * uk) - (sq * tk);
            }
        }

        private static void ScaleRange(Span<double> v, double s)
        {
            int k = 0;
#if NET
            if (Vector.IsHardwareAccelerated && v.Length >= Vector<double>.Count)
            {
                int width = Vector<double>.Count;
                var vs = new Vector<double>(s);
                for (; k <= v.Length - width; k += width)
                {
                    (new Vector<double>(v.Slice(k, width)) * vs).CopyTo(v.Slice(k, width));
                }
            }
#endif
            for (; k < v.Length; k++)
            {
                v[k] *= s;
            }
        }
    }
}
