using System;
using System.IO;
using System.Linq;
using MathNet.Numerics.LinearAlgebra;
using OnlineRidge.Persistence;
using OnlineRidge.Standardization;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Recursive
{
    /// <summary>
    /// The information form and the streaming moments hold their forgotten statistics as s·G̃ with the forgetting in the scalar s (renormalized
    /// by exact powers of two). These tests check that what the estimators report equals the explicit recursion computed here in plain loops
    /// across many renormalizations, that zero-weight updates only forget, and that layout-1 snapshots (which stored G itself) still restore.
    /// </summary>
    public class InformationFormScaledStateTests
    {
        private static double[] Sample(Random random, int n) => Enumerable.Range(0, n).Select(_ => (random.NextDouble() * 2.0) - 1.0).ToArray();

        /// <summary>
        /// β = 0.9 over 3000 updates (s renormalizes about every 210 updates, so about 14 times), one update in four with weight 0: the ridge
        /// solution without intercept equals (G + λI)⁻¹b from the explicitly forgotten G = Σβⁿ⁻ⁱwᵢxᵢxᵢᵀ, b = Σβⁿ⁻ⁱwᵢyᵢxᵢ.
        /// </summary>
        [Theory]
        [InlineData(1)]
        [InlineData(4)]
        [InlineData(7)]
        [InlineData(16)]
        public void Solution_matches_explicit_forgetting_across_renormalizations(int p)
        {
            const double beta = 0.9;
            const double lambda = 0.3;
            var random = new Random(8100 + p);
            var est = new InformationFormEstimator(p, new RidgeSettings { Penalty = lambda, ForgettingFactor = beta, FitIntercept = false, Standardize = false });
            var g = new double[p, p];
            var b = new double[p];
            double[] theta = Sample(random, p);
            for (int n = 0; n < 3000; n++)
            {
                double[] x = Sample(random, p);
                double y = x.Select((v, j) => v * theta[j]).Sum() + (0.1 * ((random.NextDouble() * 2.0) - 1.0));
                double w = n % 4 == 3 ? 0.0 : 0.5 + random.NextDouble();
                for (int i = 0; i < p; i++)
                {
                    b[i] = (beta * b[i]) + (w * y * x[i]);
                    for (int j = 0; j < p; j++)
                    {
                        g[i, j] = (beta * g[i, j]) + (w * x[i] * x[j]);
                    }
                }

                est.Update(x, y, w);
                if (n % 250 == 249)
                {
                    var h = Matrix<double>.Build.DenseOfArray(g) + (lambda * Matrix<double>.Build.DenseIdentity(p));
                    double[] expected = h.Solve(Vector<double>.Build.DenseOfArray(b)).ToArray();
                    var got = new double[p];
                    est.CopyParametersTo(got);
                    double scale = expected.Max(Math.Abs) + 1.0;
                    for (int j = 0; j < p; j++)
                    {
                        Assert.True(Math.Abs(got[j] - expected[j]) <= 1e-11 * scale, $"n={n} θ[{j}]: {got[j]:R} vs {expected[j]:R}");
                    }
                }
            }

        }

        /// <summary>
        /// The short update path (no intercept, no G₂, p &lt; 32 a whole number of vectors) is the general path restricted to the common step,
        /// with the same arithmetic: an estimator that also tracks G₂ (so always takes the general path) must reach bitwise the same solution,
        /// weight sum and discounted count. β = 0.9 (a renormalization about every 210 updates), one weight in five 0, 3000 updates; p covers the one-block kernel, the blocked kernel, and a p that is not a
        /// whole number of vectors (always the general path).
        /// </summary>
        [Theory]
        [InlineData(1)]
        [InlineData(4)]
        [InlineData(8)]
        [InlineData(16)]
        [InlineData(28)]
        [InlineData(31)]
        public void Short_update_path_changes_exactly_what_the_general_path_changes(int p)
        {
            var settings = new RidgeSettings { Penalty = 0.3, ForgettingFactor = 0.9, FitIntercept = false, Standardize = false };
            var shortPath = new InformationFormEstimator(p, settings);
            var general = new InformationFormEstimator(p, settings, trackSquaredForgettingGram: true);
            var random = new Random(8300 + p);
            var a = new double[p];
            var b = new double[p];
            for (int n = 0; n < 3000; n++)
            {
                double[] x = Sample(random, p);
                double y = x.Sum() + (0.1 * random.NextDouble());
                double w = n % 5 == 4 ? 0.0 : 0.5 + random.NextDouble();
                shortPath.Update(x, y, w);
                general.Update(x, y, w);
                if (n % 100 == 99)
                {
                    shortPath.CopyParametersTo(a);
                    general.CopyParametersTo(b);
                    for (int j = 0; j < p; j++)
                    {
                        Assert.True(a[j].Equals(b[j]), $"n={n} θ[{j}]: {a[j]:R} vs {b[j]:R}");
                    }

                    Assert.Equal(general.WeightSum, shortPath.WeightSum);
                    Assert.Equal(general.DiscountedCount, shortPath.DiscountedCount);
                    Assert.Equal(general.SampleCount, shortPath.SampleCount);
                }
            }
        }

        /// <summary>With an intercept: the centered co-moments behind the solve match Σβⁿ⁻ⁱwᵢ(uᵢ − m)(uᵢ − m)ᵀ across renormalizations.</summary>
        [Theory]
        [InlineData(1)]
        [InlineData(3)]
        [InlineData(8)]
        [InlineData(13)]
        public void Streaming_moments_match_explicit_forgetting_across_renormalizations(int d)
        {
            const double beta = 0.9;
            var random = new Random(8200 + d);
            var m = new StreamingMoments(d, beta);
            var history = new System.Collections.Generic.List<(double[] U, double W)>();
            var got = new double[d * d];
            for (int n = 0; n < 2500; n++)
            {
                double[] u = Sample(random, d).Select(v => v + 3.0).ToArray();
                double w = n % 4 == 3 ? 0.0 : 0.5 + random.NextDouble();
                history.Add((u, w));
                m.Update(u, w);
                if (n % 500 == 499)
                {
                    // Two-pass reference over the samples whose weight has not decayed below 10⁻³⁰ relative.
                    int from = Math.Max(0, history.Count - 700);
                    double wsum = 0.0;
                    var mean = new double[d];
                    for (int k = from; k < history.Count; k++)
                    {
                        double a = Math.Pow(beta, history.Count - 1 - k) * history[k].W;
                        wsum += a;
                        for (int j = 0; j < d; j++)
                        {
                            mean[j] += a * history[k].U[j];
                        }
                    }

                    for (int j = 0; j < d; j++)
                    {
                        mean[j] /= wsum;
                        Assert.True(Math.Abs(m.Mean(j) - mean[j]) <= 1e-12 * Math.Abs(mean[j]), $"mean {j}");
                    }

                    m.CopyComomentTo(got);
                    for (int i = 0; i < d; i++)
                    {
                        for (int j = 0; j < d; j++)
                        {
                            double c = 0.0;
                            double level = 0.0;
                            for (int k = from; k < history.Count; k++)
                            {
                                double a = Math.Pow(beta, history.Count - 1 - k) * history[k].W;
                                c += a * (history[k].U[i] - mean[i]) * (history[k].U[j] - mean[j]);
                                level += a * Math.Abs((history[k].U[i] - mean[i]) * (history[k].U[j] - mean[j]));
                            }

                            Assert.True(Math.Abs(got[(i * d) + j] - c) <= 1e-11 * level, $"n={n} M[{i},{j}]: {got[(i * d) + j]:R} vs {c:R}");
                        }
                    }
                }
            }
        }

        /// <summary>A zero-weight update only forgets: the parameters of a constant-penalty fit do not move (G and b scale alike).</summary>
        /// <summary>
        /// The weight sum W and the discounted count N are the recursions W ← β·W + w and N ← β·N + [w &gt; 0] of MATH.md §5.1 and §9, written
        /// out here as plain scalar lines: every path that updates them (the p = 4 register step, the short path, the general path with zero
        /// weights) must give exactly these bits, over a stream with weights of every size and every seventh weight 0.
        /// </summary>
        [Theory]
        [InlineData(1, false)]
        [InlineData(4, false)]
        [InlineData(5, false)]
        [InlineData(16, false)]
        [InlineData(4, true)]
        public void Weight_sum_and_discounted_count_follow_their_recursions_bit_for_bit(int p, bool intercept)
        {
            const double beta = 0.93;
            var random = new Random(8300 + p + (intercept ? 50 : 0));
            var est = new InformationFormEstimator(p, new RidgeSettings { ForgettingFactor = beta, FitIntercept = intercept, Standardize = intercept });
            double weightSum = 0.0;
            double count = 0.0;
            for (int n = 0; n < 2000; n++)
            {
                double w = n % 7 == 3 ? 0.0 : Math.Pow(2.0, random.Next(-20, 21)) * (0.5 + random.NextDouble());
                est.Update(Sample(random, p), random.NextDouble(), w);
                weightSum = (beta * weightSum) + w;
                count = (beta * count) + (w > 0.0 ? 1.0 : 0.0);
                Assert.True(BitConverter.DoubleToInt64Bits(count) == BitConverter.DoubleToInt64Bits(est.DiscountedCount), $"n={n}: N {est.DiscountedCount:R}, recursion {count:R}");
                if (!intercept)
                {
                    Assert.True(BitConverter.DoubleToInt64Bits(weightSum) == BitConverter.DoubleToInt64Bits(est.WeightSum), $"n={n}: W {est.WeightSum:R}, recursion {weightSum:R}");
                }
            }
        }

        [Fact]
        public void Zero_weight_updates_only_forget()
        {
            var random = new Random(8301);
            var est = new InformationFormEstimator(5, new RidgeSettings { Penalty = 0.0, ForgettingFactor = 0.97, FitIntercept = false, Standardize = false });
            for (int n = 0; n < 50; n++)
            {
                est.Update(Sample(random, 5), random.NextDouble());
            }

            var before = new double[5];
            est.CopyParametersTo(before);
            double w = est.WeightSum;
            double count = est.DiscountedCount;
            for (int n = 0; n < 2000; n++)
            {
                est.Update(Sample(random, 5), 1e6, 0.0);
            }

            var after = new double[5];
            est.CopyParametersTo(after);
            for (int j = 0; j < 5; j++)
            {
                Assert.True(Math.Abs(after[j] - before[j]) <= 1e-12 * (Math.Abs(before[j]) + 1.0), $"θ[{j}] {after[j]:R} vs {before[j]:R}");
            }

            Assert.True(Math.Abs(est.WeightSum - (w * Math.Pow(0.97, 2000))) <= 1e-12 * est.WeightSum);
            Assert.True(Math.Abs(est.DiscountedCount - (count * Math.Pow(0.97, 2000))) <= 1e-12 * est.DiscountedCount);
        }

        /// <summary>
        /// Layout-1 snapshots stored G itself (no scale entries): rebuilt here from a layout-2 one (G = s·G̃ written out, scale entries removed,
        /// version 1), they restore to the same results to rounding, with and without intercept and G₂.
        /// </summary>
        [Theory]
        [InlineData(false)]
        [InlineData(true)]
        public void Layout_one_snapshots_still_restore(bool intercept)
        {
            var random = new Random(8400);
            var est = new InformationFormEstimator(4, new RidgeSettings { Penalty = 0.1, ForgettingFactor = 0.9, FitIntercept = intercept, Standardize = intercept }, PenaltyRegime.Constant, true);
            for (int n = 0; n < 700; n++)
            {
                est.Update(Sample(random, 4), random.NextDouble());
            }

            byte[] v2 = SnapshotBytes.Of((s, e) => est.WriteSnapshot(s, e));
            StateRecord r = SnapshotCodec.Read(new MemoryStream(v2));
            Assert.Equal(2, r.KindVersion);
            var v1 = new StateRecord(r.Kind, 1);
            string[] statistics = intercept ? new[] { "moments.comoment", "squaredGram" } : new[] { "gram", "squaredGram" };
            string[] scales = intercept ? new[] { "moments.comomentScale", "squaredScale" } : new[] { "gramScale", "squaredScale" };
            foreach (var e in r.Entries)
            {
                int k = Array.IndexOf(statistics, e.Key);
                if (Array.IndexOf(scales, e.Key) >= 0)
                {
                    continue;
                }

                v1.AddEntry(e.Key, k >= 0 ? ((double[])e.Value).Select(v => v * r.GetDouble(scales[k])).ToArray() : e.Value);
            }

            Assert.True(r.GetDouble(scales[0]) < 1.0);
            using var ms = new MemoryStream();
            SnapshotCodec.Write(v1, ms, SnapshotEncoding.Binary);
            InformationFormEstimator restored = InformationFormEstimator.ReadSnapshot(new MemoryStream(ms.ToArray()));
            var a = new double[4];
            var b = new double[4];
            est.CopyParametersTo(a);
            restored.CopyParametersTo(b);
            for (int j = 0; j < 4; j++)
            {
                Assert.True(Math.Abs(a[j] - b[j]) <= 1e-13 * (Math.Abs(a[j]) + 1.0), $"θ[{j}] {a[j]:R} vs {b[j]:R}");
            }

            Assert.Equal(est.Intercept, restored.Intercept, 12);
            var g2a = new double[25];
            var g2b = new double[25];
            est.CopySquaredForgettingGramTo(g2a.AsSpan(0, intercept ? 25 : 16));
            restored.CopySquaredForgettingGramTo(g2b.AsSpan(0, intercept ? 25 : 16));
            for (int i = 0; i < 25; i++)
            {
                Assert.True(Math.Abs(g2a[i] - g2b[i]) <= 1e-15 * (Math.Abs(g2a[i]) + 1e-300), $"G₂[{i}]");
            }

            // The restored one keeps working and agrees with the original on what follows.
            double[] x = Sample(random, 4);
            est.Update(x, 0.5);
            restored.Update(x, 0.5);
            est.CopyParametersTo(a);
            restored.CopyParametersTo(b);
            for (int j = 0; j < 4; j++)
            {
                Assert.True(Math.Abs(a[j] - b[j]) <= 1e-13 * (Math.Abs(a[j]) + 1.0));
            }
        }

        /// <summary>The streaming moments read layout-1 snapshots (co-moment stored as M itself) as well.</summary>
        [Fact]
        public void Streaming_moments_layout_one_snapshots_still_restore()
        {
            var random = new Random(8500);
            var m = new StreamingMoments(3, 0.8);
            for (int n = 0; n < 300; n++)
            {
                m.Update(Sample(random, 3));
            }

            byte[] v2 = SnapshotBytes.Of((s, e) => m.WriteSnapshot(s, e));
            StateRecord r = SnapshotCodec.Read(new MemoryStream(v2));
            double scale = r.GetDouble("comomentScale");
            Assert.True(scale < 1.0);
            var v1 = new StateRecord(r.Kind, 1);
            foreach (var e in r.Entries.Where(e => e.Key != "comomentScale"))
            {
                v1.AddEntry(e.Key, e.Key == "comoment" ? ((double[])e.Value).Select(v => v * scale).ToArray() : e.Value);
            }

            using var ms = new MemoryStream();
            SnapshotCodec.Write(v1, ms, SnapshotEncoding.Binary);
            StreamingMoments restored = StreamingMoments.ReadSnapshot(new MemoryStream(ms.ToArray()));
            for (int i = 0; i < 3; i++)
            {
                Assert.Equal(m.Mean(i), restored.Mean(i));
                for (int j = 0; j < 3; j++)
                {
                    Assert.True(Math.Abs(m.Comoment(i, j) - restored.Comoment(i, j)) <= 1e-15 * Math.Sqrt(m.Comoment(i, i) * m.Comoment(j, j)));
                }
            }

            // A scale outside [2⁻³², 1] is refused.
            foreach (double bad in new[] { 0.0, 1.5, 1e-20, double.NaN })
            {
                Assert.Throws<SnapshotFormatException>(() => StreamingMoments.ReadSnapshot(new MemoryStream(SnapshotBytes.Edit(v2, "comomentScale", bad))));
            }
        }
    }
}
