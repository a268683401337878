using System;
using System.Runtime.CompilerServices;
#if NET
using System.Numerics;
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

            for (int j = start; j < c; j++)
            {
                int row = j * c;
                double tj = u[j];
                if (tj == 0.0)
                {
                    if (q != 1.0)
                    {
                        ScaleRange(t.Slice(row + j, c - j), q);
                    }

                    continue;
                }

                double a = q * t[row + j];
                double r = Hypot(a, tj);
                double gamma = a / r;
                double sigma = tj / r;
                t[row + j] = r;
                u[j] = 0.0;
                int len = c - j - 1;
                if (len > 0)
                {
                    Rotate(t.Slice(row + j + 1, len), u.Slice(j + 1, len), gamma, sigma, q);
                }
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
            a = Math.Abs(a);
            b = Math.Abs(b);
            if (a < b)
            {
                (a, b) = (b, a);
            }

            if (a < 1e150 && b > 1e-150)
            {
                return Math.Sqrt((a * a) + (b * b));
            }

            if (a == 0.0)
            {
                return 0.0;
            }

            double ratio = b / a;
            return a * Math.Sqrt(1.0 + (ratio * ratio));
        }

        /// <summary>(t, u) ← (γq·t + σ·u, −σq·t + γ·u) elementwise.</summary>
        private static void Rotate(Span<double> t, Span<double> u, double gamma, double sigma, double q)
        {
            double gq = gamma * q;
            double sq = sigma * q;
            int k = 0;
#if NET
            if (Vector.IsHardwareAccelerated && t.Length >= Vector<double>.Count)
            {
                int width = Vector<double>.Count;
                var vgq = new Vector<double>(gq);
                var vsq = new Vector<double>(sq);
                var vg = new Vector<double>(gamma);
                var vs = new Vector<double>(sigma);
                for (; k <= t.Length - width; k += width)
                {
                    var tv = new Vector<double>(t.Slice(k, width));
                    var uv = new Vector<double>(u.Slice(k, width));
                    ((vgq * tv) + (vs * uv)).CopyTo(t.Slice(k, width));
                    ((vg * uv) - (vsq * tv)).CopyTo(u.Slice(k, width));
                }
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
