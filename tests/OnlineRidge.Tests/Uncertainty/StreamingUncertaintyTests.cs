using System;
using System.Linq;
using FsCheck.Xunit;
using OnlineRidge.Tests.Tuning;
using Xunit;

namespace OnlineRidge.Tests.Uncertainty
{
    /// <summary>Exact streaming uncertainty under forgetting (MATH.md §6.2–6.4) against the batch sandwich of the same data.</summary>
    public class StreamingUncertaintyTests
    {
        /// <summary>
        /// Theorem (MATH.md §6.3–6.4): a β̃²-forgotten factor gives G₂, hence σ̂²H⁻¹G₂H⁻¹ and ν = N − 2tr(H⁻¹G₂) + tr(H⁻¹GH⁻¹G₂) from the
        /// state; they equal the batch sandwich covariance and residual degrees of freedom of the same data with weights β̃ⁿ⁻ⁱwᵢ
        /// (the batch estimator, Sandwich model, is the reference).
        /// </summary>
        [Property(MaxTest = 100, Replay = "(71,73)")]
        public void StreamingCovarianceAndDegreesOfFreedomEqualTheBatchSandwich(int seed, byte pRaw, byte nRaw, bool intercept, bool standardize, byte penaltyRaw)
        {
            int p = 1 + (pRaw % 8);
            int n = p + 6 + (nRaw % 100);
            double lambda = new[] { 0.0, 1e-3, 0.3, 30.0 }[penaltyRaw % 4];
            var (x, y, w, _, _) = RegularizationPathTests.Problem(seed, p, n, collinear: seed % 4 == 0);
            var settings = new SquareRootSettings { ForgettingFactor = 0.96, FitIntercept = intercept, Standardize = standardize, Penalty = lambda };
            var e = new SquareRootEstimator(p, settings);
            var u = new StreamingUncertainty(p, settings);
            for (int i = 0; i < n; i++)
            {
                e.Update(x.AsSpan(i * p, p), y[i], w[i]);
                u.Update(x.AsSpan(i * p, p), w[i]);
            }

            var s = u.Evaluate(e);
            var b = BatchRidge.Fit(new MatrixView(x, n, p), y,
                new RidgeSettings { ForgettingFactor = e.EffectiveForgettingFactor, FitIntercept = intercept, Standardize = standardize, Penalty = lambda, Solver = RidgeSolver.Qr }, w);
            Assert.True(Math.Abs(s.ResidualDegreesOfFreedom - b.ResidualDegreesOfFreedom) <= 1e-7 * Math.Max(1.0, Math.Abs(b.ResidualDegreesOfFreedom)), $"ν {s.ResidualDegreesOfFreedom} vs batch {b.ResidualDegreesOfFreedom}");
            Assert.True(Math.Abs(s.EffectiveDegreesOfFreedom - b.EffectiveDegreesOfFreedom) <= 1e-7 * (p + 1));
            if (!(b.ResidualDegreesOfFreedom > 0))
            {
                // No residual variance estimate (σ̂² undefined) in either: nothing further to compare.
                Assert.True(double.IsNaN(s.ResidualVariance));
                return;
            }

            int m = p + (intercept ? 1 : 0);
            var cs = new double[m * m];
            var cb = new double[m * m];
            s.CopyCovarianceTo(cs);
            b.CopyCovarianceTo(cb);
            for (int r = 0; r < m; r++)
            {
                for (int c = 0; c < m; c++)
                {
                    double scale = Math.Sqrt(Math.Abs(cb[(r * m) + r] * cb[(c * m) + c]));
                    Assert.True(Math.Abs(cs[(r * m) + c] - cb[(r * m) + c]) <= 1e-6 * scale, $"C[{r},{c}] {cs[(r * m) + c]} vs {cb[(r * m) + c]}");
                }
            }

            for (int j = 0; j < p; j++)
            {
                Assert.Equal(b.Coefficients[j], s.Coefficients[j], 6);
            }
        }

        [Fact]
        public void AMismatchedEstimatorIsRejected()
        {
            var u = new StreamingUncertainty(2, new SquareRootSettings { ForgettingFactor = 0.9 });
            var e = new SquareRootEstimator(2, new SquareRootSettings { ForgettingFactor = 0.95 });
            Assert.Equal("estimator", Assert.Throws<ArgumentException>(() => u.Evaluate(e)).ParamName);
            var same = new SquareRootEstimator(2, new SquareRootSettings { ForgettingFactor = 0.9 });
            same.Update(new[] { 1.0, 2.0 }, 3.0);
            Assert.Throws<ArgumentException>(() => u.Evaluate(same));
        }
    }
}
