using System;
using System.Linq;
using FsCheck.Xunit;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Recursive
{
    /// <summary>Several outputs sharing one regressor vector and one covariance (MATH.md §2.1).</summary>
    public class MultiOutputCovarianceTests
    {
        /// <summary>
        /// Theorem: with common regressors and weights, the regime-D objectives of the outputs share H (hence P and the gain) and differ only
        /// in their right-hand sides, so each output of the shared estimator equals a single-output covariance-form estimator fed that output
        /// (the single-output estimator is the reference; agreement up to rounding: the two keep P in different representations).
        /// </summary>
        [Property(MaxTest = 200, Replay = "(81,83)")]
        public void EachOutputEqualsASingleOutputEstimatorOnIt(int seed, byte pRaw, byte mRaw, byte nRaw, bool forget)
        {
            int p = 1 + (pRaw % 12);
            int m = 1 + (mRaw % 5);
            int n = 1 + (nRaw % 150);
            var rng = new Random(seed);
            var settings = new CovarianceFormSettings { ForgettingFactor = forget ? 0.97 : 1.0, PriorWeight = 1e-2 };
            var prior = Enumerable.Range(0, p * m).Select(_ => rng.NextDouble() - 0.5).ToArray();
            var multi = new MultiOutputCovarianceEstimator(p, m, settings, prior);
            var single = Enumerable.Range(0, m).Select(k => new CovarianceFormEstimator(p, new CovarianceFormSettings
            {
                ForgettingFactor = settings.ForgettingFactor,
                PriorWeight = settings.PriorWeight,
                Prior = Enumerable.Range(0, p).Select(j => prior[(j * m) + k]).ToArray(),
            })).ToArray();
            var x = new double[p];
            var y = new double[m];
            for (int i = 0; i < n; i++)
            {
                for (int j = 0; j < p; j++)
                {
                    x[j] = rng.NextDouble() - 0.5;
                }

                for (int k = 0; k < m; k++)
                {
                    y[k] = x.Sum() * (k + 1) + (0.1 * (rng.NextDouble() - 0.5));
                }

                double w = rng.Next(8) == 0 ? 0.0 : 3.0 * rng.NextDouble();
                multi.Update(x, y, w);
                for (int k = 0; k < m; k++)
                {
                    single[k].Update(x, y[k], w);
                }
            }

            var a = new double[p];
            var b = new double[p];
            for (int k = 0; k < m; k++)
            {
                multi.CopyParametersTo(k, a);
                single[k].CopyParametersTo(b);
                double scale = Math.Max(1.0, Math.Sqrt(b.Sum(v => v * v)));
                Assert.True(a.Zip(b, (u, v) => Math.Abs(u - v)).Max() <= 1e-9 * scale, $"output {k}");
            }

            var pm = new double[p * p];
            var ps = new double[p * p];
            multi.CopyCovarianceTo(pm);
            single[0].CopyCovarianceTo(ps);

            // The shared estimator updates a packed triangle, the single-output one a scaled dense matrix: the same P up to rounding.
            double largest = ps.Max(Math.Abs);
            Assert.True(pm.Zip(ps, (u, v) => Math.Abs(u - v)).Max() <= 1e-10 * largest, "shared covariance");
        }

        [Fact]
        public void UpdatesAllocateNothingAndBadInputChangesNothing()
        {
            var e = new MultiOutputCovarianceEstimator(6, 3, new CovarianceFormSettings { ForgettingFactor = 0.99 });
            var x = new double[] { 1, 2, 3, 4, 5, 6 };
            var y = new double[] { 1, 2, 3 };
            for (int i = 0; i < 1000; i++)
            {
                x[i % 6] += 0.01;
                e.Update(x, y);
            }

            Assert.Equal(0, AllocationCount.InSteadyState(() =>
            {
                for (int i = 0; i < 100_000; i++)
                {
                    x[i % 6] = Math.Sin(i);
                    e.Update(x, y);
                }
            }));
            var theta = new double[6];
            e.CopyParametersTo(1, theta);
            Assert.Equal("y", Assert.Throws<ArgumentException>(() => e.Update(x, new[] { 1.0, double.NaN, 2.0 })).ParamName);
            Assert.Equal("y", Assert.Throws<ArgumentException>(() => e.Update(x, new[] { 1.0 })).ParamName);
            Assert.Equal("weight", Assert.Throws<ArgumentOutOfRangeException>(() => e.Update(x, y, -1.0)).ParamName);
            var after = new double[6];
            e.CopyParametersTo(1, after);
            Assert.Equal(theta, after);
        }
    }
}
