using System;
using OnlineRidge.Internal;
using Xunit;

namespace OnlineRidge.Tests.Internal
{
    /// <summary>
    /// The recursive-form span kernels against plain scalar loops, for every order from 1 past twice the widest hardware vector (8 doubles),
    /// so that every mix of full vectors and scalar tails in the vectorized paths is exercised.
    /// </summary>
    public class RecursiveKernelTests
    {
        private const int MaxOrder = 17;

        public static TheoryData<int> Orders()
        {
            var data = new TheoryData<int>();
            for (int d = 1; d <= MaxOrder; d++)
            {
                data.Add(d);
            }

            return data;
        }

        [Theory]
        [MemberData(nameof(Orders))]
        public void SymmetricMultiply_matches_the_dense_product(int d)
        {
            var random = new Random(1000 + d);
            double[] full = RandomSymmetric(random, d);
            double[] packed = Pack(full, d);
            double[] x = RandomVector(random, d);
            var v = new double[d];
            RecursiveKernels.SymmetricMultiply(packed, d, x, v);
            for (int i = 0; i < d; i++)
            {
                double expected = 0.0;
                double scale = 0.0;
                for (int j = 0; j < d; j++)
                {
                    expected += full[(i * d) + j] * x[j];
                    scale += Math.Abs(full[(i * d) + j] * x[j]);
                }

                Assert.True(Math.Abs(v[i] - expected) <= 4 * d * 2.3e-16 * scale, $"row {i}: {v[i]} vs {expected}");
            }
        }

        [Theory]
        [MemberData(nameof(Orders))]
        public void CovarianceUpdate_matches_the_scalar_loop(int d)
        {
            foreach (double beta in new[] { 1.0, 0.97 })
            {
                var random = new Random(2000 + d);
                double[] packed = Pack(RandomSymmetric(random, d), d);
                double[] v = RandomVector(random, d);
                const double g = 0.01;
                var destination = new double[packed.Length];
                int code = RecursiveKernels.CovarianceUpdate(packed, destination, d, g, v, beta, out int failIndex, out _);
                Assert.Equal(0, code);
                Assert.Equal(-1, failIndex);
                int o = 0;
                for (int i = 0; i < d; i++)
                {
                    for (int j = i; j < d; j++)
                    {
                        double expected = (packed[o] - (g * v[i] * v[j])) / beta;
                        Assert.True(Math.Abs(destination[o] - expected) <= 4 * 2.3e-16 * (Math.Abs(packed[o]) + Math.Abs(g * v[i] * v[j])), $"({i},{j})");
                        o++;
                    }
                }
            }
        }

        [Theory]
        [MemberData(nameof(Orders))]
        public void CovarianceUpdate_reports_the_first_bad_row(int d)
        {
            var random = new Random(3000 + d);
            double[] packed = Pack(RandomSymmetric(random, d), d);
            double[] v = RandomVector(random, d);
            v[d - 1] = double.PositiveInfinity;
            var destination = new double[packed.Length];
            int code = RecursiveKernels.CovarianceUpdate(packed, destination, d, 0.01, v, 0.99, out int failIndex, out _);
            Assert.Equal(1, code);
            Assert.Equal(0, failIndex);

            // A diagonal driven negative in the last row only.
            v = RandomVector(random, d);
            double last = packed[packed.Length - 1];
            v[d - 1] = Math.Sqrt((2.0 * last) / 0.01);
            code = RecursiveKernels.CovarianceUpdate(packed, destination, d, 0.01, v, 1.0, out failIndex, out double failValue);
            Assert.Equal(2, code);
            Assert.Equal(d - 1, failIndex);
            Assert.True(failValue < 0.0);
        }

        [Theory]
        [MemberData(nameof(Orders))]
        public void ScaleAndRotateIn_matches_the_scalar_rotations(int c)
        {
            foreach (double q in new[] { 1.0, Math.Sqrt(0.99) })
            {
                var random = new Random(4000 + c);
                var t = new double[c * c];
                for (int i = 0; i < c; i++)
                {
                    t[(i * c) + i] = 1.0 + random.NextDouble();
                    for (int j = i + 1; j < c; j++)
                    {
                        t[(i * c) + j] = random.NextDouble() - 0.5;
                    }
                }

                double[] u = RandomVector(random, c);
                if (c > 2)
                {
                    u[1] = 0.0; // a column the kernel skips
                }

                double[] tr = (double[])t.Clone();
                double[] ur = (double[])u.Clone();
                GivensKernels.ScaleAndRotateIn(t, c, q, u, 0);
                for (int j = 0; j < c; j++)
                {
                    int row = j * c;
                    if (ur[j] == 0.0)
                    {
                        for (int k = j; k < c; k++)
                        {
                            tr[row + k] *= q;
                        }

                        continue;
                    }

                    double a = q * tr[row + j];
                    double r = Math.Sqrt((a * a) + (ur[j] * ur[j]));
                    double gamma = a / r;
                    double sigma = ur[j] / r;
                    tr[row + j] = r;
                    ur[j] = 0.0;
                    for (int k = j + 1; k < c; k++)
                    {
                        double tk = tr[row + k];
                        double uk = ur[k];
                        tr[row + k] = (gamma * q * tk) + (sigma * uk);
                        ur[k] = (gamma * uk) - (sigma * q * tk);
                    }
                }

                for (int i = 0; i < c; i++)
                {
                    for (int j = i; j < c; j++)
                    {
                        Assert.True(Math.Abs(t[(i * c) + j] - tr[(i * c) + j]) <= 1e-13, $"T({i},{j}) q={q}: {t[(i * c) + j]} vs {tr[(i * c) + j]}");
                    }

                    Assert.True(Math.Abs(u[i]) <= 1e-13, $"u({i}) = {u[i]}");
                }
            }
        }

        private static double[] RandomVector(Random random, int n)
        {
            var v = new double[n];
            for (int i = 0; i < n; i++)
            {
                v[i] = random.NextDouble() - 0.5;
            }

            return v;
        }

        private static double[] RandomSymmetric(Random random, int d)
        {
            var a = new double[d * d];
            for (int i = 0; i < d; i++)
            {
                a[(i * d) + i] = d + random.NextDouble();
                for (int j = i + 1; j < d; j++)
                {
                    double value = random.NextDouble() - 0.5;
                    a[(i * d) + j] = value;
                    a[(j * d) + i] = value;
                }
            }

            return a;
        }

        private static double[] Pack(double[] full, int d)
        {
            var packed = new double[RecursiveKernels.PackedLength(d)];
            int o = 0;
            for (int i = 0; i < d; i++)
            {
                for (int j = i; j < d; j++)
                {
                    packed[o++] = full[(i * d) + j];
                }
            }

            return packed;
        }
    }
}
