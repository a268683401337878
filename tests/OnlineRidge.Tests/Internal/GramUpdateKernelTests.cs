using System;
using System.Linq;
using OnlineRidge.Internal;
using Xunit;

namespace OnlineRidge.Tests.Internal
{
    /// <summary>
    /// The information-form kernels (split, block-padded layout) and the scaled statistic G = s·G̃ against plain scalar loops written here,
    /// for every head order from 0 past twice the widest hardware vector (8 doubles), so that every row-group remainder, every partial block
    /// and every scalar tail of the vectorized paths runs.
    /// </summary>
    public class GramUpdateKernelTests
    {
        private const int MaxOrder = 17;
        private const double Eps = 2.220446049250313e-16;

        public static TheoryData<int> Orders()
        {
            var data = new TheoryData<int>();
            for (int n = 0; n <= MaxOrder; n++)
            {
                data.Add(n);
            }

            return data;
        }

        /// <summary>fl(a·b + c) as the kernels compute it: fused on the vector path where the hardware has FMA, product then sum otherwise.</summary>
        private static double Reference(double a, double b, double c)
        {
#if LIBRARY_NETSTANDARD
            return (a * b) + c;
#else
            return System.Numerics.Vector.IsHardwareAccelerated && System.Runtime.Intrinsics.X86.Fma.IsSupported ? Math.FusedMultiplyAdd(a, b, c) : (a * b) + c;
#endif
        }

                private static double[] RandomVector(Random random, int n) => Enumerable.Range(0, n).Select(_ => (random.NextDouble() * 4.0) - 2.0).ToArray();

        [Fact]
        public void Layout_rounds_to_whole_blocks()
        {
            int w = GramUpdateKernels.BlockWidth;
            Assert.True(w >= 1);
            for (int n = 0; n <= MaxOrder; n++)
            {
                int s = GramUpdateKernels.Stride(n);
                Assert.True(s >= n && s < n + w && s % w == 0, $"stride {s} for order {n}");
                Assert.Equal(((n + 1) * s) + 1, GramUpdateKernels.SplitLength(n));
                int r = GramUpdateKernels.RowStart(n);
                Assert.True(r <= n && n - r < w && r % w == 0, $"row start {r} for row {n}");
            }
        }

        /// <summary>
        /// The dispatching entry (512-bit straight-line body for a head of 16 where AVX-512 is fast, the four-column body for 4) changes
        /// exactly what the 256-bit blocks change, bit for bit at every position of the layout — maintained entries, the never-read entries
        /// left of the diagonal, padding and corner — and both equal the scalar reference written out here (one fused multiply-add per
        /// maintained entry on the vector path with FMA, a product then a sum otherwise). Three coefficients per order, one of them negative.
        /// </summary>
        [Theory]
        [MemberData(nameof(Orders))]
        public void AddRankOneSplit_equals_the_256_bit_blocks_bit_for_bit(int n)
        {
            var random = new Random(3100 + n);
            int s = GramUpdateKernels.Stride(n);
            foreach (double c in new[] { 0.37, -1.9, 3.0e-7 })
            {
                double[] head = new double[s];
                RandomVector(random, n).CopyTo(head, 0);
                double last = (random.NextDouble() * 4.0) - 2.0;
                double[] wide = RandomVector(random, GramUpdateKernels.SplitLength(n));
                double[] narrow = (double[])wide.Clone();
                double[] before = (double[])wide.Clone();
                GramUpdateKernels.AddRankOneSplit(wide, n, s, c, head, last);
                GramUpdateKernels.AddRankOneSplitNarrow(narrow, n, s, c, head, last);
                for (int k = 0; k < wide.Length; k++)
                {
                    Assert.True(BitConverter.DoubleToInt64Bits(narrow[k]) == BitConverter.DoubleToInt64Bits(wide[k]), $"n={n}, c={c}, position {k}: {wide[k]:R} vs {narrow[k]:R}");
                }

                // And both against the scalar reference: a maintained entry is fl((c·hᵢ)·hⱼ + a) with the kernels' rounding, the corner
                // fl(a + fl(fl(c·ℓ)·ℓ)), every other position unchanged.
                for (int i = 0; i <= n; i++)
                {
                    for (int j = 0; j < s; j++)
                    {
                        int at = (i * s) + j;
                        bool maintained = i == n || j >= GramUpdateKernels.RowStart(i);
                        double factor = i == n ? c * last : c * head[i];
                        double expected = maintained ? Reference(factor, head[j], before[at]) : before[at];
                        Assert.True(BitConverter.DoubleToInt64Bits(expected) == BitConverter.DoubleToInt64Bits(wide[at]), $"n={n}, c={c}, ({i},{j}): {wide[at]:R} vs reference {expected:R}");
                    }
                }

                int corner = (n + 1) * s;
                Assert.Equal(BitConverter.DoubleToInt64Bits(before[corner] + ((c * last) * last)), BitConverter.DoubleToInt64Bits(wide[corner]));
            }
        }

        /// <summary>Every maintained entry gets a + (c·hᵢ)·hⱼ (one or two roundings), every other position keeps its sentinel bit for bit.</summary>
        [Theory]
        [MemberData(nameof(Orders))]
        public void AddRankOneSplit_matches_the_scalar_loop(int n)
        {
            var random = new Random(3000 + n);
            int s = GramUpdateKernels.Stride(n);
            double[] head = new double[s];
            RandomVector(random, n).CopyTo(head, 0);
            double last = (random.NextDouble() * 4.0) - 2.0;
            const double c = 0.37;
            double[] a = RandomVector(random, GramUpdateKernels.SplitLength(n));
            double[] before = (double[])a.Clone();
            GramUpdateKernels.AddRankOneSplit(a, n, s, c, head, last);

            for (int i = 0; i <= n; i++)
            {
                for (int j = 0; j < s; j++)
                {
                    // Row i < n of the head block; row n is the last column G[0..n−1, n].
                    int at = (i * s) + j;
                    bool maintained = i == n || j >= GramUpdateKernels.RowStart(i);
                    double increment = i == n ? (c * last) * head[j] : (c * head[i]) * head[j];
                    double expected = maintained ? before[at] + increment : before[at];
                    double tolerance = 2.0 * Eps * (Math.Abs(before[at]) + Math.Abs(increment));
                    Assert.True(Math.Abs(a[at] - expected) <= tolerance, $"n={n} ({i},{j}): {a[at]:R} vs {expected:R}");
                    if (!maintained || j >= n)
                    {
                        Assert.Equal(BitConverter.DoubleToInt64Bits(before[at]), BitConverter.DoubleToInt64Bits(a[at]));
                    }
                }
            }

            int corner = (n + 1) * s;
            double cornerExpected = before[corner] + ((c * last) * last);
            Assert.True(Math.Abs(a[corner] - cornerExpected) <= 2.0 * Eps * (Math.Abs(before[corner]) + Math.Abs(c * last * last)), $"corner {a[corner]:R} vs {cornerExpected:R}");
        }

        [Fact]
        public void AddRankOneSplit_refuses_short_spans()
        {
            int s = GramUpdateKernels.Stride(5);
            Assert.ThrowsAny<ArgumentException>(() => GramUpdateKernels.AddRankOneSplit(new double[GramUpdateKernels.SplitLength(5) - 1], 5, s, 1.0, new double[s], 1.0));
            Assert.ThrowsAny<ArgumentException>(() => GramUpdateKernels.AddRankOneSplit(new double[GramUpdateKernels.SplitLength(5)], 5, s, 1.0, new double[s - 1], 1.0));
        }

        [Theory]
        [MemberData(nameof(Orders))]
        public void Vector_helpers_match_the_scalar_loops(int n)
        {
            var random = new Random(4000 + n);
            double[] x = RandomVector(random, n);
            double[] m = RandomVector(random, n);
            double expectedNorm = 0.0;
            double bound = 0.0;
            for (int j = 0; j < n; j++)
            {
                expectedNorm += x[j] * x[j];
                bound += x[j] * x[j];
            }

            Assert.True(Math.Abs(GramUpdateKernels.SquaredNorm(x) - expectedNorm) <= (n + 1) * Eps * bound);

            var u = new double[n + 3];
            u[n] = 7.0;
            double copied = GramUpdateKernels.CopyWithSquaredNorm(x, u);
            Assert.True(Math.Abs(copied - expectedNorm) <= (n + 1) * Eps * bound);
            Assert.Equal(x, u.Take(n).ToArray());
            Assert.Equal(7.0, u[n]);

            var delta = new double[n + 1];
            delta[n] = 5.0;
            double centeredNorm = GramUpdateKernels.Center(x, m, delta);
            double expectedCentered = 0.0;
            for (int j = 0; j < n; j++)
            {
                Assert.Equal(x[j] - m[j], delta[j]);
                expectedCentered += (x[j] - m[j]) * (x[j] - m[j]);
            }

            Assert.True(Math.Abs(centeredNorm - expectedCentered) <= (n + 1) * Eps * expectedCentered);
            Assert.Equal(5.0, delta[n]);

            double[] y = RandomVector(random, n + 1);
            double[] y0 = (double[])y.Clone();
            GramUpdateKernels.Axpy(-0.3, x, y);
            for (int j = 0; j < n; j++)
            {
                Assert.Equal(y0[j] + (-0.3 * x[j]), y[j]);
            }

            Assert.Equal(y0[n], y[n]);

            double[] z = RandomVector(random, n);
            double[] z0 = (double[])z.Clone();
            GramUpdateKernels.Scale(z, 0.125);
            for (int j = 0; j < n; j++)
            {
                Assert.Equal(z0[j] / 8.0, z[j]);
            }
        }

#if !LIBRARY_NETSTANDARD
        /// <summary>
        /// The four-lane sum every kernel reduces with adds in the fixed order ((v₀ + v₁) + (v₂ + v₃)), written out here in scalars, bit for
        /// bit; lanes of mixed sign and magnitude make the other orders round differently (checked, so the test can tell them apart), and
        /// NaN and ∞ lanes propagate.
        /// </summary>
        [Fact]
        public void Lane_sum_adds_in_pairs_bit_for_bit()
        {
            var random = new Random(4242);
            int separatedFromSequential = 0;
            int separatedFromCrossed = 0;
            for (int k = 0; k < 2000; k++)
            {
                double[] v = Enumerable.Range(0, 4).Select(_ => ((random.NextDouble() * 2.0) - 1.0) * Math.Pow(2.0, random.Next(-30, 31))).ToArray();
                double expected = (v[0] + v[1]) + (v[2] + v[3]);
                double actual = GramUpdateKernels.SumOfLanes(System.Runtime.Intrinsics.Vector256.Create(v[0], v[1], v[2], v[3]));
                Assert.Equal(BitConverter.DoubleToInt64Bits(expected), BitConverter.DoubleToInt64Bits(actual));
                if (BitConverter.DoubleToInt64Bits(expected) != BitConverter.DoubleToInt64Bits(((v[0] + v[1]) + v[2]) + v[3]))
                {
                    separatedFromSequential++;
                }

                if (BitConverter.DoubleToInt64Bits(expected) != BitConverter.DoubleToInt64Bits((v[0] + v[2]) + (v[1] + v[3])))
                {
                    separatedFromCrossed++;
                }

                if (System.Numerics.Vector<double>.Count == 4)
                {
                    double viaVector = GramUpdateKernels.SumOfLanes(new System.Numerics.Vector<double>(v));
                    Assert.Equal(BitConverter.DoubleToInt64Bits(expected), BitConverter.DoubleToInt64Bits(viaVector));
                }
            }

            Assert.True(separatedFromSequential > 100, $"only {separatedFromSequential} samples tell the pairwise from the sequential order");
            Assert.True(separatedFromCrossed > 100, $"only {separatedFromCrossed} samples tell the pairwise from the crossed order");
            Assert.True(double.IsNaN(GramUpdateKernels.SumOfLanes(System.Runtime.Intrinsics.Vector256.Create(1.0, double.NaN, 2.0, 3.0))));
            Assert.Equal(double.PositiveInfinity, GramUpdateKernels.SumOfLanes(System.Runtime.Intrinsics.Vector256.Create(1.0, 2.0, double.PositiveInfinity, 3.0)));
        }
#endif

        [Theory]
        [InlineData(0)]
        [InlineData(-1)]
        [InlineData(-32)]
        [InlineData(-1022)]
        [InlineData(1023)]
        public void Powers_of_two_are_exact(int e)
        {
            double v = GramUpdateKernels.PowerOfTwo(e);
            Assert.Equal(Math.Pow(2.0, e), v);
            Assert.Equal(e, GramUpdateKernels.FloorLog2(v));
            Assert.Equal(e, GramUpdateKernels.FloorLog2(v * 1.75));
        }

        [Fact]
        public void Aligned_buffers_start_on_a_cache_line()
        {
            double[] buffer = GramUpdateKernels.AllocateAligned(13, out int offset);
            Assert.True(offset >= 0 && offset + 13 <= buffer.Length);
            Assert.All(buffer, v => Assert.Equal(0.0, v));
#if !LIBRARY_NETSTANDARD
            long address = System.Runtime.InteropServices.Marshal.UnsafeAddrOfPinnedArrayElement(buffer, offset).ToInt64();
            Assert.Equal(0L, address % 64);
#endif
        }

        /// <summary>
        /// The scaled statistic against the explicit recursion G ← βG + w·u·uᵀ run here in plain loops, with β = 0.9 over 1500 steps: s falls
        /// by 2⁻³² every ≈ 211 steps, so about seven renormalizations happen (counted), and a zero-weight step every fifth step. Agreement is
        /// to rounding relative to the entries' scale √(GᵢᵢGⱼⱼ); a zero-weight step changes no stored bit unless it renormalizes.
        /// </summary>
        [Theory]
        [InlineData(1)]
        [InlineData(2)]
        [InlineData(5)]
        [InlineData(9)]
        [InlineData(14)]
        public void Scaled_statistic_matches_explicit_forgetting_across_renormalizations(int d)
        {
            const double beta = 0.9;
            var random = new Random(5000 + d);
            var g = new ScaledGram(d, beta);
            var reference = new double[d, d];
            double[] head = new double[g.Stride];
            int renormalizations = 0;
            int zeroWeight = 0;
            for (int step = 0; step < 1500; step++)
            {
                double[] u = RandomVector(random, d);
                double w = step % 5 == 4 ? 0.0 : 0.5 + random.NextDouble();
                for (int i = 0; i < d; i++)
                {
                    for (int j = 0; j < d; j++)
                    {
                        reference[i, j] = (beta * reference[i, j]) + (w * u[i] * u[j]);
                    }
                }

                u.AsSpan(0, d - 1).CopyTo(head);
                double before = g.Scale;
                double[] stored = g.Storage.ToArray();
                g.Add(w, head, u[d - 1], g.ProposedTrace(w, u.Sum(v => v * v)));
                if (g.Scale > before)
                {
                    renormalizations++;
                }
                else if (w == 0.0)
                {
                    zeroWeight++;
                    Assert.Equal(stored, g.Storage.ToArray());
                    Assert.Equal(beta * before, g.Scale);
                }

                Assert.True(g.Scale >= ScaledGram.MinScale && g.Scale <= 1.0, $"scale {g.Scale:R}");
                if (step % 97 == 0 || step == 1499)
                {
                    AssertClose(reference, g, d, step);
                }
            }

            Assert.InRange(renormalizations, 5, 9);
            Assert.True(zeroWeight > 200);
            double trace = Enumerable.Range(0, d).Sum(i => reference[i, i]);
            Assert.True(Math.Abs(g.Trace - trace) <= 1e-12 * trace);
        }

        /// <summary>A forgetting factor below 2⁻⁵¹² is applied explicitly (s stays 1) and still matches the recursion.</summary>
        [Fact]
        public void Tiny_forgetting_factor_is_applied_explicitly()
        {
            const double beta = 1e-300;
            const int d = 6;
            var random = new Random(6001);
            var g = new ScaledGram(d, beta);
            var reference = new double[d, d];
            double[] head = new double[g.Stride];
            for (int step = 0; step < 40; step++)
            {
                double[] u = RandomVector(random, d);
                for (int i = 0; i < d; i++)
                {
                    for (int j = 0; j < d; j++)
                    {
                        reference[i, j] = (beta * reference[i, j]) + (u[i] * u[j]);
                    }
                }

                u.AsSpan(0, d - 1).CopyTo(head);
                g.Add(1.0, head, u[d - 1], g.ProposedTrace(1.0, u.Sum(v => v * v)));
                Assert.Equal(1.0, g.Scale);
                AssertClose(reference, g, d, step);
            }
        }

        /// <summary>A weight so large that w/s overflows folds s into G̃ first: the result is still w·u·uᵀ plus the forgotten rest, finite.</summary>
        [Fact]
        public void Huge_weight_folds_the_scale_in_first()
        {
            const int d = 3;
            var g = new ScaledGram(d, 0.5);
            double[] head = new double[g.Stride];
            var reference = new double[d, d];
            double[] u = { 1e-160, 0.0, 2e-160 };
            for (int step = 0; step < 3; step++)
            {
                double w = step == 2 ? 1.5e308 : 1.0;
                for (int i = 0; i < d; i++)
                {
                    for (int j = 0; j < d; j++)
                    {
                        reference[i, j] = (0.5 * reference[i, j]) + (w * u[i] * u[j]);
                    }
                }

                u.AsSpan(0, d - 1).CopyTo(head);
                g.Add(w, head, u[d - 1], g.ProposedTrace(w, u.Sum(v => v * v)));
            }

            Assert.Equal(1.0, g.Scale);
            for (int i = 0; i < d; i++)
            {
                for (int j = 0; j < d; j++)
                {
                    Assert.True(Math.Abs(g.Get(i, j) - reference[i, j]) <= 1e-14 * Math.Abs(reference[i, j]), $"({i},{j}) {g.Get(i, j):R} vs {reference[i, j]:R}");
                }
            }
        }

        /// <summary>The stored form round-trips: pack, restore into a fresh statistic, same values and same continuation bits.</summary>
        [Fact]
        public void Stored_form_round_trips_bit_for_bit()
        {
            const int d = 7;
            var random = new Random(7001);
            var a = new ScaledGram(d, 0.95);
            var b = new ScaledGram(d, 0.95);
            double[] head = new double[a.Stride];
            for (int step = 0; step < 800; step++)
            {
                if (step == 500)
                {
                    b.Restore(a.PackedStored(), a.Scale, a.Trace);
                }

                double[] u = RandomVector(random, d);
                u.AsSpan(0, d - 1).CopyTo(head);
                double t = a.ProposedTrace(1.0, u.Sum(v => v * v));
                a.Add(1.0, head, u[d - 1], t);
                if (step >= 500)
                {
                    b.Add(1.0, head, u[d - 1], t);
                }
            }

            Assert.Equal(a.PackedStored(), b.PackedStored());
            Assert.Equal(a.Scale, b.Scale);
            var dense = new double[d * d];
            a.Unpack(dense);
            for (int i = 0; i < d; i++)
            {
                for (int j = 0; j < d; j++)
                {
                    Assert.Equal(a.Get(i, j), dense[(i * d) + j]);
                    Assert.Equal(dense[(i * d) + j], dense[(j * d) + i]);
                }
            }
        }

        private static void AssertClose(double[,] reference, ScaledGram g, int d, int step)
        {
            for (int i = 0; i < d; i++)
            {
                for (int j = 0; j < d; j++)
                {
                    double level = Math.Sqrt(reference[i, i] * reference[j, j]);
                    double got = g.Get(i, j);
                    Assert.True(Math.Abs(got - reference[i, j]) <= 1e-13 * level, $"step {step} ({i},{j}): {got:R} vs {reference[i, j]:R}");
                }
            }
        }
    }
}
