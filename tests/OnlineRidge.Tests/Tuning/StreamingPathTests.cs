using System;
using System.Linq;
using FsCheck.Xunit;
using Xunit;

namespace OnlineRidge.Tests.Tuning
{
    /// <summary>The regularization path and GCV of a running square-root estimator, from its state alone (MATH.md §7.3).</summary>
    public class StreamingPathTests
    {
        private static SquareRootEstimator Feed(double[] x, double[] y, double[] w, int n, int p, SquareRootSettings settings)
        {
            var e = new SquareRootEstimator(p, settings);
            for (int i = 0; i < n; i++)
            {
                e.Update(x.AsSpan(i * p, p), y[i], w[i]);
            }

            return e;
        }

        /// <summary>
        /// Theorem (MATH.md §3.3, §7.3): the SVD of the factor's data block has the singular values of the weighted design, so the streaming
        /// path equals the batch path of the same data (weights β̃ⁿ⁻ⁱwᵢ, β̃ = fl(√β)²) in coefficients, RSS, df and GCV with N = Σβ̃ⁿ⁻ⁱ.
        /// </summary>
        [Property(MaxTest = 150, Replay = "(51,53)")]
        public void StreamingPathEqualsTheBatchPathOfTheSameData(int seed, byte pRaw, byte nRaw, bool intercept, bool standardize, bool forget)
        {
            int p = 1 + (pRaw % 12);
            int n = p + 3 + (nRaw % 80);
            var (x, y, w, _, _) = RegularizationPathTests.Problem(seed, p, n, collinear: seed % 3 == 0);
            double beta = forget ? 0.95 : 1.0;
            var e = Feed(x, y, w, n, p, new SquareRootSettings { ForgettingFactor = beta, FitIntercept = intercept, Standardize = standardize });
            double[] grid = { 1e-3, 0.1, 10.0, 1000.0 };
            var streaming = RegularizationPath.FromState(e, grid);
            var batch = RegularizationPath.Compute(new MatrixView(x, n, p), y,
                new RidgeSettings { ForgettingFactor = e.EffectiveForgettingFactor, FitIntercept = intercept, Standardize = standardize }, w, grid, leaveOneOut: false);
            Assert.Null(streaming.LeaveOneOut);
            var a = new double[p];
            var b = new double[p];
            var c = new double[p];
            for (int k = 0; k < grid.Length; k++)
            {
                streaming.CopyCoefficientsTo(k, a);
                batch.CopyCoefficientsTo(k, b);
                double icpt = e.SolveWithPenalty(grid[k], c);
                double scale = Math.Max(1.0, Math.Sqrt(b.Sum(v => v * v)));

                // Both are orthogonal-class solves of problems with cond(X) ≤ ~10⁵ here: agreement to 1e-8 relative is
                // far inside 10(p+√n)ε(√κ+κη) (MATH.md §10) for these generators (κ of H ≤ 10¹⁰).
                Assert.True(ToleranceRuleDistance(a, b) <= 1e-7 * scale, $"λ={grid[k]} streaming vs batch path");
                Assert.True(ToleranceRuleDistance(a, c) <= 1e-7 * scale, $"λ={grid[k]} streaming path vs SolveWithPenalty");
                Assert.Equal(batch.Intercepts[k], streaming.Intercepts[k], 6);
                Assert.Equal(icpt, streaming.Intercepts[k], 6);
                Assert.True(Math.Abs(batch.EffectiveDegreesOfFreedom[k] - streaming.EffectiveDegreesOfFreedom[k]) <= 1e-8 * (p + 1));
                double gb = batch.GeneralizedCrossValidation[k];
                double gs = streaming.GeneralizedCrossValidation[k];
                Assert.True(double.IsPositiveInfinity(gb) ? double.IsPositiveInfinity(gs) : Math.Abs(gb - gs) <= 1e-7 * gb,
                    $"GCV {streaming.GeneralizedCrossValidation[k]} vs batch {batch.GeneralizedCrossValidation[k]}");
            }

            Assert.Equal(batch.DiscountedCount, streaming.DiscountedCount, 9);
        }

        [Fact]
        public void AnEmptyEstimatorHasNoPath()
        {
            var e = new SquareRootEstimator(3);
            Assert.Throws<InvalidOperationException>(() => RegularizationPath.FromState(e));
            Assert.Throws<ArgumentNullException>(() => RegularizationPath.FromState(null!));
        }

        private static double ToleranceRuleDistance(double[] a, double[] b) => Math.Sqrt(a.Zip(b, (u, v) => (u - v) * (u - v)).Sum());
    }
}
