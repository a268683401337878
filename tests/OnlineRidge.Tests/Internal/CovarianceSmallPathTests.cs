using System;
using OnlineRidge.Internal;
using Xunit;

namespace OnlineRidge.Tests.Internal
{
    /// <summary>
    /// The fixed-size projection of the covariance form for p ≤ 4 (<see cref="CovarianceKernels.ProjectSmall"/>) against the general
    /// kernels and plain scalar loops written here: its downdate is bit for bit <see cref="CovarianceKernels.RankOneDowndate"/>, its product
    /// and xᵀu agree with the scalar sums to rounding, the zero rows and pads stay zero, and without a downdate the matrix is not touched.
    /// </summary>
    public class CovarianceSmallPathTests
    {
        private const double Eps = 2.220446049250313e-16;

        public static TheoryData<int, bool> Cases()
        {
            var data = new TheoryData<int, bool>();
            for (int p = 1; p <= 4; p++)
            {
                data.Add(p, true);
                data.Add(p, false);
            }

            return data;
        }

        [Theory]
        [MemberData(nameof(Cases))]
        public void Small_projection_matches_the_general_kernels_and_scalar_sums(int p, bool downdate)
        {
            if (!CovarianceKernels.IsVectorized)
            {
                // The portable build never takes the fixed-size path: its stride is p, and the estimator selects the path only for stride 4
                // on the vector build.
                Assert.Equal(p, CovarianceKernels.Stride(p));
                return;
            }

            Assert.Equal(4, CovarianceKernels.Stride(p));
            for (int trial = 0; trial < 50; trial++)
            {
                var random = new Random((1000 * p) + trial + (downdate ? 500 : 0));
                var a = new double[16];
                var b = new double[p * p];
                for (int i = 0; i < b.Length; i++)
                {
                    b[i] = random.NextDouble() - 0.5;
                }

                // A = B·Bᵀ + p·I on the leading p×p block, written from the upper triangle so that it is bitwise symmetric.
                for (int i = 0; i < p; i++)
                {
                    for (int j = i; j < p; j++)
                    {
                        double v = i == j ? p : 0.0;
                        for (int k = 0; k < p; k++)
                        {
                            v += b[(i * p) + k] * b[(j * p) + k];
                        }

                        a[(i * 4) + j] = v;
                        a[(j * 4) + i] = v;
                    }
                }

                var t = new double[4];
                double c = 0.5 + random.NextDouble();
                var x = new double[p];
                for (int i = 0; i < p; i++)
                {
                    t[i] = 0.3 * (random.NextDouble() - 0.5);
                    x[i] = (2.0 * random.NextDouble()) - 1.0;
                }

                var expected = (double[])a.Clone();
                if (downdate)
                {
                    CovarianceKernels.RankOneDowndate(expected, 4, 4, t, c);
                }

                var u = new double[4];
                double xu = CovarianceKernels.ProjectSmall(a, p, downdate, t, c, x, u);
                for (int i = 0; i < 16; i++)
                {
                    Assert.Equal(BitConverter.DoubleToInt64Bits(expected[i]), BitConverter.DoubleToInt64Bits(a[i]));
                }

                double quadratic = 0.0;
                double quadraticScale = 0.0;
                for (int i = 0; i < 4; i++)
                {
                    double ui = 0.0;
                    double scale = 0.0;
                    for (int j = 0; j < p; j++)
                    {
                        ui += x[j] * expected[(j * 4) + i];
                        scale += Math.Abs(x[j] * expected[(j * 4) + i]);
                    }

                    if (i >= p)
                    {
                        Assert.Equal(0.0, u[i]);
                        continue;
                    }

                    Assert.True(Math.Abs(u[i] - ui) <= 4.0 * Eps * scale, $"u[{i}] = {u[i]:R}, expected {ui:R}");
                    quadratic += x[i] * ui;
                    quadraticScale += Math.Abs(x[i]) * scale;
                }

                Assert.True(Math.Abs(xu - quadratic) <= 8.0 * Eps * quadraticScale, $"x'u = {xu:R}, expected {quadratic:R}");
            }
        }
    }
}
