using System;
using System.Linq;
using FsCheck.Xunit;
using MathNet.Numerics.LinearAlgebra;
using Xunit;

namespace OnlineRidge.Tests.Tuning
{
    /// <summary>
    /// The regularization path, GCV and leave-one-out of <see cref="RegularizationPath"/> against brute-force definitions computed with
    /// MathNet.Numerics (explicit hat matrix; n refits) and against direct batch solves.
    /// </summary>
    public class RegularizationPathTests
    {
        /// <summary>A random problem: n rows, p columns with scales over 4 decades and optional collinearity; positive weights with some zeros.</summary>
        internal static (double[] X, double[] Y, double[] W, int N, int P) Problem(int seed, int p, int n, bool collinear)
        {
            var rng = new Random(seed);
            var x = new double[n * p];
            var y = new double[n];
            var w = new double[n];
            var theta = Enumerable.Range(0, p).Select(_ => rng.NextDouble() * 2 - 1).ToArray();
            var scale = Enumerable.Range(0, p).Select(j => Math.Pow(10.0, (rng.NextDouble() * 4) - 2)).ToArray();
            for (int i = 0; i < n; i++)
            {
                double common = rng.NextDouble();
                for (int j = 0; j < p; j++)
                {
                    double v = collinear ? common + (1e-3 * (rng.NextDouble() - 0.5)) : rng.NextDouble() - 0.5;
                    x[(i * p) + j] = scale[j] * (v + 0.3 * j);
                }

                double signal = 0.5;
                for (int j = 0; j < p; j++)
                {
                    signal += theta[j] * x[(i * p) + j] / scale[j];
                }

                y[i] = signal + (0.1 * (rng.NextDouble() - 0.5));
                w[i] = rng.Next(10) == 0 ? 0.0 : 0.5 + (2.5 * rng.NextDouble());
            }

            return (x, y, w, n, p);
        }

        /// <summary>Weighted population standard deviations and means, two-pass (independent of the library).</summary>
        private static (double[] Mean, double[] Sd) Moments(double[] x, double[] w, int n, int p)
        {
            double wsum = w.Sum();
            var mean = new double[p];
            var sd = new double[p];
            for (int j = 0; j < p; j++)
            {
                mean[j] = Enumerable.Range(0, n).Sum(i => w[i] * x[(i * p) + j]) / wsum;
                sd[j] = Math.Sqrt(Enumerable.Range(0, n).Sum(i => w[i] * Math.Pow(x[(i * p) + j] - mean[j], 2)) / wsum);
            }

            return (mean, sd);
        }

        /// <summary>
        /// Theorem (Golub, Heath and Wahba 1979; MATH.md §7.1): GCV(λ) = N·RSS(λ)/(N − tr H(λ))² with H the hat matrix of the weighted,
        /// standardized ridge problem with an unpenalized intercept; the path's SVD formula equals the explicit hat-matrix trace (MathNet).
        /// </summary>
        [Property(MaxTest = 200, Replay = "(17,29)")]
        public void GcvFromSvdEqualsExplicitHatMatrixDefinition(int seed, byte pRaw, byte nRaw, bool collinear)
        {
            int p = 1 + (pRaw % 8);
            int n = p + 3 + (nRaw % 40);
            var (x, y, w, _, _) = Problem(seed, p, n, collinear);
            double[] grid = { 1e-4, 1e-2, 1.0, 100.0 };
            var path = RegularizationPath.Compute(new MatrixView(x, n, p), y, new RidgeSettings { Standardize = true }, w, grid);

            var (mean, sd) = Moments(x, w, n, p);
            int m = w.Count(v => v > 0);
            var rows = Enumerable.Range(0, n).Where(i => w[i] > 0).ToArray();
            var a = Matrix<double>.Build.DiagonalOfDiagonalArray(rows.Select(i => w[i]).ToArray());
            var design = Matrix<double>.Build.Dense(m, p + 1, (r, c) => c == 0 ? 1.0 : x[(rows[r] * p) + c - 1]);
            var yv = Vector<double>.Build.DenseOfArray(rows.Select(i => y[i]).ToArray());
            for (int k = 0; k < grid.Length; k++)
            {
                var pen = Matrix<double>.Build.Dense(p + 1, p + 1, (r, c) => r == c && r > 0 ? grid[k] * sd[r - 1] * sd[r - 1] : 0.0);
                var h = design * (design.Transpose() * a * design + pen).Inverse() * design.Transpose() * a;
                double df = h.Trace();
                var resid = yv - (h * yv);
                double rss = resid.PointwiseMultiply(resid).PointwiseMultiply(a.Diagonal()).Sum();
                double gcv = m * rss / ((m - df) * (m - df));
                double tol = 1e-8 * Math.Max(1.0, Math.Abs(gcv));
                Assert.True(Math.Abs(path.EffectiveDegreesOfFreedom[k] - df) <= 1e-8 * (p + 1), $"df {path.EffectiveDegreesOfFreedom[k]} vs {df}");
                Assert.True(Math.Abs(path.GeneralizedCrossValidation[k] - gcv) <= tol * 10, $"λ={grid[k]}: GCV {path.GeneralizedCrossValidation[k]} vs explicit {gcv}");
            }
        }

        /// <summary>
        /// Theorem (Allen 1974; MATH.md §7.2): the exact leave-one-out residual is rᵢ/(1 − hᵢᵢ); PRESS/N from the SVD equals n refits of the
        /// batch estimator with row i removed (standardization scales held at their full-data values, as the identity requires).
        /// </summary>
        [Property(MaxTest = 100, Replay = "(23,31)")]
        public void LeaveOneOutFromSvdEqualsRefittingWithoutEachRow(int seed, byte pRaw, byte nRaw)
        {
            int p = 1 + (pRaw % 6);
            int n = p + 3 + (nRaw % 25);
            var (x, y, w, _, _) = Problem(seed, p, n, collinear: false);
            double[] grid = { 1e-3, 0.1, 10.0 };
            var path = RegularizationPath.Compute(new MatrixView(x, n, p), y, new RidgeSettings { Standardize = true }, w, grid);

            // Refits on pre-scaled data with Standardize = false penalize exactly λ Σ (σⱼθⱼ)² with the full-data σ.
            var (_, sd) = Moments(x, w, n, p);
            var xs = new double[n * p];
            for (int i = 0; i < n; i++)
            {
                for (int j = 0; j < p; j++)
                {
                    xs[(i * p) + j] = x[(i * p) + j] / sd[j];
                }
            }

            double count = w.Count(v => v > 0);
            for (int k = 0; k < grid.Length; k++)
            {
                double press = 0.0;
                for (int i = 0; i < n; i++)
                {
                    if (w[i] == 0.0)
                    {
                        continue;
                    }

                    var wi = (double[])w.Clone();
                    wi[i] = 0.0;
                    var fit = BatchRidge.Fit(new MatrixView(xs, n, p), y, new RidgeSettings { Penalty = grid[k], Standardize = false, Solver = RidgeSolver.Qr }, wi);
                    double e = y[i] - fit.Predict(xs.AsSpan(i * p, p));
                    press += w[i] * e * e;
                }

                double loo = press / count;
                Assert.True(Math.Abs(path.LeaveOneOut![k] - loo) <= 1e-8 * Math.Max(loo, 1e-12), $"λ={grid[k]}: LOO {path.LeaveOneOut[k]} vs refits {loo}");
            }
        }

        /// <summary>Theorem (MATH.md §1.4): the path's coefficients at each grid point equal a direct batch solve with that penalty (SVD and QR solvers).</summary>
        [Property(MaxTest = 200, Replay = "(41,43)")]
        public void PathAtEachGridPointEqualsDirectSolve(int seed, byte pRaw, byte nRaw, bool intercept, bool standardize)
        {
            int p = 1 + (pRaw % 20);
            int n = p + 2 + (nRaw % 60);
            var (x, y, w, _, _) = Problem(seed, p, n, collinear: seed % 3 == 0);
            var settings = new RidgeSettings { FitIntercept = intercept, Standardize = standardize, ForgettingFactor = seed % 2 == 0 ? 1.0 : 0.97 };
            var path = RegularizationPath.Compute(new MatrixView(x, n, p), y, settings, w, leaveOneOut: false);
            Assert.Equal(RegularizationPath.DefaultGridSize, path.Count);
            var theta = new double[p];
            for (int k = 0; k < path.Count; k += 7)
            {
                var direct = BatchRidge.Fit(new MatrixView(x, n, p), y, settings.WithPenalty(path.Penalties[k]), w);
                path.CopyCoefficientsTo(k, theta);
                double scale = Math.Max(1.0, Math.Sqrt(direct.Coefficients.Sum(c => c * c)));
                double diff = Math.Sqrt(theta.Zip(direct.Coefficients, (u, v) => (u - v) * (u - v)).Sum());

                // Orthogonal-class tolerance (MATH.md §10) with κ = cond(H) of the stacked system computed here with MathNet.
                double kappa = StackedHessianCondition(x, w, n, p, intercept, standardize, settings.ForgettingFactor, path.Penalties[k]);
                double tol = 10 * (p + Math.Sqrt(n)) * 2.220446049250313e-16 * (Math.Sqrt(kappa) + (kappa * 1e-2)) * 2;
                Assert.True(diff <= Math.Max(tol, 1e-10) * scale, $"k={k} λ={path.Penalties[k]:E2}: diff {diff:E2}, tol {tol:E2}");
                Assert.Equal(direct.Intercept, path.Intercepts[k], 6);
                Assert.True(Math.Abs(direct.ResidualSumOfSquares - path.ResidualSumOfSquares[k]) <= 1e-7 * Math.Max(1e-6, direct.ResidualSumOfSquares));
                Assert.True(Math.Abs(direct.EffectiveDegreesOfFreedom - path.EffectiveDegreesOfFreedom[k]) <= 1e-8 * (p + 1));
            }
        }

        /// <summary>cond₂ of H = Zᵀ A Z + λI for the centered (with intercept) and scaled (with standardization) weighted design, by MathNet's EVD.</summary>
        private static double StackedHessianCondition(double[] x, double[] w, int n, int p, bool intercept, bool standardize, double beta, double lambda)
        {
            var a = Enumerable.Range(0, n).Select(i => w[i] * Math.Pow(beta, n - 1 - i)).ToArray();
            var (mean, sd) = Moments(x, a, n, p);
            var z = Matrix<double>.Build.Dense(n, p, (i, j) =>
                Math.Sqrt(a[i]) * (x[(i * p) + j] - (intercept ? mean[j] : 0.0)) / (standardize ? (intercept ? sd[j] : Math.Sqrt(Enumerable.Range(0, n).Sum(r => a[r] * x[(r * p) + j] * x[(r * p) + j]) / a.Sum())) : 1.0));
            var h = (z.Transpose() * z) + (lambda * Matrix<double>.Build.DenseIdentity(p));
            var ev = h.Evd(Symmetricity.Symmetric).EigenValues.Select(c => c.Real).ToArray();
            return ev.Max() / ev.Min();
        }

        [Fact]
        public void DefaultGridIsLogSpacedOverEightDecadesOfTheLargestSquaredSingularValue()
        {
            // MATH.md §7.3: ~50 log-spaced values in [1e-6 s1², 1e2 s1²].
            double[] g = RegularizationPath.DefaultGrid(3.0);
            Assert.Equal(50, g.Length);
            Assert.Equal(9e-6, g[0], 12);
            Assert.Equal(900.0, g[^1], 9);
            double ratio = g[1] / g[0];
            for (int k = 1; k < g.Length; k++)
            {
                Assert.Equal(ratio, g[k] / g[k - 1], 10);
            }
        }

        [Fact]
        public void InvalidGridValuesAreRejectedWithTheirIndex()
        {
            var (x, y, _, n, p) = Problem(1, 3, 20, false);
            var ex = Assert.Throws<ArgumentException>(() => RegularizationPath.Compute(new MatrixView(x, n, p), y, null, default, new[] { 1.0, -2.0 }));
            Assert.Equal("penalties", ex.ParamName);
            Assert.Contains("-2", ex.Message, StringComparison.Ordinal);
            Assert.Throws<ArgumentException>(() => RegularizationPath.Compute(new MatrixView(x, n, p), y, null, default, new[] { double.NaN }));
        }
    }
}
