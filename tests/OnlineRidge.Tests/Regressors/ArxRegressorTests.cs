using System;
using System.Linq;
using FsCheck.Xunit;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Regressors
{
    /// <summary>
    /// The ARX regressor builder against rows built by hand from the definition
    /// φ(t) = [−y(t−1) … −y(t−na), u₁(t−nk₁) … u₁(t−nk₁−nb₁+1), …] (Ljung 1999, §4.2), and against the batch estimator on those rows.
    /// </summary>
    public class ArxRegressorTests
    {
        /// <summary>φ(t) straight from the definition, indexing the whole recorded signals (independent of the ring buffers).</summary>
        private static double[] RowFromDefinition(double[] y, double[][] u, int na, int[] nb, int[] nk, int t)
        {
            var row = new System.Collections.Generic.List<double>();
            for (int j = 1; j <= na; j++)
            {
                row.Add(-y[t - j]);
            }

            for (int i = 0; i < nb.Length; i++)
            {
                for (int j = 0; j < nb[i]; j++)
                {
                    row.Add(u[i][t - nk[i] - j]);
                }
            }

            return row.ToArray();
        }

        /// <summary>
        /// Theorem (definition of the ARX regressor): for every order and delay, TryPush returns false exactly for the first
        /// max(na, maxᵢ(nkᵢ + nbᵢ − 1)) samples and afterwards writes the row built by hand from the definition, bit for bit.
        /// </summary>
        [Property(MaxTest = 200, Replay = "(101,211)")]
        public void RowsEqualTheDefinition(int seed, byte naRaw, byte mRaw, int ordersSeed)
        {
            var rng = new Random(ordersSeed);
            int na = naRaw % 5;
            int m = mRaw % 4;
            int[] nb = Enumerable.Range(0, m).Select(_ => rng.Next(0, 5)).ToArray();
            int[] nk = Enumerable.Range(0, m).Select(_ => rng.Next(0, 4)).ToArray();
            if (na + nb.Sum() == 0)
            {
                na = 1;
            }

            int lag = Math.Max(na, Enumerable.Range(0, m).Where(i => nb[i] > 0).Select(i => nk[i] + nb[i] - 1).DefaultIfEmpty(0).Max());
            int n = 40;
            var data = new Random(seed);
            double[] y = Enumerable.Range(0, n).Select(_ => data.NextDouble() - 0.5).ToArray();
            double[][] u = Enumerable.Range(0, m).Select(_ => Enumerable.Range(0, n).Select(_ => data.NextDouble() * 10).ToArray()).ToArray();

            var arx = new ArxRegressor(na, nb, nk);
            Assert.Equal(na + nb.Sum(), arx.RegressorCount);
            Assert.Equal(lag, arx.WarmUpSamples);
            var phi = new double[arx.RegressorCount];
            var ut = new double[m];
            for (int t = 0; t < n; t++)
            {
                for (int i = 0; i < m; i++)
                {
                    ut[i] = u[i][t];
                }

                bool ready = arx.TryPush(y[t], ut, phi);
                Assert.Equal(t >= lag, ready);
                if (ready)
                {
                    Assert.Equal(RowFromDefinition(y, u, na, nb, nk, t), phi);
                }
            }
        }

        [Fact]
        public void WarmUpCountsAndResetStartsOver()
        {
            // na = 2, input 1: nb = 3, nk = 1 (lag 3); input 2: nb = 1, nk = 0 (lag 0) → 3 samples without a row.
            var arx = new ArxRegressor(2, new[] { 3, 1 }, new[] { 1, 0 });
            Assert.Equal(3, arx.WarmUpSamples);
            Assert.Equal(6, arx.RegressorCount);
            var phi = new double[6];
            int rows = Enumerable.Range(0, 10).Count(t => arx.TryPush(t, new double[] { t, -t }, phi));
            Assert.Equal(10 - 3, rows);
            arx.Reset();
            Assert.False(arx.TryPush(1, new double[] { 1, 1 }, phi));
            Assert.Equal(1, arx.SampleCount);
        }

        [Fact]
        public void DirectFeedthroughUsesTheCurrentInput()
        {
            var arx = new ArxRegressor(0, 2, 0);
            var phi = new double[2];
            Assert.False(arx.TryPush(0, new[] { 5.0 }, phi));
            Assert.True(arx.TryPush(0, new[] { 7.0 }, phi));
            Assert.Equal(new[] { 7.0, 5.0 }, phi);
        }

        [Fact]
        public void InvalidOrdersAndDelaysNameTheParameter()
        {
            Assert.Equal("outputOrder", Assert.Throws<ArgumentOutOfRangeException>(() => new ArxRegressor(-1, 1, 1)).ParamName);
            var e = Assert.Throws<ArgumentException>(() => new ArxRegressor(1, new[] { 1, -2 }, new[] { 1, 1 }));
            Assert.Equal("inputOrders", e.ParamName);
            Assert.Contains("inputOrders[1] = -2", e.Message, StringComparison.Ordinal);
            e = Assert.Throws<ArgumentException>(() => new ArxRegressor(1, new[] { 1 }, new[] { -1 }));
            Assert.Equal("inputDelays", e.ParamName);
            Assert.Equal("inputDelays", Assert.Throws<ArgumentException>(() => new ArxRegressor(1, new[] { 1 }, new[] { 1, 2 })).ParamName);
            Assert.Throws<ArgumentOutOfRangeException>(() => new ArxRegressor(0, 0, 3));
        }

        [Fact]
        public void RejectedSampleChangesNothing()
        {
            var arx = new ArxRegressor(1, 1, 1);
            var phi = new double[2];
            arx.TryPush(1, new[] { 2.0 }, phi);
            Assert.Equal("output", Assert.Throws<ArgumentOutOfRangeException>(() => arx.TryPush(double.NaN, new[] { 3.0 }, phi)).ParamName);
            Assert.Equal("inputs", Assert.Throws<ArgumentException>(() => arx.TryPush(3, new[] { double.PositiveInfinity }, phi)).ParamName);
            Assert.Equal("inputs", Assert.Throws<ArgumentException>(() => arx.TryPush(3, new[] { 1.0, 2.0 }, phi)).ParamName);
            Assert.Equal("regressors", Assert.Throws<ArgumentException>(() => arx.TryPush(3, new[] { 1.0 }, new double[1])).ParamName);
            Assert.Equal(1, arx.SampleCount);
            Assert.True(arx.TryPush(4, new[] { 5.0 }, phi));
            Assert.Equal(new[] { -1.0, 2.0 }, phi);
        }

        /// <summary>Invented two-input system y(t) − 1.5y(t−1) + 0.7y(t−2) = 1.0u₁(t−1) + 0.5u₁(t−2) + 0.3u₂(t) − 0.2u₂(t−1) + e(t).</summary>
        private static (double[] Y, double[][] U) Simulate(int n, double noise, int seed)
        {
            var rng = new Random(seed);
            double[] u1 = Enumerable.Range(0, n).Select(_ => rng.NextDouble() < 0.5 ? -1.0 : 1.0).ToArray();
            double[] u2 = Enumerable.Range(0, n).Select(_ => (2 * rng.NextDouble()) - 1).ToArray();
            var y = new double[n];
            for (int t = 0; t < n; t++)
            {
                double Y(int k) => t - k >= 0 ? y[t - k] : 0.0;
                double U1(int k) => t - k >= 0 ? u1[t - k] : 0.0;
                double U2(int k) => t - k >= 0 ? u2[t - k] : 0.0;
                double e = noise * Math.Sqrt(-2 * Math.Log(1 - rng.NextDouble())) * Math.Cos(2 * Math.PI * rng.NextDouble());
                y[t] = (1.5 * Y(1)) - (0.7 * Y(2)) + (1.0 * U1(1)) + (0.5 * U1(2)) + (0.3 * U2(0)) - (0.2 * U2(1)) + e;
            }

            return (y, new[] { u1, u2 });
        }

        private static readonly double[] TrueTheta = { -1.5, 0.7, 1.0, 0.5, 0.3, -0.2 };

        private static RidgeFit Identify(double noise, int n)
        {
            var (y, u) = Simulate(n, noise, 5);
            var arx = new ArxRegressor(2, new[] { 2, 2 }, new[] { 1, 0 });
            int p = arx.RegressorCount;
            var rows = new System.Collections.Generic.List<double>();
            var outputs = new System.Collections.Generic.List<double>();
            var phi = new double[p];
            for (int t = 0; t < n; t++)
            {
                if (arx.TryPush(y[t], new[] { u[0][t], u[1][t] }, phi))
                {
                    rows.AddRange(phi);
                    outputs.Add(y[t]);
                }
            }

            Assert.Equal(n - 2, outputs.Count);
            return BatchRidge.Fit(new MatrixView(rows.ToArray(), outputs.Count, p), outputs.ToArray(), new RidgeSettings { Penalty = 0, FitIntercept = false });
        }

        /// <summary>Noise-free data of a known ARX system: least squares on the built rows recovers the parameters (a, b with Ljung's signs) to rounding.</summary>
        [Fact]
        public void NoiseFreeSystemIsIdentifiedExactly()
        {
            var fit = Identify(0.0, 300);
            for (int j = 0; j < TrueTheta.Length; j++)
            {
                Assert.Equal(TrueTheta[j], fit.Coefficients[j], 10);
            }
        }

        /// <summary>With white equation noise ARX least squares is consistent: the estimates lie within 4 standard errors of the truth.</summary>
        [Fact]
        public void NoisySystemIsIdentifiedWithinItsStandardErrors()
        {
            var fit = Identify(0.05, 2000);
            for (int j = 0; j < TrueTheta.Length; j++)
            {
                Assert.InRange(Math.Abs(fit.Coefficients[j] - TrueTheta[j]), 0, (4 * fit.StandardErrors![j]) + 1e-12);
                Assert.InRange(Math.Abs(fit.Coefficients[j] - TrueTheta[j]), 0, 0.02);
            }
        }

        [Fact]
        public void PushAllocatesNothing()
        {
            var arx = new ArxRegressor(4, new[] { 3, 2 }, new[] { 1, 0 });
            var phi = new double[arx.RegressorCount];
            var u = new double[2];
            arx.TryPush(0, u, phi);
            Assert.Equal(0, AllocationCount.InSteadyState(() =>
            {
                for (int t = 0; t < 100_000; t++)
                {
                    u[0] = t;
                    u[1] = -t;
                    arx.TryPush(t * 0.5, u, phi);
                }
            }));
        }
    }
}
