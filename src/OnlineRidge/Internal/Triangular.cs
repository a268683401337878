using System;

namespace OnlineRidge.Internal
{
    /// <summary>
    /// Kernels on dense row-major square matrices of order n stored with a row stride (stride ≥ n): triangular solves and inverses,
    /// Cholesky factorization, and a condition estimate of a triangular factor. Only spans; no allocation unless stated.
    /// </summary>
    internal static class Triangular
    {
        /// <summary>Solves R·x = b in place (b ← x) for upper-triangular R. O(n²/2). Returns false if a diagonal entry is zero.</summary>
        public static bool SolveUpper(ReadOnlySpan<double> r, int n, int stride, Span<double> b)
        {
            for (int i = n - 1; i >= 0; i--)
            {
                double s = b[i];
                int row = i * stride;
                for (int k = i + 1; k < n; k++)
                {
                    s -= r[row + k] * b[k];
                }

                double d = r[row + i];
                if (d == 0.0)
                {
                    return false;
                }

                b[i] = s / d;
            }

            return true;
        }

        /// <summary>Solves Rᵀ·x = b in place for upper-triangular R (forward substitution). O(n²/2). Returns false on a zero diagonal.</summary>
        public static bool SolveUpperTransposed(ReadOnlySpan<double> r, int n, int stride, Span<double> b)
        {
            for (int i = 0; i < n; i++)
            {
                double d = r[(i * stride) + i];
                if (d == 0.0)
                {
                    return false;
                }

                double xi = b[i] / d;
                b[i] = xi;
                int row = i * stride;
                for (int k = i + 1; k < n; k++)
                {
                    b[k] -= r[row + k] * xi;
                }
            }

            return true;
        }

        /// <summary>
        /// Writes the inverse of upper-triangular R (n×n, stride) into <paramref name="inverse"/> (n×n, stride n, upper triangular, zeros below).
        /// O(n³/3). Returns false on a zero diagonal.
        /// </summary>
        public static bool InvertUpper(ReadOnlySpan<double> r, int n, int stride, Span<double> inverse)
        {
            inverse.Slice(0, n * n).Clear();
            for (int j = n - 1; j >= 0; j--)
            {
                double d = r[(j * stride) + j];
                if (d == 0.0)
                {
                    return false;
                }

                inverse[(j * n) + j] = 1.0 / d;

                // Column j of the inverse: rows i < j.
                for (int i = j - 1; i >= 0; i--)
                {
                    double s = 0.0;
                    int row = i * stride;
                    for (int k = i + 1; k <= j; k++)
                    {
                        s += r[row + k] * inverse[(k * n) + j];
                    }

                    inverse[(i * n) + j] = -s / r[row + i];
                }
            }

            return true;
        }

        /// <summary>
        /// In-place Cholesky factorization A = RᵀR of the symmetric matrix whose upper triangle is given (row-major, stride);
        /// R overwrites the upper triangle, the strict lower triangle is zeroed. O(n³/6).
        /// Returns false with the failing pivot index and value when a pivot is not positive or not finite; A is then partly overwritten.
        /// </summary>
        public static bool CholeskyUpper(Span<double> a, int n, int stride, out int failIndex, out double failValue)
        {
            for (int j = 0; j < n; j++)
            {
                int rowJ = j * stride;
                double d = a[rowJ + j];
                for (int k = 0; k < j; k++)
                {
                    double rkj = a[(k * stride) + j];
                    d -= rkj * rkj;
                }

                if (!(d > 0.0) || double.IsInfinity(d))
                {
                    failIndex = j;
                    failValue = d;
                    return false;
                }

                double rjj = Math.Sqrt(d);
                a[rowJ + j] = rjj;
                double inv = 1.0 / rjj;
                for (int i = j + 1; i < n; i++)
                {
                    double s = a[rowJ + i];
                    for (int k = 0; k < j; k++)
                    {
                        s -= a[(k * stride) + j] * a[(k * stride) + i];
                    }

                    a[rowJ + i] = s * inv;
                }

                for (int i = j + 1; i < n; i++)
                {
                    a[(i * stride) + j] = 0.0;
                }
            }

            failIndex = -1;
            failValue = double.NaN;
            return true;
        }

        /// <summary>Most Lanczos steps per side in <see cref="ConditionEstimate"/>; orders up to this run the full Krylov space.</summary>
        public const int ConditionSteps = 24;

        /// <summary>Length of the work span <see cref="ConditionEstimate"/> needs for order n: 3n.</summary>
        public static int ConditionWorkLength(int n) => 3 * n;

        /// <summary>
        /// Estimates σ_max(R)/σ_min(R) of a non-singular upper-triangular R by the Lanczos method (Lanczos 1950) on RᵀR and on (RᵀR)⁻¹
        /// (the inverse applied by two triangular solves), min(n, <see cref="ConditionSteps"/>) steps each without reorthogonalization,
        /// from a fixed start vector (deterministic), stopping early when the Krylov space is numerically invariant; the largest eigenvalue
        /// of each tridiagonal Lanczos matrix is found by Sturm-sequence multisection (Barth, Martin and Wilkinson 1967) to a relative
        /// 1e-9, taking the lower end. Ritz values lie inside the spectrum (and stay there in floating point up to a small multiple of
        /// ε‖A‖; Paige 1980), so the estimate is a lower bound of the true ratio up to rounding; for n ≤ 24 the Krylov space is the whole
        /// space and the estimate is the ratio to about 1e-9, above that it is within a few percent for all but adversarial start vectors
        /// (against MathNet's SVD, ConditionEstimateTests: n = 1…130 on spread, clustered, near-identity, two-cluster and evenly spaced
        /// spectra). Cost O(min(n, 24)·n²) multiply-adds on the shared vector kernels plus O(min(n, 24)) divisions per bisection round;
        /// <paramref name="work"/> needs <see cref="ConditionWorkLength"/>(n). Returns +∞ on a zero diagonal or when the inverse overflows.
        /// </summary>
        public static double ConditionEstimate(ReadOnlySpan<double> r, int n, int stride, Span<double> work)
        {
            if (n == 0)
            {
                return 1.0;
            }

            for (int i = 0; i < n; i++)
            {
                if (r[(i * stride) + i] == 0.0)
                {
                    return double.PositiveInfinity;
                }
            }

            double largest = LanczosLargestEigenvalue(r, n, stride, work, inverse: false);
            double inverseLargest = LanczosLargestEigenvalue(r, n, stride, work, inverse: true);
            if (!(inverseLargest > 0.0) || double.IsInfinity(inverseLargest) || double.IsNaN(largest))
            {
                return double.PositiveInfinity;
            }

            return Math.Sqrt(largest) * Math.Sqrt(inverseLargest);
        }

        /// <summary>Largest Ritz value of RᵀR (or of (RᵀR)⁻¹) after min(n, ConditionSteps) Lanczos steps. Work: 3n.</summary>
        private static double LanczosLargestEigenvalue(ReadOnlySpan<double> r, int n, int stride, Span<double> work, bool inverse)
        {
            Span<double> q = work.Slice(0, n);
            Span<double> previous = work.Slice(n, n);
            Span<double> w = work.Slice(2 * n, n);
            Span<double> alpha = stackalloc double[ConditionSteps];
            Span<double> betaSquared = stackalloc double[ConditionSteps];
            int steps = Math.Min(n, ConditionSteps);
            StartVector(q);
            double beta = 0.0;
            int k = 0;
            for (int j = 0; j < steps; j++)
            {
                q.CopyTo(w);
                if (inverse)
                {
                    EstimateSolveUpperTransposed(r, n, stride, w);
                    EstimateSolveUpper(r, n, stride, w);
                }
                else
                {
                    MultiplyUpperInPlace(r, n, stride, w);
                    MultiplyUpperTransposedInPlace(r, n, stride, w);
                }

                if (j > 0)
                {
                    GramUpdateKernels.Axpy(-beta, previous, w);
                }

                double a = CovarianceKernels.Dot(w, q);
                if (double.IsNaN(a) || double.IsInfinity(a))
                {
                    return double.PositiveInfinity;
                }

                GramUpdateKernels.Axpy(-a, q, w);
                alpha[j] = a;
                k = j + 1;
                double b = Norm(w);
                if (j == steps - 1 || !(b > 1e-12 * (Math.Abs(a) + beta)) || double.IsInfinity(b))
                {
                    break; // all steps taken, or the Krylov space is (numerically) invariant: T's eigenvalues are eigenvalues of the operator
                }

                betaSquared[j] = b * b;
                Span<double> t = previous;
                previous = q;
                q = w;
                w = t;
                GramUpdateKernels.Scale(q, 1.0 / b);
                beta = b;
            }

            return LargestTridiagonalEigenvalue(alpha.Slice(0, k), betaSquared.Slice(0, k - 1));
        }

        /// <summary>
        /// Lower end of a bracket of width ≤ 1e-9·(upper end) around the largest eigenvalue of the symmetric tridiagonal matrix with diagonal
        /// <paramref name="a"/> and squared off-diagonal <paramref name="b2"/>: x ≥ λ_max exactly when every LDLᵀ pivot of T − xI is negative
        /// (Sylvester's law of inertia); three points per round, evaluated as independent chains so the divisions overlap.
        /// </summary>
        private static double LargestTridiagonalEigenvalue(ReadOnlySpan<double> a, ReadOnlySpan<double> b2)
        {
            int k = a.Length;
            double lo = a[0];
            double hi = a[0] + (k > 1 ? Math.Sqrt(b2[0]) : 0.0);
            for (int i = 1; i < k; i++)
            {
                double radius = Math.Sqrt(b2[i - 1]) + (i < k - 1 ? Math.Sqrt(b2[i]) : 0.0);
                lo = Math.Max(lo, a[i]);
                hi = Math.Max(hi, a[i] + radius);
            }

            // λ_max ≥ max aᵢ (Rayleigh quotients of unit vectors) and ≤ the Gershgorin bound.
            for (int round = 0; round < 40 && hi - lo > 1e-9 * Math.Abs(hi); round++)
            {
                double h = 0.25 * (hi - lo);
                double x1 = lo + h, x2 = lo + (2.0 * h), x3 = hi - h;
                double d1 = a[0] - x1, d2 = a[0] - x2, d3 = a[0] - x3;
                bool above1 = d1 >= 0.0, above2 = d2 >= 0.0, above3 = d3 >= 0.0; // "some pivot ≥ 0": x is at or below λ_max
                for (int i = 1; i < k; i++)
                {
                    d1 = a[i] - x1 - (b2[i - 1] / d1);
                    d2 = a[i] - x2 - (b2[i - 1] / d2);
                    d3 = a[i] - x3 - (b2[i - 1] / d3);
                    above1 |= d1 >= 0.0;
                    above2 |= d2 >= 0.0;
                    above3 |= d3 >= 0.0;
                }

                if (above3)
                {
                    lo = x3;
                }
                else if (above2)
                {
                    lo = x2;
                    hi = x3;
                }
                else if (above1)
                {
                    lo = x1;
                    hi = x2;
                }
                else
                {
                    hi = x1;
                }
            }

            return lo;
        }

        private static void StartVector(Span<double> v)
        {
            // A fixed vector with no special structure, so that it is unlikely to be orthogonal to any singular vector.
            double norm = 0.0;
            for (int i = 0; i < v.Length; i++)
            {
                v[i] = 1.0 + (0.37 * Math.Sin(1.0 + (2.3 * i)));
                norm += v[i] * v[i];
            }

            GramUpdateKernels.Scale(v, 1.0 / Math.Sqrt(norm));
        }

        // The estimate's passes run on the shared vector kernels (CovarianceKernels.Dot, GramUpdateKernels.Axpy); they affect only the
        // estimate, never a solution (the solves above keep their own scalar order).

        /// <summary>y ← R·y in place: row i reads yᵢ…yₙ₋₁, which rows before it have not yet overwritten.</summary>
        private static void MultiplyUpperInPlace(ReadOnlySpan<double> r, int n, int stride, Span<double> y)
        {
            for (int i = 0; i < n; i++)
            {
                y[i] = CovarianceKernels.Dot(r.Slice((i * stride) + i, n - i), y.Slice(i, n - i));
            }
        }

        /// <summary>y ← Rᵀ·y in place: rows from the last, each setting its own entry and adding into the entries after it.</summary>
        private static void MultiplyUpperTransposedInPlace(ReadOnlySpan<double> r, int n, int stride, Span<double> y)
        {
            for (int i = n - 1; i >= 0; i--)
            {
                int row = (i * stride) + i;
                double xi = y[i];
                y[i] = r[row] * xi;
                GramUpdateKernels.Axpy(xi, r.Slice(row + 1, n - i - 1), y.Slice(i + 1, n - i - 1));
            }
        }

        /// <summary>b ← R⁻¹b for the estimate (diagonal checked non-zero by the caller): dot form, vector kernels.</summary>
        private static void EstimateSolveUpper(ReadOnlySpan<double> r, int n, int stride, Span<double> b)
        {
            for (int i = n - 1; i >= 0; i--)
            {
                int row = i * stride;
                double s = b[i] - CovarianceKernels.Dot(r.Slice(row + i + 1, n - i - 1), b.Slice(i + 1, n - i - 1));
                b[i] = s / r[row + i];
            }
        }

        /// <summary>b ← R⁻ᵀb for the estimate (diagonal checked non-zero by the caller): axpy form, vector kernels.</summary>
        private static void EstimateSolveUpperTransposed(ReadOnlySpan<double> r, int n, int stride, Span<double> b)
        {
            for (int i = 0; i < n; i++)
            {
                int row = i * stride;
                double xi = b[i] / r[row + i];
                b[i] = xi;
                GramUpdateKernels.Axpy(-xi, r.Slice(row + i + 1, n - i - 1), b.Slice(i + 1, n - i - 1));
            }
        }

        /// <summary>‖v‖₂: the plain sum of squares when it is safely inside the normal range (2⁻⁹⁶⁰ … 2⁹⁶⁰), else the scaled two-pass form (no
        /// spurious over- or underflow). O(n).</summary>
        internal static double Norm(ReadOnlySpan<double> v)
        {
            double plain = 0.0;
            for (int i = 0; i < v.Length; i++)
            {
                plain += v[i] * v[i];
            }

            if (plain >= 1.0261342003245941E-289 && plain <= 9.7453140114e+288)
            {
                return Math.Sqrt(plain);
            }

            double scale = 0.0;
            for (int i = 0; i < v.Length; i++)
            {
                scale = Math.Max(scale, Math.Abs(v[i]));
            }

            if (scale == 0.0 || double.IsInfinity(scale))
            {
                return scale;
            }

            double s = 0.0;
            for (int i = 0; i < v.Length; i++)
            {
                double t = v[i] / scale;
                s += t * t;
            }

            return scale * Math.Sqrt(s);
        }
    }
}
