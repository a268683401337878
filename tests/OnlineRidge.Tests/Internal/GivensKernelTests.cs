using System;
using System.Collections.Generic;
using OnlineRidge.Internal;
using Xunit;

namespace OnlineRidge.Tests.Internal
{
    /// <summary>
    /// The Givens kernels against an independent textbook implementation written here (γ = a/r, σ = t/r, r from the runtime's
    /// <see cref="double.Hypot(double, double)"/>, every entry of the row from γ and σ), for every order c from 1 to 17 — past twice the
    /// widest vector the kernels use (4 doubles), so that every mix of full vectors, 2-wide and scalar tails runs — with and without
    /// forgetting, from the first column and from a later one, and at magnitudes from 2⁻¹⁰⁶⁰ to 2¹⁰⁰⁰ (so that both sides of every
    /// fast/careful switch of the kernels run: the direct square root, the scaled hypot, the early-pivot numerator and its fallback).
    /// </summary>
    public class GivensKernelTests
    {
        private const int MaxOrder = 17;
        private const double Eps = 2.220446049250313e-16;

        public static TheoryData<int> Orders()
        {
            var data = new TheoryData<int>();
            for (int c = 1; c <= MaxOrder; c++)
            {
                data.Add(c);
            }

            return data;
        }

        /// <summary>Power-of-two exponents of the input scale (exact scaling), from about 10⁻³⁰¹ to 10³⁰¹.</summary>
        public static IEnumerable<int> Exponents => new[] { 0, -1000, -540, -482, -470, 470, 482, 500, 1000 };

        [Theory]
        [MemberData(nameof(Orders))]
        public void ScaleAndRotateIn_matches_the_textbook_rotations_at_every_scale(int c)
        {
            foreach (double q in new[] { 1.0, Math.Sqrt(0.999), 0.5 })
            {
                foreach (int start in new[] { 0, c / 2 })
                {
                    foreach (int e in Exponents)
                    {
                        var random = new Random((1000 * c) + (10 * start) + e);
                        double[] t = RandomTriangle(random, c, e);
                        double[] u = RandomRow(random, c, start, e);
                        CheckAgainstReference(t, u, c, q, start, $"c={c} q={q} start={start} 2^{e}");
                    }
                }
            }
        }

        [Theory]
        [MemberData(nameof(Orders))]
        public void ScaleAndRotateIn_handles_mixed_magnitudes_zeros_and_an_empty_factor(int c)
        {
            foreach (double q in new[] { 1.0, Math.Sqrt(0.99) })
            {
                // (exponent of T, exponent of u): a tiny row into a normal factor and the reverse, both tiny (squares underflow), a row
                // whose products with the factor are subnormal (the early-pivot numerator must fall back), and huge against normal.
                foreach ((int et, int eu) in new[] { (0, -1000), (-1000, 0), (-1000, -1000), (0, -1060), (-530, -530), (500, 0), (0, 500), (1000, 1000) })
                {
                    var random = new Random((100 * c) + et + (3 * eu));
                    double[] t = RandomTriangle(random, c, et);
                    double[] u = RandomRow(random, c, 0, eu);
                    CheckAgainstReference(t, u, c, q, 0, $"c={c} q={q} T~2^{et} u~2^{eu}");
                }

                // A first pivot near 10⁻¹⁴⁵ (its square still normal) with everything else near 10⁻¹⁸¹: the products a·u of the early-pivot
                // numerator underflow although the rotated entries (and the norms of their columns) are normal, so only the textbook
                // fallback is accurate here.
                var tiny = new Random(31 * c);
                double[] tt = RandomTriangle(tiny, c, -600);
                double[] ut = RandomRow(tiny, c, 0, -600);
                tt[0] = Math.ScaleB(1.25, -480);
                ut[0] = Math.ScaleB(0.75, -480);
                CheckAgainstReference(tt, ut, c, q, 0, $"underflowing products c={c} q={q}");

                // The other end: a first pivot near 2⁴⁵⁰ (its square still in the safe range) with the rest of u near 2⁶⁰⁰, so that a·u₁ in
                // the early-pivot numerator overflows although the rotated entry γ·u₁ (about 2⁶⁰⁰) does not; the textbook form must take it,
                // and the next column hands over to the careful path with that entry.
                var huge = new Random(37 * c);
                double[] th = RandomTriangle(huge, c, 0);
                double[] uh = RandomRow(huge, c, 0, 600);
                th[0] = Math.ScaleB(1.25, 450);
                uh[0] = Math.ScaleB(0.75, 450);
                CheckAgainstReference(th, uh, c, q, 0, $"overflowing products c={c} q={q}");

                // An empty factor (every pivot a = 0), then one with a zero row in the middle and zeros scattered in u.
                var rng = new Random(7 * c);
                CheckAgainstReference(new double[c * c], RandomRow(rng, c, 0, 0), c, q, 0, $"empty c={c} q={q}");
                double[] tz = RandomTriangle(rng, c, 0);
                int mid = c / 2;
                for (int k = mid; k < c; k++)
                {
                    tz[(mid * c) + k] = 0.0;
                }

                double[] uz = RandomRow(rng, c, 0, 0);
                for (int k = 0; k < c; k += 3)
                {
                    uz[k] = 0.0;
                }

                CheckAgainstReference(tz, uz, c, q, 0, $"zeros c={c} q={q}");
            }
        }

        /// <summary>
        /// Column j is the first whose sum of squares underflows (rows and columns from j on near 2⁻⁶⁰⁰, the rest normal), for every j:
        /// the written-out chains of the small orders and the loop hand over to the careful path at each column, with the state of the
        /// columns before it.
        /// </summary>
        [Theory]
        [MemberData(nameof(Orders))]
        public void ScaleAndRotateIn_hands_over_to_the_careful_path_at_every_column(int c)
        {
            for (int j = 0; j < c; j++)
            {
                var random = new Random((50 * c) + j);
                double[] t = RandomTriangle(random, c, 0);
                double[] u = RandomRow(random, c, 0, 0);
                for (int k = j; k < c; k++)
                {
                    u[k] = Math.ScaleB(u[k], -600);
                    for (int i = 0; i <= k; i++)
                    {
                        t[(i * c) + k] = Math.ScaleB(t[(i * c) + k], -600);
                    }
                }

                CheckAgainstReference(t, u, c, Math.Sqrt(0.99), 0, $"c={c} careful from column {j}");
            }
        }

        [Fact]
        public void ScaleAndRotateIn_only_scales_rows_of_zero_entries_exactly()
        {
            const int c = 6;
            double q = Math.Sqrt(0.97);
            var random = new Random(5);
            double[] t = RandomTriangle(random, c, 0);
            double[] original = (double[])t.Clone();
            var u = new double[c];
            GivensKernels.ScaleAndRotateIn(t, c, q, u, 2);
            for (int i = 0; i < c * c; i++)
            {
                Assert.Equal(q * original[i], t[i]);
            }

            Assert.All(u, v => Assert.Equal(0.0, v));
        }

        /// <summary>
        /// A zero entry of u leaves its column's row scaled by q bit for bit (the written-out chains rotate it with γ = 1, σ = 0 instead
        /// of branching; the loop skips it), for every order and for a zero in the first and in the last column.
        /// </summary>
        [Theory]
        [MemberData(nameof(Orders))]
        public void A_zero_pivot_scales_its_row_exactly(int c)
        {
            double q = Math.Sqrt(0.995);
            var random = new Random(900 + c);
            double[] t = RandomTriangle(random, c, 0);
            double[] u = RandomRow(random, c, 0, 0);
            u[0] = 0.0;
            double[] expected = (double[])t.Clone();
            GivensKernels.RotateIn(t, c, q, u);
            for (int k = 0; k < c; k++)
            {
                Assert.Equal(q * expected[k], t[k]);
            }

            // An all-zero row: every column has a zero pivot.
            double[] t2 = RandomTriangle(random, c, 0);
            double[] before = (double[])t2.Clone();
            GivensKernels.RotateIn(t2, c, q, new double[c]);
            for (int i = 0; i < c * c; i++)
            {
                Assert.Equal(q * before[i], t2[i]);
            }
        }

        [Fact]
        public void The_range_tests_use_the_bit_patterns_of_their_bounds()
        {
            Assert.Equal(GivensKernels.SafeSquareLowBits, BitConverter.DoubleToInt64Bits(GivensKernels.SafeSquareLow));
            Assert.Equal(GivensKernels.SafeSquareHighBits, BitConverter.DoubleToInt64Bits(GivensKernels.SafeSquareHigh));
            Assert.Equal(GivensKernels.SafeProductLowBits, BitConverter.DoubleToInt64Bits(GivensKernels.SafeProductLow));
            Assert.Equal(GivensKernels.MaxValueBits, BitConverter.DoubleToInt64Bits(double.MaxValue));
        }

        [Fact]
        public void ScaleAndRotateIn_rejects_spans_that_do_not_fit()
        {
            Assert.Throws<ArgumentException>(() => GivensKernels.ScaleAndRotateIn(new double[8], 3, 1.0, new double[3], 0));
            Assert.Throws<ArgumentException>(() => GivensKernels.ScaleAndRotateIn(new double[9], 3, 1.0, new double[2], 0));
            Assert.Throws<ArgumentException>(() => GivensKernels.ScaleAndRotateIn(new double[9], 3, 1.0, new double[3], 4));
        }

        [Theory]
        [MemberData(nameof(Orders))]
        public void ScaleTriangle_scales_exactly_the_upper_triangle(int c)
        {
            var random = new Random(c);
            double[] t = RandomTriangle(random, c, 0);
            double[] original = (double[])t.Clone();
            GivensKernels.ScaleTriangle(t, c, 0.75);
            for (int i = 0; i < c * c; i++)
            {
                Assert.Equal(0.75 * original[i], t[i]);
            }
        }

        [Fact]
        public void Hypot_is_accurate_across_the_exponent_range()
        {
            var values = new List<double> { 0.0, double.Epsilon, 1e-320, 2.2250738585072014e-308 };
            for (int e = -1070; e <= 1020; e += 37)
            {
                values.Add(Math.ScaleB(1.37, e));
                values.Add(-Math.ScaleB(1.91, e));
            }

            values.Add(double.MaxValue / 2);
            foreach (double a in values)
            {
                foreach (double b in values)
                {
                    double expected = double.Hypot(a, b);
                    foreach (double actual in new[] { GivensKernels.Hypot(a, b), GivensKernels.ScaledHypot(a, b) })
                    {
                        // Subnormal results carry an absolute rounding of half the smallest subnormal.
                        Assert.True(Math.Abs(actual - expected) <= (3 * Eps * expected) + double.Epsilon, $"hypot({a:R}, {b:R}) = {actual:R}, expected {expected:R}");
                    }
                }
            }
        }

        /// <summary>
        /// Runs the kernel (both entry points from column 0) and the reference on copies and compares entrywise against the norm of each column of [q·T; u] (rotations keep it):
        /// |T − T_ref| ≤ 8(c + 1)ε·‖column‖; u must end exactly 0 from <paramref name="start"/> on, the diagonal ≥ 0 and the strict lower
        /// triangle exactly 0.
        /// </summary>
        private static void CheckAgainstReference(double[] t, double[] u, int c, double q, int start, string label)
        {
            double[] columnNorms = ColumnNorms(t, u, c, q);
            double[] tr = (double[])t.Clone();
            double[] ur = (double[])u.Clone();
            ReferenceRotateIn(tr, c, q, ur, start);
            Check((double[])t.Clone(), (double[])u.Clone(), (tk, uk) => GivensKernels.ScaleAndRotateIn(tk, c, q, uk, start), label);
            if (start == 0)
            {
                Check((double[])t.Clone(), (double[])u.Clone(), (tk, uk) => GivensKernels.RotateIn(tk, c, q, uk), label + " (update entry)");
            }

            void Check(double[] tk, double[] uk, Action<double[], double[]> kernel, string name)
            {
                kernel(tk, uk);
                CompareWithReference(tk, uk, tr, columnNorms, c, name);
            }
        }

        private static void CompareWithReference(double[] tk, double[] uk, double[] tr, double[] columnNorms, int c, string label)
        {
            for (int i = 0; i < c; i++)
            {
                for (int k = 0; k < c; k++)
                {
                    double actual = tk[(i * c) + k];
                    if (k < i)
                    {
                        Assert.True(actual == 0.0, $"{label}: T({i},{k}) = {actual:R} below the diagonal");
                        continue;
                    }

                    double expected = tr[(i * c) + k];
                    double tolerance = 8 * (c + 1) * Eps * columnNorms[k];
                    Assert.True(Math.Abs(actual - expected) <= tolerance, $"{label}: T({i},{k}) = {actual:R}, expected {expected:R} (tolerance {tolerance:R})");
                }

                Assert.True(tk[(i * c) + i] >= 0.0, $"{label}: negative diagonal {tk[(i * c) + i]:R} at {i}");
                Assert.True(uk[i] == 0.0, $"{label}: u({i}) = {uk[i]:R} not annihilated");
            }
        }

        /// <summary>The textbook algorithm, written independently of the kernel (MATH.md §3.2).</summary>
        private static void ReferenceRotateIn(double[] t, int c, double q, double[] u, int start)
        {
            for (int j = 0; j < c; j++)
            {
                int row = j * c;
                if (j < start || u[j] == 0.0)
                {
                    for (int k = j; k < c; k++)
                    {
                        t[row + k] *= q;
                    }

                    continue;
                }

                double a = q * t[row + j];
                double r = double.Hypot(a, u[j]);
                double gamma = a / r;
                double sigma = u[j] / r;
                t[row + j] = r;
                u[j] = 0.0;
                for (int k = j + 1; k < c; k++)
                {
                    double tk = q * t[row + k];
                    double uk = u[k];
                    t[row + k] = (gamma * tk) + (sigma * uk);
                    u[k] = (gamma * uk) - (sigma * tk);
                }
            }
        }

        private static double[] ColumnNorms(double[] t, double[] u, int c, double q)
        {
            var norms = new double[c];
            for (int k = 0; k < c; k++)
            {
                double norm = Math.Abs(u[k]);
                for (int i = 0; i <= k; i++)
                {
                    norm = double.Hypot(norm, q * t[(i * c) + k]);
                }

                norms[k] = norm;
            }

            return norms;
        }

        /// <summary>Upper triangle with diagonal in [0.5, 1.5]·2^e and off-diagonal entries in [−1, 1]·2^e; zeros below the diagonal.</summary>
        private static double[] RandomTriangle(Random random, int c, int exponent)
        {
            var t = new double[c * c];
            for (int i = 0; i < c; i++)
            {
                t[(i * c) + i] = Math.ScaleB(0.5 + random.NextDouble(), exponent);
                for (int k = i + 1; k < c; k++)
                {
                    t[(i * c) + k] = Math.ScaleB((2.0 * random.NextDouble()) - 1.0, exponent);
                }
            }

            return t;
        }

        /// <summary>A row with entries in [−1, 1]·2^e from <paramref name="start"/> on (each nonzero), zeros before.</summary>
        private static double[] RandomRow(Random random, int c, int start, int exponent)
        {
            var u = new double[c];
            for (int k = start; k < c; k++)
            {
                double v = (2.0 * random.NextDouble()) - 1.0;
                u[k] = Math.ScaleB(Math.Abs(v) < 0.05 ? 0.5 : v, exponent);
            }

            return u;
        }
    }
}
