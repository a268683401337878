using System;
using System.Collections.Generic;
using System.Linq;
using MathNet.Numerics.LinearAlgebra;
using OnlineRidge.Tests.Properties;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Batch
{
    /// <summary>
    /// Data-dependent breakdown (DESIGN.md, failures tier 2) and rank deficiency: what each solver does with an exactly collinear or
    /// underdetermined design, constant columns under standardization, and the NIST StRD Filip set (source: NIST ITL StRD, Data/NistStrd).
    /// Minimum-norm references are MathNet's pseudo-inverse (a general-purpose reference library).
    /// </summary>
    public class BatchRidgeBreakdownTests
    {
        private const int Rows = 40;

        /// <summary>40 rows, columns t, cos(3t), t (the third duplicates the first); y = 1 + 2t − cos(3t) + small deterministic noise.</summary>
        private static (double[] X, double[] Y) DuplicateColumnDesign()
        {
            var x = new double[Rows * 3];
            var y = new double[Rows];
            for (int i = 0; i < Rows; i++)
            {
                double t = (i - 17.3) / 9.0;
                x[i * 3] = t;
                x[(i * 3) + 1] = Math.Cos(3.0 * t);
                x[(i * 3) + 2] = t;
                y[i] = 1.0 + (2.0 * t) - Math.Cos(3.0 * t) + (0.01 * Math.Sin(7.1 * i));
            }

            return (x, y);
        }

        /// <summary>
        /// The minimum-norm least-squares solution with an unpenalized intercept: θ = (A^½X̃D⁻¹)⁺A^½ỹ scaled back by D⁻¹ (X̃, ỹ centered on
        /// the weighted means; D the penalty metric, I without standardization), b₀ = m_y − m_xᵀθ. Profiling out the intercept is the
        /// textbook reduction (the intercept is free, so it takes its optimal value for every θ); MathNet's PseudoInverse does the rest.
        /// Also returns the bound of MATH.md §10's coefficient rule for two orthogonal-class results, 2·tol_Q·max(‖φ‖, ‖z‖/s₁) in
        /// φ = Dθ coordinates (κ = (s₁/s_r)² over the r retained singular values), mapped to θ by 1/min(D), and the same bound for
        /// the intercept, times 1 + ‖m_x‖ (b₀ = m_y − m_xᵀθ).
        /// </summary>
        internal static (double[] Theta, double Intercept, double Bound, double InterceptBound) MinimumNorm(double[] x, double[] y, int n, int p, bool intercept, double[] d, double[]? weights = null)
        {
            double[] a = weights ?? Enumerable.Repeat(1.0, n).ToArray();
            double w = a.Sum();
            double[] mx = Enumerable.Range(0, p).Select(j => intercept ? Enumerable.Range(0, n).Sum(i => a[i] * x[(i * p) + j]) / w : 0.0).ToArray();
            double my = intercept ? Enumerable.Range(0, n).Sum(i => a[i] * y[i]) / w : 0.0;
            Matrix<double> b = Matrix<double>.Build.Dense(n, p, (i, j) => Math.Sqrt(a[i]) * (x[(i * p) + j] - mx[j]) / d[j]);
            Vector<double> z = Vector<double>.Build.Dense(n, i => Math.Sqrt(a[i]) * (y[i] - my));
            Vector<double> phi = b.PseudoInverse() * z;
            double[] theta = Enumerable.Range(0, p).Select(j => phi[j] / d[j]).ToArray();
            double b0 = intercept ? my - Enumerable.Range(0, p).Sum(j => mx[j] * theta[j]) : 0.0;

            double[] s = b.Svd(false).S.ToArray();
            double s1 = s[0];
            double[] kept = s.Where(v => v > Math.Max(n, p) * ToleranceRule.Eps * s1).ToArray();
            double kappa = Math.Pow(s1 / kept[^1], 2);
            double residual = (z - (b * phi)).L2Norm();
            double eta = phi.L2Norm() > 0 ? residual / (s1 * phi.L2Norm()) : 0.0;
            double tol = ToleranceRule.Orthogonal(p, n, kappa, eta);
            double bound = 2.0 * tol * Math.Max(phi.L2Norm(), z.L2Norm() / s1) / d.Min();
            return (theta, b0, bound, bound * (1.0 + ToleranceRule.Norm(mx)));
        }

        private static RidgeSettings Settings(RidgeSolver solver, bool standardize = false) =>
            new() { Solver = solver, Standardize = standardize, FitIntercept = true, Penalty = 0.0 };

        [Fact]
        public void CholeskyReportsTheCollinearDesignAsBreakdown()
        {
            var (x, y) = DuplicateColumnDesign();
            var view = new MatrixView(x, Rows, 3);
            RidgeSettings settings = Settings(RidgeSolver.Cholesky);
            Assert.False(BatchRidge.TryFit(view, y, settings, default, out RidgeFit? fit, out BreakdownInfo bd));
            Assert.Null(fit);
            Assert.True(bd.Kind is BreakdownKind.NotPositiveDefinite or BreakdownKind.IllConditioned, bd.ToString());
            if (bd.Kind == BreakdownKind.NotPositiveDefinite)
            {
                Assert.Equal(2, bd.PivotIndex); // the duplicate is the later column
            }
            else
            {
                Assert.True(bd.ConditionEstimate > settings.CholeskyConditionLimit, bd.ToString());
            }

            var ex = Assert.Throws<RidgeBreakdownException>(() => BatchRidge.Fit(new MatrixView(x, Rows, 3), y, settings));
            Assert.IsAssignableFrom<ArithmeticException>(ex);
            Assert.Equal(bd, ex.Info);
            Assert.Equal(bd.ToString(), ex.Message);
        }

        [Fact]
        public void QrReportsTheCollinearDesignAsRankDeficient()
        {
            var (x, y) = DuplicateColumnDesign();
            RidgeSettings settings = Settings(RidgeSolver.Qr);
            Assert.False(BatchRidge.TryFit(new MatrixView(x, Rows, 3), y, settings, default, out RidgeFit? fit, out BreakdownInfo bd));
            Assert.Null(fit);
            Assert.Equal(BreakdownKind.RankDeficient, bd.Kind);
            Assert.Contains(bd.PivotIndex, new[] { 0, 2 }); // a column of the dependency
            Assert.True(bd.ConditionEstimate * Rows * ToleranceRule.Eps >= 1.0, bd.ToString()); // beyond the default rank tolerance max(n, p)·ε

            var ex = Assert.Throws<RidgeBreakdownException>(() => BatchRidge.Fit(new MatrixView(x, Rows, 3), y, settings));
            Assert.IsAssignableFrom<ArithmeticException>(ex);
            Assert.Equal(bd, ex.Info);
        }

        /// <summary>
        /// SVD returns the minimum-norm solution (MATH.md §1.3) and Auto falls back to it. Facts: it equals MathNet's pseudo-inverse
        /// solution, and by symmetry (textbook: the minimum-norm point of the line θ + t(e₀ − e₂)) the duplicate columns share the weight.
        /// With standardization the metric is D, which is the same for both duplicates, so the answer is the same.
        /// </summary>
        [Theory]
        [InlineData(RidgeSolver.Svd, false)]
        [InlineData(RidgeSolver.Svd, true)]
        [InlineData(RidgeSolver.Auto, false)]
        [InlineData(RidgeSolver.Auto, true)]
        public void SvdAndAutoReturnTheMinimumNormSolutionOfTheCollinearDesign(RidgeSolver solver, bool standardize)
        {
            var (x, y) = DuplicateColumnDesign();
            Assert.True(BatchRidge.TryFit(new MatrixView(x, Rows, 3), y, Settings(solver, standardize), default, out RidgeFit? fit, out BreakdownInfo bd), bd.ToString());
            Assert.Equal(RidgeSolver.Svd, fit.SolverUsed);
            Assert.Equal(2, fit.Rank);
            var (theta, b0, bound, interceptBound) = MinimumNorm(x, y, Rows, 3, true, new[] { 1.0, 1.0, 1.0 });
            Assert.True(ToleranceRule.Distance(fit.Coefficients.ToArray(), theta) <= bound, $"coefficients [{string.Join(", ", fit.Coefficients)}] vs pinv [{string.Join(", ", theta)}], bound {bound:E2}");
            Assert.True(Math.Abs(fit.Intercept - b0) <= interceptBound, $"intercept {fit.Intercept} vs {b0}");
            Assert.True(Math.Abs(fit.Coefficients[0] - fit.Coefficients[2]) <= bound, "the duplicates must share the weight");
            Assert.Equal(2.0 + 1.0, fit.EffectiveDegreesOfFreedom, 9); // rank + intercept
        }

        /// <summary>
        /// A general rank deficiency (x₂ = x₀ + 2·x₁ with columns of very different scales): without standardization the SVD solution is the
        /// raw minimum-norm one, MathNet's pseudo-inverse of the centered design; with standardization it is minimal in the metric D,
        /// i.e. D⁻¹(X̃D⁻¹)⁺ỹ. This is where the two metrics differ. With a prior θ₀ the solution is minimal in ‖D(θ − θ₀)‖: θ₀ plus the
        /// minimum-norm solution for the outputs y − Xθ₀ (substitute θ = θ₀ + δ).
        /// </summary>
        [Theory]
        [InlineData(false, false)]
        [InlineData(true, false)]
        [InlineData(false, true)]
        [InlineData(true, true)]
        public void SvdMinimumNormIsInTheDocumentedMetric(bool standardize, bool withPrior)
        {
            const int n = 30;
            const int p = 3;
            var x = new double[n * p];
            var y = new double[n];
            var w = new double[n];
            for (int i = 0; i < n; i++)
            {
                x[i * p] = 100.0 * Math.Sin(i + 0.5);
                x[(i * p) + 1] = 0.01 * Math.Cos(2.3 * i);
                x[(i * p) + 2] = x[i * p] + (2.0 * x[(i * p) + 1]);
                y[i] = 0.3 + (0.02 * x[i * p]) + (40.0 * x[(i * p) + 1]) + (0.05 * Math.Sin(5.7 * i));
                w[i] = 0.5 + (i % 3);
            }

            double[] prior = withPrior ? new[] { 0.01, -20.0, 0.5 } : new double[p];
            var settings = new RidgeSettings { Solver = RidgeSolver.Svd, Standardize = standardize, Prior = withPrior ? prior : null };
            RidgeFit fit = BatchRidge.Fit(new MatrixView(x, n, p), y, settings, w);
            Assert.Equal(2, fit.Rank);
            var c = new BatchCase(n, p, x, y, w, WeightKind.Continuous, BatchDesignKind.Collinear, 0.0, 1.0, true, standardize, null);
            double[] d = BatchReference.Scales(c, w);
            double[] shifted = Enumerable.Range(0, n).Select(i => y[i] - Enumerable.Range(0, p).Sum(j => x[(i * p) + j] * prior[j])).ToArray();
            var (delta, b0, bound, interceptBound) = MinimumNorm(x, shifted, n, p, true, d, w);
            double[] theta = delta.Select((v, j) => v + prior[j]).ToArray();
            Assert.True(ToleranceRule.Distance(fit.Coefficients.ToArray(), theta) <= bound, $"std={standardize}: coefficients [{string.Join(", ", fit.Coefficients)}] vs minimum norm [{string.Join(", ", theta)}], bound {bound:E2}");
            Assert.True(Math.Abs(fit.Intercept - b0) <= interceptBound, $"intercept {fit.Intercept} vs {b0}");
        }

        /// <summary>
        /// Fewer samples than parameters without a penalty (3 rows, 5 regressors, no intercept): the SVD solver returns the minimum-norm
        /// solution X⁺y (MathNet's pseudo-inverse), which interpolates the data (RSS at rounding level).
        /// </summary>
        [Fact]
        public void SvdGivesTheMinimumNormSolutionOfAnUnderdeterminedProblem()
        {
            const int n = 3;
            const int p = 5;
            double[] x = Enumerable.Range(0, n * p).Select(k => Math.Sin(1.0 + (1.7 * k) + (0.31 * k * k)) * (1.0 + (k % p))).ToArray();
            double[] y = { 0.5, -1.25, 2.0 };
            RidgeFit fit = BatchRidge.Fit(new MatrixView(x, n, p), y, new RidgeSettings { Solver = RidgeSolver.Svd, FitIntercept = false, Standardize = false });
            Assert.Equal(n, fit.Rank);
            Assert.Equal(RidgeSolver.Svd, fit.SolverUsed);
            var (theta, _, bound, _) = MinimumNorm(x, y, n, p, false, Enumerable.Repeat(1.0, p).ToArray());
            Assert.True(ToleranceRule.Distance(fit.Coefficients.ToArray(), theta) <= bound, $"coefficients [{string.Join(", ", fit.Coefficients)}] vs pinv [{string.Join(", ", theta)}], bound {bound:E2}");
            Assert.True(fit.ResidualSumOfSquares <= 1e-24, $"RSS {fit.ResidualSumOfSquares}");
        }

        /// <summary>
        /// A constant column under standardization with an intercept has no spread to measure it in: it is excluded (coefficient 0, listed
        /// in ExcludedColumns) and the rest of the fit equals the fit without that column (MathNet QR reference of the reduced problem),
        /// with or without penalty, forgetting and prior, for every solver. Without an intercept a constant column is an ordinary regressor.
        /// </summary>
        [Theory]
        [InlineData(0.0, 1.0)]
        [InlineData(0.5, 1.0)]
        [InlineData(3.0, 0.97)]
        public void ConstantColumnIsExcludedUnderStandardization(double penalty, double beta)
        {
            const int n = 25;
            const int p = 3;
            var x = new double[n * p];
            var y = new double[n];
            for (int i = 0; i < n; i++)
            {
                x[i * p] = Math.Sin(i);
                x[(i * p) + 1] = 7.25;
                x[(i * p) + 2] = Math.Cos(1.3 * i) * 10.0;
                y[i] = 2.0 + x[i * p] - (0.1 * x[(i * p) + 2]) + (0.05 * Math.Sin(3.1 * i));
            }

            double[] prior = { 0.5, -3.0, 0.25 };
            var reduced = new BatchCase(
                n, 2, Enumerable.Range(0, n).SelectMany(i => new[] { x[i * p], x[(i * p) + 2] }).ToArray(), y, Array.Empty<double>(), WeightKind.Unit,
                BatchDesignKind.Uniform, penalty, beta, true, true, new[] { prior[0], prior[2] });
            ReferenceSolution r = BatchReference.Solve(reduced);
            foreach (RidgeSolver solver in BatchRidgeProperties.AllSolvers)
            {
                var settings = new RidgeSettings { Solver = solver, Penalty = penalty, ForgettingFactor = beta, Prior = prior };
                RidgeFit fit = BatchRidge.Fit(new MatrixView(x, n, p), y, settings);
                Assert.Equal(new[] { 1 }, fit.ExcludedColumns);
                Assert.Equal(0.0, fit.Coefficients[1]);
                double[] actual = { fit.Intercept, fit.Coefficients[0], fit.Coefficients[2] };
                BatchReference.AssertClose(actual, r.Augmented, r.Problem, r.Tolerance(fit.SolverUsed), r.OwnTolerance, $"{solver}, constant column excluded");
            }

            // Without an intercept the constant column is a regressor like any other (its RMS is 7.25, not 0).
            var full = new BatchCase(n, p, x, y, Array.Empty<double>(), WeightKind.Unit, BatchDesignKind.Uniform, penalty, beta, false, true, prior);
            ReferenceSolution rf = BatchReference.Solve(full);
            RidgeFit noIntercept = BatchRidge.Fit(full.View, y, full.Settings(RidgeSolver.Qr));
            Assert.Empty(noIntercept.ExcludedColumns);
            BatchReference.AssertClose(noIntercept.Coefficients.ToArray(), rf.Augmented, rf.Problem, rf.Tolerance(RidgeSolver.Qr), rf.OwnTolerance, "no intercept");
        }

        /// <summary>
        /// NIST StRD Filip (degree-10 polynomial; cond of the design about 10¹⁵ raw, ~10⁸ centered and scaled): the Cholesky solver must
        /// either reach 7 digits in every coefficient (LRE against the certified values) or report the ill-conditioning it detected;
        /// it must never claim success with fewer digits. Checked with the default condition limit, and for stricter limits L with the
        /// documented promise of an accepted solution, 16 − log₁₀L − log₁₀(10p) digits (RidgeSettings.DefaultCholeskyConditionLimit).
        /// </summary>
        [Theory]
        [InlineData(false, RidgeSettings.DefaultCholeskyConditionLimit)]
        [InlineData(true, RidgeSettings.DefaultCholeskyConditionLimit)]
        [InlineData(false, 1e6)]
        [InlineData(true, 1e8)]
        public void CholeskyOnFilipReachesSevenDigitsOrReportsIllConditioning(bool standardize, double limit)
        {
            var ds = NistDataset.Load("Filip");
            var settings = new RidgeSettings { Solver = RidgeSolver.Cholesky, Standardize = standardize, CholeskyConditionLimit = limit };
            if (!BatchRidge.TryFit(new MatrixView(ds.X, ds.Rows, ds.Columns), ds.Y, settings, default, out RidgeFit? fit, out BreakdownInfo bd))
            {
                Assert.True(bd.Kind is BreakdownKind.IllConditioned or BreakdownKind.NotPositiveDefinite, bd.ToString());
                if (bd.Kind == BreakdownKind.IllConditioned)
                {
                    Assert.True(bd.ConditionEstimate > limit, bd.ToString());
                }

                return;
            }

            double required = limit == RidgeSettings.DefaultCholeskyConditionLimit ? 7.0 : Math.Min(7.0, 16.0 - Math.Log10(limit) - Math.Log10(10.0 * (ds.Columns + 1)));
            var digits = ds.Digits(fit);
            Assert.True(digits.Coefficients >= required, $"Cholesky accepted Filip (condition estimate {fit.ConditionEstimate:E2}) with {digits.Coefficients:F1} digits < {required:F1}");
        }

        /// <summary>
        /// Finite data so large (1e200) that squares overflow: TryFit must report a breakdown (or succeed with finite results), never
        /// throw; Fit throws only <see cref="RidgeBreakdownException"/>. (The SVD and Auto solvers used to let MathNet's
        /// NonConvergenceException escape from TryFit.)
        /// </summary>
        [Theory]
        [InlineData(false)]
        [InlineData(true)]
        public void OverflowIsReportedAsBreakdownNeverAsForeignException(bool standardize)
        {
            const int n = 10;
            double[] x = Enumerable.Range(0, n * 2).Select(k => 1e200 * (1.0 + (0.1 * Math.Sin(k)))).ToArray();
            double[] y = Enumerable.Range(0, n).Select(k => 1e200 * Math.Cos(k)).ToArray();
            foreach (RidgeSolver solver in BatchRidgeProperties.AllSolvers)
            {
                var settings = new RidgeSettings { Solver = solver, Standardize = standardize, FitIntercept = false, Penalty = 1.0 };
                if (BatchRidge.TryFit(new MatrixView(x, n, 2), y, settings, default, out RidgeFit? fit, out BreakdownInfo bd))
                {
                    Assert.All(fit.Coefficients, v => Assert.True(double.IsFinite(v), $"{solver}: coefficient {v}"));
                }
                else
                {
                    Assert.NotEqual(BreakdownKind.None, bd.Kind);
                    var ex = Assert.Throws<RidgeBreakdownException>(() => BatchRidge.Fit(new MatrixView(x, n, 2), y, settings));
                    Assert.Equal(bd, ex.Info);
                }
            }
        }
    }
}
