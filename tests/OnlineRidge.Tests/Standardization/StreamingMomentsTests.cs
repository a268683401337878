using System;
using System.Linq;
using FsCheck;
using FsCheck.Fluent;
using OnlineRidge.Standardization;
using OnlineRidge.Tests.Properties;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Standardization
{
    /// <summary>
    /// <see cref="StreamingMoments"/> (MATH.md §4.1–4.2) against the two-pass weighted mean and co-moment computed with LINQ and compensated
    /// sums (the textbook two-pass algorithm as the reference), its merge, warm-up, forgetting, input checks and allocation.
    /// </summary>
    public class StreamingMomentsTests
    {
        /// <summary>The vectors u = (x, y) of a generated case (dimension p + 1, up to 21).</summary>
        private static double[][] Vectors(RecursiveData data) => data.X.Select((x, i) => x.Concat(new[] { data.Y[i] }).ToArray()).ToArray();

        private sealed record TwoPass(double W, double[] Mean, double[,] M, double[] MaxDeviation);

        /// <summary>Two-pass weighted mean (with one correction pass) and co-moment of the first n vectors, effective weights β^(n−1−i)wᵢ.</summary>
        private static TwoPass Reference(double[][] u, double[] w, double beta)
        {
            int n = u.Length;
            int d = u[0].Length;
            double[] a = RecursiveGenerators.EffectiveWeights(w, n, beta);
            double wsum = RecursiveReference.Sum(a);
            var mean = new double[d];
            var maxDev = new double[d];
            var m = new double[d, d];
            if (wsum > 0)
            {
                for (int j = 0; j < d; j++)
                {
                    double mj = RecursiveReference.Sum(Enumerable.Range(0, n).Select(i => a[i] * u[i][j])) / wsum;
                    mj += RecursiveReference.Sum(Enumerable.Range(0, n).Select(i => a[i] * (u[i][j] - mj))) / wsum;
                    mean[j] = mj;
                    maxDev[j] = Enumerable.Range(0, n).Where(i => a[i] > 0).Select(i => Math.Abs(u[i][j] - mj)).Max();
                }

                for (int i = 0; i < d; i++)
                {
                    for (int j = 0; j < d; j++)
                    {
                        m[i, j] = RecursiveReference.Sum(Enumerable.Range(0, n).Select(r => a[r] * (u[r][i] - mean[i]) * (u[r][j] - mean[j])));
                    }
                }
            }

            return new TwoPass(wsum, mean, m, maxDev);
        }

        /// <summary>
        /// Asserts the streaming state equals the two-pass reference. Tolerances (rounding analysis of West's update, 10× safety and the √n rule
        /// of MATH.md §10): W to 10(1 + √n)ε·W; mⱼ to 10(1 + √n)ε(|mⱼ| + max|uⱼ − mⱼ|); Mᵢⱼ to 10(d + √n)ε·W(σᵢσⱼ + σᵢ|mⱼ| + |mᵢ|σⱼ) —
        /// the error of forming δ = u − m is ε|u| ≈ ε(|m| + σ), so it grows with |m|/σ only linearly (the one-pass textbook formula Σaᵤu² − Wm²
        /// would lose ε|m|²/σ², which this bound rejects for the offset designs).
        /// </summary>
        private static void AssertEqualsReference(StreamingMoments s, TwoPass r, int n, string what)
        {
            int d = s.Dimension;
            double root = Math.Sqrt(n);
            Assert.True(Math.Abs(s.WeightSum - r.W) <= 10 * (1 + root) * ToleranceRule.Eps * r.W, $"{what}: W {s.WeightSum:R} vs {r.W:R}");
            if (r.W == 0)
            {
                Assert.All(Enumerable.Range(0, d), j => Assert.True(double.IsNaN(s.Mean(j)) && double.IsNaN(s.StandardDeviation(j))));
                return;
            }

            var sigma = Enumerable.Range(0, d).Select(j => Math.Sqrt(r.M[j, j] / r.W)).ToArray();
            for (int j = 0; j < d; j++)
            {
                double tol = 10 * (1 + root) * ToleranceRule.Eps * (Math.Abs(r.Mean[j]) + r.MaxDeviation[j]);
                Assert.True(Math.Abs(s.Mean(j) - r.Mean[j]) <= tol, $"{what}: mean[{j}] {s.Mean(j):R} vs {r.Mean[j]:R} (tol {tol:E2})");
            }

            var full = new double[d * d];
            s.CopyComomentTo(full);
            for (int i = 0; i < d; i++)
            {
                for (int j = 0; j < d; j++)
                {
                    double scale = r.W * ((sigma[i] * sigma[j]) + (sigma[i] * Math.Abs(r.Mean[j])) + (Math.Abs(r.Mean[i]) * sigma[j]));
                    double tol = 10 * (d + root) * ToleranceRule.Eps * scale;
                    Assert.True(Math.Abs(full[(i * d) + j] - r.M[i, j]) <= tol, $"{what}: M[{i},{j}] {full[(i * d) + j]:R} vs {r.M[i, j]:R} (tol {tol:E2})");
                    Assert.Equal(full[(i * d) + j], full[(j * d) + i]);
                }

                double varTol = 10 * (d + root) * ToleranceRule.Eps * ((sigma[i] * sigma[i]) + (2 * sigma[i] * Math.Abs(r.Mean[i])));
                Assert.True(Math.Abs(s.Variance(i) - (r.M[i, i] / r.W)) <= varTol + (10 * (1 + root) * ToleranceRule.Eps * r.M[i, i] / r.W), $"{what}: variance[{i}]");
            }
        }

        /// <summary>
        /// Theorem (MATH.md §4.1, West 1979 with forgetting): the streaming weighted mean, co-moment and population variance equal the two-pass
        /// values Σaᵢuᵢ/W, Σaᵢ(uᵢ − m)(uᵢ − m)ᵀ and Mⱼⱼ/W with aᵢ = βⁿ⁻ⁱwᵢ — including large means (offset designs), zero weights and constant
        /// components (whose variance must be exactly 0).
        /// </summary>
        [RecursiveProperty(Replay = "(161803,39887)")]
        public Property StreamingMomentsEqualTwoPassWeightedMeanAndComoment() =>
            Prop.ForAll(RecursiveGenerators.Arbitrary(1, 200), c =>
            {
                RecursiveData data = c.Materialize();
                double[][] u = Vectors(data);
                var s = new StreamingMoments(u[0].Length, c.Beta);
                for (int i = 0; i < u.Length; i++)
                {
                    s.Update(u[i], data.W[i]);
                }

                Assert.Equal(u.Length, s.SampleCount);
                AssertEqualsReference(s, Reference(u, data.W, c.Beta), u.Length, "streaming");
                if (c.Design == DesignKind.ConstantColumn && s.WeightSum > 0)
                {
                    int j = Enumerable.Range(0, c.P).First(col => u.All(v => v[col] == u[0][col]));
                    Assert.Equal(0.0, s.Variance(j));
                    Assert.Equal(u[0][j], s.Mean(j));
                }
            });

        /// <summary>
        /// Theorem (MATH.md §4.2, Chan, Golub &amp; LeVeque 1979/1983): merging the state of the first s vectors with the state of the remaining
        /// n − s (the earlier one aged by β^(n−s)) gives the state of one accumulator fed all n in order: both equal the two-pass reference within
        /// the tolerances above, and the counts add.
        /// </summary>
        [RecursiveProperty(Replay = "(271828,18285)")]
        public Property StreamingMomentsMergeEqualsSequentialFeed() =>
            Prop.ForAll(RecursiveGenerators.Arbitrary(1, 200), c =>
            {
                RecursiveData data = c.Materialize();
                double[][] u = Vectors(data);
                int d = u[0].Length;
                int split = new Random(c.Seed).Next(u.Length + 1);
                var earlier = new StreamingMoments(d, c.Beta);
                var later = new StreamingMoments(d, c.Beta);
                var whole = new StreamingMoments(d, c.Beta);
                for (int i = 0; i < u.Length; i++)
                {
                    (i < split ? earlier : later).Update(u[i], data.W[i]);
                    whole.Update(u[i], data.W[i]);
                }

                earlier.MergeFrom(later);
                Assert.Equal(whole.SampleCount, earlier.SampleCount);
                TwoPass r = Reference(u, data.W, c.Beta);
                AssertEqualsReference(earlier, r, u.Length, $"merged at {split}");
                AssertEqualsReference(whole, r, u.Length, "sequential");
            });

        /// <summary>Theorem (MATH.md §1.1 convention, §4.1): a zero-weight update only forgets: means unchanged bit for bit, W ← βW, M ← βM (M through its scalar factor: to two roundings).</summary>
        [RecursiveProperty(Replay = "(141421,35623)")]
        public Property StreamingMomentsZeroWeightUpdateOnlyForgets() =>
            Prop.ForAll(RecursiveGenerators.Arbitrary(1, 50), c =>
            {
                RecursiveData data = c.Materialize();
                double[][] u = Vectors(data);
                int d = u[0].Length;
                var s = new StreamingMoments(d, c.Beta);
                for (int i = 0; i < u.Length; i++)
                {
                    s.Update(u[i], data.W[i]);
                }

                var meanBefore = new double[d];
                var mBefore = new double[d * d];
                s.CopyMeansTo(meanBefore);
                s.CopyComomentTo(mBefore);
                double wBefore = s.WeightSum;
                s.Update(u[0].Select(v => v + 1e3).ToArray(), 0.0);
                var meanAfter = new double[d];
                var mAfter = new double[d * d];
                s.CopyMeansTo(meanAfter);
                s.CopyComomentTo(mAfter);
                Assert.Equal(meanBefore, meanAfter);
                Assert.Equal(c.Beta * wBefore, s.WeightSum);
                for (int i = 0; i < d * d; i++)
                {
                    // M = s·M̃ forgets through its scalar factor: (β·s)·M̃ against β·(s·M̃), so equal to a rounding or two.
                    double expected = c.Beta * mBefore[i];
                    Assert.True(Math.Abs(mAfter[i] - expected) <= 4.5e-16 * Math.Abs(expected), $"entry {i}: {mAfter[i]:R} vs {expected:R}");
                }
            });

        /// <summary>Warm-up contract (type remarks): NaN means and deviations while W = 0, even after zero-weight updates; comoments 0.</summary>
        [Fact]
        public void BeforeAnyPositiveWeightMeansAndDeviationsAreNaN()
        {
            var s = new StreamingMoments(3, 0.9);
            Assert.True(double.IsNaN(s.Mean(0)));
            s.Update(new[] { 1.0, 2.0, 3.0 }, 0.0);
            s.Update(new[] { 4.0, 5.0, 6.0 }, 0.0);
            Assert.Equal(0.0, s.WeightSum);
            Assert.Equal(2, s.SampleCount);
            var buffer = new double[3];
            s.CopyMeansTo(buffer);
            Assert.All(buffer, v => Assert.True(double.IsNaN(v)));
            s.CopyStandardDeviationsTo(buffer);
            Assert.All(buffer, v => Assert.True(double.IsNaN(v)));
            Assert.True(double.IsNaN(s.Variance(1)));
            Assert.Equal(0.0, s.Comoment(0, 2));
        }

        /// <summary>Warm-up contract: after one sample of positive weight the means equal it exactly and the population variances are exactly 0.</summary>
        [Fact]
        public void OneSampleGivesItsValueAndZeroVariance()
        {
            var s = new StreamingMoments(2, 0.95);
            s.Update(new[] { 0.0, 0.0 }, 0.0);
            s.Update(new[] { 3.7, -1e10 }, 2.5);
            Assert.Equal(3.7, s.Mean(0));
            Assert.Equal(-1e10, s.Mean(1));
            Assert.Equal(0.0, s.Variance(0));
            Assert.Equal(0.0, s.StandardDeviation(1));
            Assert.Equal(2.5, s.WeightSum);
        }

        /// <summary>Warm-up contract: a component constant since the start keeps mean exactly the constant and variance exactly 0, whatever the other components do.</summary>
        [Fact]
        public void ConstantComponentHasExactlyZeroVariance()
        {
            var s = new StreamingMoments(2, 0.93);
            var rng = new Random(5);
            for (int i = 0; i < 1000; i++)
            {
                s.Update(new[] { 0.1 * 7.0, rng.NextDouble() * 1e6 }, rng.NextDouble() * 3.0);
            }

            Assert.Equal(0.1 * 7.0, s.Mean(0));
            Assert.Equal(0.0, s.Variance(0));
            Assert.Equal(0.0, s.Comoment(0, 1));
            Assert.True(s.Variance(1) > 0);
        }

        /// <summary>Population (divisor W) variance, MATH.md §4.1: the values 1, 2, 3, 4 with unit weights have variance 1.25 (not 5/3).</summary>
        [Fact]
        public void VarianceUsesThePopulationDivisor()
        {
            var s = new StreamingMoments(1);
            foreach (double v in new[] { 1.0, 2.0, 3.0, 4.0 })
            {
                s.Update(new[] { v });
            }

            Assert.Equal(2.5, s.Mean(0), 15);
            Assert.Equal(1.25, s.Variance(0), 15);
        }

        [Theory]
        [InlineData(0.0)]
        [InlineData(-0.5)]
        [InlineData(1.0000001)]
        [InlineData(double.NaN)]
        [InlineData(double.PositiveInfinity)]
        public void ForgettingFactorOutsideTheUnitIntervalIsRejected(double beta)
        {
            var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new StreamingMoments(2, beta));
            Assert.Equal("forgettingFactor", ex.ParamName);
        }

        [Fact]
        public void DimensionBelowOneIsRejected()
        {
            var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new StreamingMoments(0));
            Assert.Equal("dimension", ex.ParamName);
        }

        public static TheoryData<double[], double, string> BadUpdates() => new()
        {
            { new[] { 1.0, double.NaN }, 1.0, "u" },
            { new[] { double.PositiveInfinity, 1.0 }, 1.0, "u" },
            { new[] { 1.0 }, 1.0, "u" },
            { new[] { 1.0, 2.0, 3.0 }, 1.0, "u" },
            { new[] { 1.0, 2.0 }, -1.0, "weight" },
            { new[] { 1.0, 2.0 }, double.NaN, "weight" },
            { new[] { 1.0, 2.0 }, double.PositiveInfinity, "weight" },
        };

        /// <summary>Caller mistakes throw ArgumentException naming the parameter, and leave the state exactly as it was (DESIGN.md failure tier 1).</summary>
        [Theory]
        [MemberData(nameof(BadUpdates))]
        public void BadInputThrowsAndLeavesTheStateUnchanged(double[] u, double weight, string parameter)
        {
            var s = new StreamingMoments(2, 0.9);
            s.Update(new[] { 1.0, 2.0 });
            s.Update(new[] { 3.0, -2.0 }, 0.5);
            var before = new double[4];
            s.CopyComomentTo(before);
            double meanBefore = s.Mean(0);
            double wBefore = s.WeightSum;
            var ex = Assert.ThrowsAny<ArgumentException>(() => s.Update(u, weight));
            Assert.Equal(parameter, ex.ParamName);
            var after = new double[4];
            s.CopyComomentTo(after);
            Assert.Equal(before, after);
            Assert.Equal(meanBefore, s.Mean(0));
            Assert.Equal(wBefore, s.WeightSum);
            Assert.Equal(2, s.SampleCount);
        }

        /// <summary>Merging states with different forgetting factors or dimensions is a caller mistake.</summary>
        [Fact]
        public void IncompatibleMergeIsRejected()
        {
            var s = new StreamingMoments(2, 0.9);
            Assert.Equal("later", Assert.ThrowsAny<ArgumentException>(() => s.MergeFrom(new StreamingMoments(2, 0.95))).ParamName);
            Assert.Equal("later", Assert.ThrowsAny<ArgumentException>(() => s.MergeFrom(new StreamingMoments(3, 0.9))).ParamName);
            Assert.Equal("later", Assert.ThrowsAny<ArgumentException>(() => s.MergeFrom(null!)).ParamName);
        }

        /// <summary>An update that would overflow is a data-dependent breakdown: reported, and nothing changes (DESIGN.md failure tier 2).</summary>
        [Fact]
        public void OverflowIsReportedAndLeavesTheStateUnchanged()
        {
            var s = new StreamingMoments(2);
            s.Update(new[] { 0.0, 0.0 });
            Assert.False(s.TryUpdate(new[] { 1e200, 0.0 }, 1.0, out BreakdownInfo info));
            Assert.Equal(BreakdownKind.NonFinite, info.Kind);
            Assert.Throws<RidgeBreakdownException>(() => s.Update(new[] { 1e200, 0.0 }));
            Assert.Equal(0.0, s.Mean(0));
            Assert.Equal(0.0, s.Comoment(0, 0));
            Assert.Equal(1, s.SampleCount);
        }

        /// <summary>Hot-path claim: 10⁵ updates (and a merge) allocate nothing, counted with GC.GetAllocatedBytesForCurrentThread after a warm-up (AllocationCount).</summary>
        [Fact]
        public void UpdatesAllocateNothing()
        {
            const int d = 17;
            var s = new StreamingMoments(d, 0.99);
            var other = new StreamingMoments(d, 0.99);
            var u = new double[d];
            var rng = new Random(3);
            for (int j = 0; j < d; j++)
            {
                u[j] = rng.NextDouble();
            }

            for (int i = 0; i < 1000; i++)
            {
                u[i % d] += 0.5;
                s.Update(u, 1.5);
                other.Update(u);
                s.MergeFrom(other);
            }

            long allocated = AllocationCount.InSteadyState(() =>
            {
                for (int i = 0; i < 100_000; i++)
                {
                    u[i % d] = -u[i % d];
                    s.Update(u, 1.5);
                }

                s.MergeFrom(other);
            });
            Assert.Equal(0, allocated);
        }
    }
}
