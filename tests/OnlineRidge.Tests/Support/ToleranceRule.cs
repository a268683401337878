using System;
using System.Linq;
using MathNet.Numerics.LinearAlgebra;

namespace OnlineRidge.Tests.Support
{
    /// <summary>
    /// The tolerance rule of MATH.md §10 for comparing two solutions of the same regularized least-squares problem.
    /// All inputs are computed here from the batch problem with MathNet.Numerics (a general-purpose reference library), never from the
    /// code under test.
    /// </summary>
    public static class ToleranceRule
    {
        public const double Eps = 2.220446049250313e-16;

        /// <summary>Gram class (batch Cholesky, information form, covariance RLS with κ_path): 10 (p + √m) ε κ.</summary>
        public static double Gram(int p, int m, double kappa) => 10.0 * (p + Math.Sqrt(m)) * Eps * kappa;

        /// <summary>Orthogonal class (batch QR/SVD, square-root forms): 10 (p + √m) ε (√κ + κ η).</summary>
        public static double Orthogonal(int p, int m, double kappa, double eta) => 10.0 * (p + Math.Sqrt(m)) * Eps * (Math.Sqrt(kappa) + (kappa * eta));

        /// <summary>Objective values: 10 (p + √m) ε (Y² + 2 √(J* λ_max) ‖θ̂‖).</summary>
        public static double Objective(int p, int m, double y2, double jStar, double lambdaMax, double thetaNorm) =>
            10.0 * (p + Math.Sqrt(m)) * Eps * (y2 + (2.0 * Math.Sqrt(jStar * lambdaMax) * thetaNorm));

        /// <summary>Above this sum of tolerances the comparison carries no information and is skipped (MATH.md §10).</summary>
        public const double SkipLevel = 1e-2;

        /// <summary>
        /// The spectral facts of a problem's Hessian H = Σ aᵢ uᵢuᵢᵀ + Γ (u the regressor vector as the estimator sees it, e.g. with a
        /// leading 1 for an intercept), with the stacked right-hand side Y² = Σ aᵢyᵢ² + θ₀ᵀΓθ₀.
        /// </summary>
        public sealed class Problem
        {
            public Problem(Matrix<double> hessian, double y2)
            {
                Hessian = hessian;
                var evd = hessian.Evd(MathNet.Numerics.LinearAlgebra.Symmetricity.Symmetric);
                var ev = evd.EigenValues.Select(c => c.Real).ToArray();
                LambdaMax = ev.Max();
                LambdaMin = ev.Min();
                Kappa = LambdaMin > 0 ? LambdaMax / LambdaMin : double.PositiveInfinity;
                Y2 = y2;
            }

            public Matrix<double> Hessian { get; }

            public double LambdaMax { get; }

            public double LambdaMin { get; }

            /// <summary>cond₂(H).</summary>
            public double Kappa { get; }

            public double Y2 { get; }

            /// <summary>Builds H from rows (already including any intercept column), effective weights and penalty matrix Γ.</summary>
            public static Problem FromData(double[][] rows, double[] y, double[] a, Matrix<double> gamma, double[] theta0)
            {
                int p = gamma.RowCount;
                var h = gamma.Clone();
                double y2 = 0.0;
                for (int i = 0; i < rows.Length; i++)
                {
                    var u = Vector<double>.Build.DenseOfArray(rows[i]);
                    h += a[i] * u.OuterProduct(u);
                    y2 += a[i] * y[i] * y[i];
                }

                var t0 = Vector<double>.Build.DenseOfArray(theta0.Length == 0 ? new double[p] : theta0);
                y2 += t0 * (gamma * t0);
                return new Problem(h, y2);
            }

            /// <summary>η = √J* / (√λ_max ‖θ̂‖), the relative residual of the stacked system.</summary>
            public double Eta(double jStar, double thetaNorm) => thetaNorm > 0 ? Math.Sqrt(Math.Max(jStar, 0.0)) / (Math.Sqrt(LambdaMax) * thetaNorm) : 0.0;

            /// <summary>The coefficient bound (tolA + tolB) · max(‖θ_B‖, Y/√λ_max).</summary>
            public double CoefficientBound(double tolA, double tolB, double thetaBNorm) =>
                (tolA + tolB) * Math.Max(thetaBNorm, Math.Sqrt(Y2) / Math.Sqrt(LambdaMax));
        }

        public static double Norm(double[] v) => Math.Sqrt(v.Sum(e => e * e));

        public static double Distance(double[] a, double[] b) => Math.Sqrt(a.Zip(b, (u, v) => (u - v) * (u - v)).Sum());
    }
}
