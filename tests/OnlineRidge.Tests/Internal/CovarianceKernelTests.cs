using System;
using OnlineRidge.Internal;
using Xunit;

namespace OnlineRidge.Tests.Internal
{
    /// <summary>
    /// The covariance-form kernels against plain scalar references written out here, for every order p from 1 to 33 and 124–129: on the vector path
    /// the padded stride then runs through every mix of the 16-, 8- and 4-column blocks and both parities of the row count, and on the
    /// portable build (stride p, no pad) the same claims hold for the scalar loops. Bitwise claims are compared through the bit patterns
    /// (so −0 and +0 differ); rounded ones against the stated bound.
    /// </summary>
    public class CovarianceKernelTests
    {
        private const int MaxOrder = 33;

        /// <summary>Machine epsilon 2^−52 (the spacing of doubles just above 1).</summary>
        private const double MachineEpsilon = 1.0 / (1L << 52);

        /// <summary>Entries appended after the p·s used ones (and after the s used entries of a vector) to catch stray writes.</summary>
        private const int Tail = 7;

        private const double Sentinel = -12345.678;

        /// <summary>A value for pad columns in the tests where the kernel must not look at or touch the pad.</summary>
        private const double PadMarker = 7.5;

        public static TheoryData<int> Orders()
        {
            var data = new TheoryData<int>();
            for (int p = 1; p <= MaxOrder; p++)
            {
                data.Add(p);
            }

            // Around the first stride with the extra pad (rounded order 128: stride 132 on the vector path).
            foreach (int p in new[] { 124, 125, 128, 129 })
            {
                data.Add(p);
            }

            return data;
        }

        /// <summary>
        /// The stride is p on the portable build (which never vectorizes) and, on the vector path, p rounded up to the next multiple of 4,
        /// plus 4 when that is a multiple of 128 (no two rows a multiple of 4 KiB apart within a few rows).
        /// </summary>
        [Theory]
        [MemberData(nameof(Orders))]
        public void Stride_is_the_order_rounded_up_to_the_vector_width_on_the_vector_path_only(int p)
        {
#if LIBRARY_NETSTANDARD
            Assert.False(CovarianceKernels.IsVectorized);
#endif
            int s = CovarianceKernels.Stride(p);
            if (CovarianceKernels.IsVectorized)
            {
                int rounded = (p + 3) / 4 * 4;
                Assert.True(s % 4 == 0 && s == (rounded % 128 == 0 ? rounded + 4 : rounded), $"p = {p}: stride {s}");
            }
            else
            {
                Assert.Equal(p, s);
            }
        }

        /// <summary>
        /// Multiply writes u = A·x: every |uᵢ − refᵢ| ≤ 2·p·ε·Σⱼ |xⱼ·Aⱼᵢ| against the scalar sum in row order (the kernel sums in another
        /// order, so each side carries at most about p·ε/2 relative rounding of Σ|terms|); it returns xᵀAx within 4·p·ε·Σᵢⱼ |xᵢxⱼAⱼᵢ| (two
        /// reordered sums); the pad entries of u are overwritten with exactly 0 and nothing after entry s − 1 of u is written.
        /// </summary>
        [Theory]
        [MemberData(nameof(Orders))]
        public void Multiply_matches_the_scalar_product_within_the_rounding_bound(int p)
        {
            int s = CovarianceKernels.Stride(p);
            var random = new Random(5100 + p);
            double[] a = RandomSpd(random, p, s);
            double[] x = RandomVector(random, p, s);
            double[] u = Garbage(s);
            double q = CovarianceKernels.Multiply(a, s, p, x, u);
            double qExpected = 0.0;
            double qScale = 0.0;
            for (int i = 0; i < p; i++)
            {
                for (int j = 0; j < p; j++)
                {
                    qExpected += x[i] * x[j] * a[(j * s) + i];
                    qScale += Math.Abs(x[i] * x[j] * a[(j * s) + i]);
                }
            }

            Assert.True(Math.Abs(q - qExpected) <= 4 * p * MachineEpsilon * qScale, $"p = {p}: x'u = {q:R} vs {qExpected:R}");
            for (int i = 0; i < p; i++)
            {
                double expected = 0.0;
                double scale = 0.0;
                for (int j = 0; j < p; j++)
                {
                    expected += x[j] * a[(j * s) + i];
                    scale += Math.Abs(x[j] * a[(j * s) + i]);
                }

                Assert.True(Math.Abs(u[i] - expected) <= 2 * p * MachineEpsilon * scale, $"p = {p}, u[{i}] = {u[i]:R} vs {expected:R}");
            }

            for (int i = p; i < s; i++)
            {
                Assert.True(u[i] == 0.0, $"p = {p}: pad u[{i}] = {u[i]:R}");
            }

            AssertTailIntact(u, s);
        }

        /// <summary>
        /// RankOneDowndate sets every entry of rows 0 … p−1 (pad columns included) to the expression fl(−c·fl(tᵢ·tⱼ) + Aᵢⱼ) of its path,
        /// bit for bit; a bitwise symmetric input stays bitwise symmetric; the pads stay +0; nothing after row p − 1 is written. A planted
        /// diagonal entry (and, mostly, the random ones) rounds differently fused and unfused, so the comparison tells the two apart.
        /// </summary>
        [Theory]
        [MemberData(nameof(Orders))]
        public void RankOneDowndate_is_the_single_expression_per_entry_and_stays_bitwise_symmetric(int p)
        {
            int s = CovarianceKernels.Stride(p);
            var random = new Random(5200 + p);
            double[] a = RandomSpd(random, p, s);
            double[] t = RandomDowndate(random, a, p, s);

            // A planted entry where the roundings differ: with c = 1 + 2^−30 and t₀ = 1 + 2^−20 (t₀² exact), c·t₀² needs 71 bits, and with
            // A₀₀ = fl(c·t₀²) the result is −2^−70 fused and 0 unfused.
            double c = 1.0 + (1.0 / (1L << 30));
            t[0] = 1.0 + (1.0 / (1L << 20));
            a[0] = c * (t[0] * t[0]);
            double[] before = (double[])a.Clone();
            AssertBitwiseSymmetric(before, p, s, "input");
            CovarianceKernels.RankOneDowndate(a, s, p, t, c);
            int separating = 0;
            for (int i = 0; i < p; i++)
            {
                for (int j = 0; j < s; j++)
                {
                    double old = before[(i * s) + j];
                    AssertBits(Reference(-c, t[i] * t[j], old), a[(i * s) + j], $"p = {p}, A({i},{j})");
                    if (Bits(Math.FusedMultiplyAdd(-c, t[i] * t[j], old)) != Bits((-c * (t[i] * t[j])) + old))
                    {
                        separating++;
                    }
                }

                for (int j = p; j < s; j++)
                {
                    AssertBits(0.0, a[(i * s) + j], $"p = {p}, pad A({i},{j})");
                }
            }

            Assert.True(separating > 0, $"p = {p}: no entry where fused and unfused differ");
            AssertBitwiseSymmetric(a, p, s, "result");
            AssertTailIntact(a, p * s);
        }

        /// <summary>
        /// DowndateAndMultiply leaves the matrix, u and the returned xᵀu bit for bit as RankOneDowndate followed by Multiply on a copy (its
        /// documented theorem), including the pad entries of u and the untouched entries after the used ones; and its 256-bit path (which
        /// an AVX-512 machine otherwise skips for 16-column blocks) gives the same bits as the path the machine takes, applied once more.
        /// </summary>
        [Theory]
        [MemberData(nameof(Orders))]
        public void DowndateAndMultiply_equals_the_downdate_then_the_product_bit_for_bit(int p)
        {
            int s = CovarianceKernels.Stride(p);
            var random = new Random(5300 + p);
            double[] fused = RandomSpd(random, p, s);
            double[] t = RandomDowndate(random, fused, p, s);
            double[] x = RandomVector(random, p, s);
            double[] apart = (double[])fused.Clone();
            double[] uFused = Garbage(s);
            double[] uApart = Garbage(s);
            double c = 0.5 + random.NextDouble();
            double qFused = CovarianceKernels.DowndateAndMultiply(fused, s, p, t, c, x, uFused);
            CovarianceKernels.RankOneDowndate(apart, s, p, t, c);
            double qApart = CovarianceKernels.Multiply(apart, s, p, x, uApart);
            AssertBits(qApart, qFused, $"p = {p}, x'u");
            for (int k = 0; k < fused.Length; k++)
            {
                AssertBits(apart[k], fused[k], $"p = {p}, A[{k}]");
            }

            for (int k = 0; k < uFused.Length; k++)
            {
                AssertBits(uApart[k], uFused[k], $"p = {p}, u[{k}]");
            }

            // The 256-bit path (what processors without AVX-512 run) under the same theorem, also on an AVX-512 machine.
            double[] narrow = (double[])apart.Clone();
            double[] wideAgain = (double[])apart.Clone();
            double[] uNarrow = Garbage(s);
            double[] uWide = Garbage(s);
            double qNarrow = CovarianceKernels.DowndateAndMultiplyNarrow(narrow, s, p, t, c, x, uNarrow);
            double qWide = CovarianceKernels.DowndateAndMultiply(wideAgain, s, p, t, c, x, uWide);
            AssertBits(qWide, qNarrow, $"p = {p}, narrow x'u");
            for (int k = 0; k < narrow.Length; k++)
            {
                AssertBits(wideAgain[k], narrow[k], $"p = {p}, narrow A[{k}]");
            }

            for (int k = 0; k < uNarrow.Length; k++)
            {
                AssertBits(uWide[k], uNarrow[k], $"p = {p}, narrow u[{k}]");
            }
        }

        /// <summary>
        /// GainStep writes θ'ⱼ = fl(c·vⱼ + θⱼ) (the path's single expression) bit for bit over all s entries, returns exactly max vⱼ², and
        /// writes nothing after entry s − 1. A planted entry of θ' (and, mostly, the random ones) rounds differently fused and
        /// unfused, so the comparison tells the two apart.
        /// </summary>
        [Theory]
        [MemberData(nameof(Orders))]
        public void GainStep_matches_the_scalar_step_bit_for_bit(int p)
        {
            int s = CovarianceKernels.Stride(p);
            var random = new Random(5400 + p);
            double[] v = RandomVector(random, p, s);
            double[] theta = RandomVector(random, p, s);

            // A planted entry where the roundings differ: c·v₀ + θ₀ = 2^−60 fused and 0 unfused.
            double c = -(1.0 + (1.0 / (1L << 30)));
            v[0] = 1.0 - (1.0 / (1L << 30));
            theta[0] = 1.0;
            double[] thetaNext = Garbage(s);
            double[] a = RandomSpd(random, p, s);
            double largest = CovarianceKernels.GainStep(v, c, theta, thetaNext, s, a, p, 1e-3, out _);
            double expectedLargest = 0.0;
            int separating = 0;
            for (int j = 0; j < s; j++)
            {
                AssertBits(Reference(c, v[j], theta[j]), thetaNext[j], $"p = {p}, θ'[{j}]");
                expectedLargest = Math.Max(expectedLargest, v[j] * v[j]);
                if (Bits(Math.FusedMultiplyAdd(c, v[j], theta[j])) != Bits((c * v[j]) + theta[j]))
                {
                    separating++;
                }
            }

            Assert.True(expectedLargest > 0.0);
            AssertBits(expectedLargest, largest, $"p = {p}, max v²");
            Assert.True(separating > 0, $"p = {p}: no entry where fused and unfused differ");
            AssertTailIntact(thetaNext, s);
            if (s == 4)
            {
                // The inlined variant of the small path: the same θ' and return value.
                double[] thetaFour = Garbage(s);
                AssertBits(largest, CovarianceKernels.GainStepFour(v, c, theta, thetaFour), $"p = {p}, four-wide max v²");
                for (int j = 0; j < s; j++)
                {
                    AssertBits(thetaNext[j], thetaFour[j], $"p = {p}, four-wide θ'[{j}]");
                }

                AssertTailIntact(thetaFour, s);
            }
        }

        /// <summary>
        /// GainStep returns NaN when any single entry of v or θ' is not finite: vⱼ = ±∞, vⱼ = NaN, θⱼ = ±∞ or θⱼ = NaN at each position
        /// j &lt; s in turn (every lane of every vector, pad lanes included, and every index of the scalar loop); a finite v whose square
        /// overflows is not a failure of this kind and returns +∞.
        /// </summary>
        [Theory]
        [MemberData(nameof(Orders))]
        public void GainStep_returns_NaN_for_a_non_finite_entry_at_every_position(int p)
        {
            int s = CovarianceKernels.Stride(p);
            var random = new Random(5500 + p);
            double[] v = RandomVector(random, p, s);
            double[] theta = RandomVector(random, p, s);
            const double c = -1.3;
            var thetaNext = new double[s];
            double[] a = RandomSpd(random, p, s);
            Assert.False(double.IsNaN(CovarianceKernels.GainStep(v, c, theta, thetaNext, s, a, p, 1e-3, out _)), $"p = {p}: finite inputs");
            double[] bad = { double.PositiveInfinity, double.NegativeInfinity, double.NaN };
            for (int j = 0; j < s; j++)
            {
                foreach (double value in bad)
                {
                    double[] vBad = (double[])v.Clone();
                    vBad[j] = value;
                    Assert.True(double.IsNaN(CovarianceKernels.GainStep(vBad, c, theta, thetaNext, s, a, p, 1e-3, out _)), $"p = {p}: v[{j}] = {value}");
                    double[] thetaBad = (double[])theta.Clone();
                    thetaBad[j] = value;
                    Assert.True(double.IsNaN(CovarianceKernels.GainStep(v, c, thetaBad, thetaNext, s, a, p, 1e-3, out _)), $"p = {p}: θ[{j}] = {value}");
                    if (s == 4)
                    {
                        Assert.True(double.IsNaN(CovarianceKernels.GainStepFour(vBad, c, theta, thetaNext)), $"p = {p}: four-wide, v[{j}] = {value}");
                        Assert.True(double.IsNaN(CovarianceKernels.GainStepFour(v, c, thetaBad, thetaNext)), $"p = {p}: four-wide, θ[{j}] = {value}");
                    }
                }

                double[] vHuge = (double[])v.Clone();
                vHuge[j] = 1e200;
                Assert.Equal(double.PositiveInfinity, CovarianceKernels.GainStep(vHuge, c, theta, thetaNext, s, a, p, 1e-3, out _));
                if (s == 4)
                {
                    Assert.Equal(double.PositiveInfinity, CovarianceKernels.GainStepFour(vHuge, c, theta, thetaNext));
                }
            }
        }

        /// <summary>
        /// GainStep's diagonal test says "every new diagonal fl(Aᵢᵢ − c·fl(vᵢ²)), i &lt; p, is positive" exactly when the smallest of them, by
        /// the scalar reference written out here, is positive (the estimator skips SmallestDowndatedDiagonal's search when the gain pass says yes): for all-positive
        /// new diagonals (vᵢ² ≤ Aᵢᵢ/4, c = 0.8), and with one entry made negative (vₖ² = 2.25·Aₖₖ, c = 1) or exactly zero (Aₖₖ = 4, vₖ = 2,
        /// c = 1) at every position k &lt; p in turn, so every lane of the vector loop and every index of the scalar tail is reached.
        /// </summary>
        [Theory]
        [MemberData(nameof(Orders))]
        public void GainStep_diagonal_test_agrees_with_the_smallest_new_diagonal(int p)
        {
            int s = CovarianceKernels.Stride(p);
            var random = new Random(5450 + p);
            double[] theta = RandomVector(random, p, s);
            var thetaNext = new double[s];
            double[] a = RandomSpd(random, p, s);
            double[] v = SmallDowndate(random, a, p, s);
            Assert.True(Agree(a, v, 0.8) > 0.0, $"p = {p}: all positive");
            for (int k = 0; k < p; k++)
            {
                double[] vk = (double[])v.Clone();
                vk[k] = 1.5 * Math.Sqrt(a[(k * s) + k]);
                Assert.True(Agree(a, vk, 1.0) < 0.0, $"p = {p}: negative at {k}");

                double[] ak = (double[])a.Clone();
                ak[(k * s) + k] = 4.0;
                vk[k] = 2.0;
                for (int i = 0; i < p; i++)
                {
                    if (i != k)
                    {
                        vk[i] = 0.1 * Math.Sqrt(ak[(i * s) + i]);
                    }
                }

                Assert.True(Agree(ak, vk, 1.0) == 0.0, $"p = {p}: zero at {k}");
            }

            double Agree(double[] matrix, double[] vector, double c)
            {
                // The smallest new diagonal by the scalar reference (the downdate's arithmetic, written out here).
                double smallest = double.PositiveInfinity;
                for (int i = 0; i < p; i++)
                {
                    smallest = Math.Min(smallest, Reference(-c, vector[i] * vector[i], matrix[(i * s) + i]));
                }

                CovarianceKernels.GainStep(vector, 0.25, theta, thetaNext, s, matrix, p, c, out bool positive);
                Assert.True(positive == smallest > 0.0, $"p = {p}: gain pass says {positive}, smallest new diagonal {smallest:R}");
                return smallest;
            }
        }

        /// <summary>
        /// SmallestDowndatedDiagonal returns min fl(Aᵢᵢ − c·fl(tᵢ²)) over i &lt; p (the path's expression; c = 0.8 for the all-positive case, 1
        /// for the others) and, when that minimum is not
        /// positive, the first index holding it (ties keep the first index); −1 when every new diagonal entry is positive. Checked for
        /// all-positive values, a planted negative minimum, two-way negative ties and an all-equal diagonal; and the value is bit for bit the
        /// diagonal entry RankOneDowndate then produces.
        /// </summary>
        [Theory]
        [MemberData(nameof(Orders))]
        public void SmallestDowndatedDiagonal_finds_the_first_smallest_new_diagonal(int p)
        {
            int s = CovarianceKernels.Stride(p);
            var random = new Random(5600 + p);

            // All new diagonals positive: tᵢ² ≤ Aᵢᵢ/4.
            double[] a = RandomSpd(random, p, s);
            double[] t = SmallDowndate(random, a, p, s);
            Assert.True(CheckSmallest(a, t, 0.8, p, s, -1) > 0.0, $"p = {p}: all new diagonals should be positive");

            // A negative minimum planted at k: t_k² = 2.25·A_kk, the others stay at least 3/4 of their diagonal.
            int k = random.Next(p);
            t[k] = 1.5 * Math.Sqrt(a[(k * s) + k]);
            double negative = CheckSmallest(a, t, 1.0, p, s, k);
            Assert.True(negative < 0.0, $"p = {p}: planted minimum {negative:R}");

            // Ties: equal diagonals and t_m = −t_k give the same negative bits at k and m, below all others (−0.44·A_kk against ≥ 0.75·Aᵢᵢ);
            // the first of the two is reported.
            if (p >= 2)
            {
                int first = random.Next(p - 1);
                int second = first + 1 + random.Next(p - 1 - first);
                foreach ((int lo, int hi) in new[] { (0, p - 1), (first, second) })
                {
                    a = RandomSpd(random, p, s);
                    t = SmallDowndate(random, a, p, s);
                    a[(hi * s) + hi] = a[(lo * s) + lo];
                    t[lo] = 1.2 * Math.Sqrt(a[(lo * s) + lo]);
                    t[hi] = -t[lo];
                    CheckSmallest(a, t, 1.0, p, s, lo);
                }
            }

            // All new diagonals equal and positive (t = 0, diagonal 2): value 2, index −1.
            a = new double[(p * s) + Tail];
            for (int i = 0; i < p; i++)
            {
                a[(i * s) + i] = 2.0;
            }

            double equal = CheckSmallest(a, new double[s], 1.0, p, s, -1);
            Assert.Equal(2.0, equal);
        }

        /// <summary>Inputs (a, b, c) with the fused and the unfused a·b + c, which differ except in the last (exact) case.</summary>
        public static TheoryData<double, double, double, double, double> MultiplyAddCases()
        {
            double e30 = 1.0 / (1L << 30);
            double e60 = 1.0 / (1L << 60);
            return new TheoryData<double, double, double, double, double>
            {
                // (1 + 2^−30)(1 − 2^−30) = 1 − 2^−60, which rounds to 1 before the −1 is added.
                { 1.0 + e30, 1.0 - e30, -1.0, -e60, 0.0 },
                { -(1.0 + e30), 1.0 - e30, 1.0, e60, 0.0 },

                // (1 + 2^−30)² = 1 + 2^−29 + 2^−60.
                { 1.0 + e30, 1.0 + e30, -(1.0 + (2 * e30)), e60, 0.0 },

                // fl(0.1)·10 = 1 + 2^−54 exactly.
                { 0.1, 10.0, -1.0, 1.0 / (1L << 54), 0.0 },
                { 3.0, 5.0, 1.0, 16.0, 16.0 },
            };
        }

        /// <summary>
        /// MultiplyAdd rounds once (fused) on the vector path and twice (product, then sum) on the portable path, in cases where the two
        /// differ; the expected values are first confirmed against Math.FusedMultiplyAdd and the plain expression.
        /// </summary>
        [Theory]
        [MemberData(nameof(MultiplyAddCases))]
        public void MultiplyAdd_rounds_as_the_path_in_use(double a, double b, double c, double fused, double unfused)
        {
            AssertBits(fused, Math.FusedMultiplyAdd(a, b, c), "test data, fused");
            AssertBits(unfused, (a * b) + c, "test data, unfused");
            AssertBits(CovarianceKernels.IsVectorized ? fused : unfused, CovarianceKernels.MultiplyAdd(a, b, c), $"MultiplyAdd({a:R}, {b:R}, {c:R})");
        }

        /// <summary>
        /// ScaleByPowerOfTwo multiplies every entry of the p×p block by 2^k exactly (bit for bit x·2^k, with 2^k formed here by repeated
        /// doubling or halving) for k ∈ {−40, 33, 300}, and leaves the pad columns and everything after row p − 1 as they were.
        /// </summary>
        [Theory]
        [MemberData(nameof(Orders))]
        public void ScaleByPowerOfTwo_is_exact_on_the_block_and_touches_nothing_else(int p)
        {
            int s = CovarianceKernels.Stride(p);
            foreach (int k in new[] { -40, 33, 300 })
            {
                var random = new Random(5700 + p);
                double[] a = RandomSpd(random, p, s);
                FillPads(a, p, s, PadMarker);
                double[] before = (double[])a.Clone();
                CovarianceKernels.ScaleByPowerOfTwo(a, s, p, k);
                double factor = PowerOfTwo(k);
                for (int i = 0; i < p; i++)
                {
                    for (int j = 0; j < s; j++)
                    {
                        double expected = j < p ? before[(i * s) + j] * factor : PadMarker;
                        AssertBits(expected, a[(i * s) + j], $"p = {p}, k = {k}, A({i},{j})");
                    }
                }

                AssertTailIntact(a, p * s);
            }
        }

        public static TheoryData<double, int> ExponentCases() => new TheoryData<double, int>
        {
            { 1.0, 0 },
            { 3.0, 1 },
            { 0.75, -1 },
            { 1e300, 996 },
            { 1e-300, -997 },
            { double.MaxValue, 1023 },
            { 2.2250738585072014e-308, -1022 }, // the smallest normal, 2^−1022
        };

        /// <summary>Exponent(x) is the e with 2^e ≤ x &lt; 2^(e+1) for these positive normal x (the bracket is checked as well).</summary>
        [Theory]
        [MemberData(nameof(ExponentCases))]
        public void Exponent_brackets_the_value(double x, int e)
        {
            Assert.True(PowerOfTwo(e) <= x && x < PowerOfTwo(e + 1), $"test data: {x:R} not in [2^{e}, 2^{e + 1})");
            Assert.Equal(e, CovarianceKernels.Exponent(x));
        }

        /// <summary>Exponent of 2^e, and of the largest double below 2^(e+1), is e for every normal binade e = −1022 … 1023.</summary>
        [Fact]
        public void Exponent_of_every_binade()
        {
            for (int e = -1022; e <= 1023; e++)
            {
                double low = PowerOfTwo(e);
                Assert.Equal(e, CovarianceKernels.Exponent(low));
                Assert.Equal(e, CovarianceKernels.Exponent(Math.BitDecrement(2.0 * low)));
            }
        }

        /// <summary>
        /// ScaleB(x, k) is bit for bit x·2^k (one correctly rounded multiplication by the exact power 2^k formed here) for x near 1 and every
        /// k = −1074 … 1023: this includes |k| &gt; 1000, where the portable implementation applies 2^±1000 first, and the subnormal results
        /// below k = −1022.
        /// </summary>
        [Fact]
        public void ScaleB_is_the_exact_power_of_two_product_near_1()
        {
            double[] xs = { 1.0, 1.5, 1.0 + MachineEpsilon, Math.BitDecrement(2.0), 1.2345678901234567, 1.7320508075688772 };
            for (int k = -1074; k <= 1023; k++)
            {
                double power = PowerOfTwo(k);
                foreach (double x in xs)
                {
                    AssertBits(x * power, CovarianceKernels.ScaleB(x, k), $"ScaleB({x:R}, {k})");
                    AssertBits(-x * power, CovarianceKernels.ScaleB(-x, k), $"ScaleB({-x:R}, {k})");
                }
            }
        }

        public static TheoryData<int, int> FarScaleBCases() => new TheoryData<int, int>
        {
            // (binary exponent of x, k): every result 2^(e+k) is normal; the first four step through 2^±1000 on the portable build.
            { -100, 1100 },
            { -1022, 2000 },
            { 100, -1100 },
            { 1023, -2000 },
            { -500, 1000 },
            { 500, -1000 },
            { 1000, -1 },
            { -1000, 1 },
        };

        /// <summary>
        /// ScaleB(m·2^e, k) = m·2^(e+k) exactly for x far from 1 whose result is still normal, also when |k| &gt; 1000 (where the portable
        /// implementation takes more than one step), and overflows to ±∞ when the result exceeds the range.
        /// </summary>
        [Theory]
        [MemberData(nameof(FarScaleBCases))]
        public void ScaleB_far_from_1_is_exact_while_the_result_is_normal(int e, int k)
        {
            foreach (double m in new[] { 1.0, 1.5, -1.25, Math.BitDecrement(2.0) })
            {
                AssertBits(m * PowerOfTwo(e + k), CovarianceKernels.ScaleB(m * PowerOfTwo(e), k), $"ScaleB({m:R}·2^{e}, {k})");
            }

            Assert.Equal(double.PositiveInfinity, CovarianceKernels.ScaleB(1.0, 1024));
            Assert.Equal(double.NegativeInfinity, CovarianceKernels.ScaleB(-1.5, 1100));
        }

        /// <summary>
        /// MaxAbs is the largest |Aᵢⱼ| over the p×p block only: a huge value in every pad column and after row p − 1 is ignored, and a planted
        /// negative entry larger in magnitude than all others is found.
        /// </summary>
        [Theory]
        [MemberData(nameof(Orders))]
        public void MaxAbs_covers_the_block_and_ignores_the_pad(int p)
        {
            int s = CovarianceKernels.Stride(p);
            var random = new Random(5800 + p);
            double[] a = RandomSpd(random, p, s);
            FillPads(a, p, s, 1e300);
            for (int k = p * s; k < a.Length; k++)
            {
                a[k] = -1e300;
            }

            AssertBits(ReferenceMaxAbs(a, p, s), CovarianceKernels.MaxAbs(a, s, p), $"p = {p}");

            int i = random.Next(p);
            int j = random.Next(p);
            double planted = -(2.0 * ReferenceMaxAbs(a, p, s)) - 1.0;
            a[(i * s) + j] = planted;
            a[(j * s) + i] = planted;
            AssertBits(-planted, CovarianceKernels.MaxAbs(a, s, p), $"p = {p}, planted at ({i},{j})");
        }

        /// <summary>
        /// Mirror makes every strictly lower entry (j, i) the bits of the upper entry (i, j) (a −0 included), and leaves the upper triangle,
        /// the diagonal, the pad columns and everything after row p − 1 as they were.
        /// </summary>
        [Theory]
        [MemberData(nameof(Orders))]
        public void Mirror_copies_the_upper_triangle_exactly(int p)
        {
            int s = CovarianceKernels.Stride(p);
            var random = new Random(5900 + p);
            double[] a = Garbage(p * s);
            for (int i = 0; i < p; i++)
            {
                for (int j = 0; j < s; j++)
                {
                    a[(i * s) + j] = j >= p ? PadMarker : j >= i ? random.NextDouble() - 0.5 : 1e9 + (i * s) + j;
                }
            }

            a[p - 1] = -0.0;
            double[] before = (double[])a.Clone();
            CovarianceKernels.Mirror(a, s, p);
            for (int i = 0; i < p; i++)
            {
                for (int j = 0; j < s; j++)
                {
                    double expected = j < i ? before[(j * s) + i] : before[(i * s) + j];
                    AssertBits(expected, a[(i * s) + j], $"p = {p}, A({i},{j})");
                }
            }

            AssertTailIntact(a, p * s);
        }

        /// <summary>Checks the kernel against the scalar scan (and the planted index when one is given) and returns the value.</summary>
        private static double CheckSmallest(double[] a, double[] t, double c, int p, int s, int plantedIndex)
        {
            double expected = double.PositiveInfinity;
            int smallestAt = -1;
            for (int i = 0; i < p; i++)
            {
                double d = Reference(-c, t[i] * t[i], a[(i * s) + i]);
                if (d < expected)
                {
                    expected = d;
                    smallestAt = i;
                }
            }

            int expectedIndex = expected > 0.0 ? -1 : smallestAt;

            if (plantedIndex >= 0)
            {
                Assert.Equal(plantedIndex, smallestAt);
            }

            double value = CovarianceKernels.SmallestDowndatedDiagonal(a, s, p, t, c, out int index);
            Assert.Equal(expectedIndex, index);
            AssertBits(expected, value, $"p = {p}, smallest at {index}");
            if (s == 4)
            {
                // The inlined variant of the small path gives the same value and index.
                double four = CovarianceKernels.SmallestDowndatedDiagonalFour(a, p, t, c, out int indexFour);
                Assert.Equal(expectedIndex, indexFour);
                AssertBits(expected, four, $"p = {p}, four-wide variant");
            }

            double[] downdated = (double[])a.Clone();
            CovarianceKernels.RankOneDowndate(downdated, s, p, t, c);
            AssertBits(value, downdated[(smallestAt * s) + smallestAt], $"p = {p}, downdated diagonal {smallestAt}");
            return value;
        }

        /// <summary>fl(a·b + c) as the kernels of the path in use compute it: fused on the vector path, product then sum otherwise.</summary>
        private static double Reference(double a, double b, double c)
        {
#if NET
            return CovarianceKernels.IsVectorized ? Math.FusedMultiplyAdd(a, b, c) : (a * b) + c;
#else
            return (a * b) + c;
#endif
        }

        private static double ReferenceMaxAbs(double[] a, int p, int s)
        {
            double m = 0.0;
            for (int i = 0; i < p; i++)
            {
                for (int j = 0; j < p; j++)
                {
                    double value = Math.Abs(a[(i * s) + j]);
                    if (value > m)
                    {
                        m = value;
                    }
                }
            }

            return m;
        }

        /// <summary>2^k by repeated exact doubling or halving (exact for k = −1074 … 1023).</summary>
        private static double PowerOfTwo(int k)
        {
            double f = 1.0;
            for (; k > 0; k--)
            {
                f *= 2.0;
            }

            for (; k < 0; k++)
            {
                f *= 0.5;
            }

            return f;
        }

        /// <summary>B·Bᵀ + p·I with B uniform in [−½, ½), computed on the upper triangle and written to both, so bitwise symmetric; zero pads and a sentinel tail.</summary>
        private static double[] RandomSpd(Random random, int p, int s)
        {
            var b = new double[p * p];
            for (int k = 0; k < b.Length; k++)
            {
                b[k] = random.NextDouble() - 0.5;
            }

            var a = new double[(p * s) + Tail];
            for (int i = 0; i < p; i++)
            {
                for (int j = i; j < p; j++)
                {
                    double sum = i == j ? p : 0.0;
                    for (int k = 0; k < p; k++)
                    {
                        sum += b[(i * p) + k] * b[(j * p) + k];
                    }

                    a[(i * s) + j] = sum;
                    a[(j * s) + i] = sum;
                }
            }

            for (int k = p * s; k < a.Length; k++)
            {
                a[k] = Sentinel;
            }

            return a;
        }

        /// <summary>A vector of length s, uniform in [−1, 1) over the first p entries, zero pads.</summary>
        private static double[] RandomVector(Random random, int p, int s)
        {
            var v = new double[s];
            for (int i = 0; i < p; i++)
            {
                v[i] = (2.0 * random.NextDouble()) - 1.0;
            }

            return v;
        }

        /// <summary>tᵢ = √Aᵢᵢ·U(−1, 1): products tᵢtⱼ of the size of the entries, so the downdate cancels and its rounding matters.</summary>
        private static double[] RandomDowndate(Random random, double[] a, int p, int s)
        {
            double[] t = RandomVector(random, p, s);
            for (int i = 0; i < p; i++)
            {
                t[i] *= Math.Sqrt(a[(i * s) + i]);
            }

            return t;
        }

        /// <summary>tᵢ = ½·√Aᵢᵢ·U(−1, 1), so every new diagonal Aᵢᵢ − tᵢ² is at least ¾·Aᵢᵢ.</summary>
        private static double[] SmallDowndate(Random random, double[] a, int p, int s)
        {
            double[] t = RandomDowndate(random, a, p, s);
            for (int i = 0; i < p; i++)
            {
                t[i] *= 0.5;
            }

            return t;
        }

        /// <summary>A NaN-filled array of n used entries (so every entry a kernel must write is seen written) and a sentinel tail.</summary>
        private static double[] Garbage(int n)
        {
            var u = new double[n + Tail];
            for (int k = 0; k < u.Length; k++)
            {
                u[k] = k < n ? double.NaN : Sentinel;
            }

            return u;
        }

        private static void FillPads(double[] a, int p, int s, double value)
        {
            for (int i = 0; i < p; i++)
            {
                for (int j = p; j < s; j++)
                {
                    a[(i * s) + j] = value;
                }
            }
        }

        private static void AssertTailIntact(double[] a, int used)
        {
            Assert.Equal(used + Tail, a.Length);
            for (int k = used; k < a.Length; k++)
            {
                AssertBits(Sentinel, a[k], $"entry {k} after the {used} used");
            }
        }

        private static void AssertBitwiseSymmetric(double[] a, int p, int s, string what)
        {
            for (int i = 0; i < p; i++)
            {
                for (int j = i + 1; j < p; j++)
                {
                    AssertBits(a[(i * s) + j], a[(j * s) + i], $"{what}: A({j},{i}) against A({i},{j})");
                }
            }
        }

        private static long Bits(double x) => BitConverter.DoubleToInt64Bits(x);

        private static void AssertBits(double expected, double actual, string where) =>
            Assert.True(Bits(expected) == Bits(actual), $"{where}: {actual:R} (0x{Bits(actual):X16}), expected {expected:R} (0x{Bits(expected):X16})");
    }
}
