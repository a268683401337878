using System;
using MathNet.Numerics.LinearAlgebra;
using OnlineRidge.Internal;
using Xunit;

namespace OnlineRidge.Tests.Internal
{
    /// <summary>
    /// <see cref="Triangular.ConditionEstimate"/> against the singular values of MathNet.Numerics' SVD (an outside reference) for triangular
    /// factors with designed spectra: R = the triangular factor of U·diag(σ)·Vᵀ with random orthogonal U, V (MathNet QR of Gaussian matrices),
    /// so R has exactly the singular values σ up to rounding. Spectra: geometric spread (well separated), a clustered top, a clustered
    /// bottom, all singular values within 1% (near a multiple of the identity, where power iteration converges slowest), and two clusters.
    /// Theorem checked: power and inverse iteration on a positive semidefinite matrix give a lower bound of each extreme eigenvalue, so the
    /// estimate is at most cond(R) (up to rounding, factor 1 + 1e-9); and 30 steps keep it within the documented accuracy — here
    /// asserted at no less than 0.9·cond(R), the bound the recursive forms' property tests also use.
    /// </summary>
    public class ConditionEstimateTests
    {
        private readonly ITestOutputHelper output;

        public ConditionEstimateTests(ITestOutputHelper output) => this.output = output;

        public static TheoryData<string> Spectra() => new TheoryData<string> { "geometric", "clusteredTop", "clusteredBottom", "nearIdentity", "twoClusters" };

        [Theory]
        [MemberData(nameof(Spectra))]
        public void Estimate_is_a_lower_bound_within_ten_percent_of_the_svd_condition(string spectrum)
        {
            var rng = new Random(20261202);
            double worst = double.PositiveInfinity;
            for (int n = 1; n <= 40; n++)
            {
                for (int trial = 0; trial < 5; trial++)
                {
                    double[] sigma = Spectrum(spectrum, n, rng);
                    Matrix<double> a = RandomOrthogonal(n, rng) * Matrix<double>.Build.DiagonalOfDiagonalArray(sigma) * RandomOrthogonal(n, rng);
                    Matrix<double> r = a.QR().R;
                    var packed = new double[n * n];
                    for (int i = 0; i < n; i++)
                    {
                        for (int j = i; j < n; j++)
                        {
                            packed[(i * n) + j] = r[i, j];
                        }
                    }

                    double[] sv = r.Svd(false).S.ToArray();
                    double exact = sv[0] / sv[n - 1];
                    double estimate = Triangular.ConditionEstimate(packed, n, n, new double[2 * n]);
                    Assert.True(estimate <= exact * (1.0 + 1e-9), $"{spectrum} n={n}: estimate {estimate:R} above the SVD condition {exact:R}");
                    Assert.True(estimate >= 0.9 * exact, $"{spectrum} n={n}: estimate {estimate:R} below 0.9 × the SVD condition {exact:R}");
                    worst = Math.Min(worst, estimate / exact);
                }
            }

            output.WriteLine($"{spectrum}: smallest estimate / SVD condition over n = 1..40, 5 trials each: {worst:F4}");
        }

        private static double[] Spectrum(string kind, int n, Random rng)
        {
            var s = new double[n];
            for (int i = 0; i < n; i++)
            {
                double t = n == 1 ? 0.0 : (double)i / (n - 1);
                s[i] = kind switch
                {
                    "geometric" => Math.Pow(1e-6, t),
                    "clusteredTop" => i < n / 2 ? 1.0 - (0.01 * rng.NextDouble()) : Math.Pow(1e-4, t),
                    "clusteredBottom" => i < n / 2 ? Math.Pow(1e-4, t) : 1e-4 * (1.0 + (0.01 * rng.NextDouble())),
                    "nearIdentity" => 1.0 + (0.01 * rng.NextDouble()),
                    _ => i % 2 == 0 ? 1.0 + (0.05 * rng.NextDouble()) : 1e-3 * (1.0 + (0.05 * rng.NextDouble())),
                };
            }

            return s;
        }

        private static Matrix<double> RandomOrthogonal(int n, Random rng)
        {
            Matrix<double> g = Matrix<double>.Build.Dense(n, n, (i, j) => Gaussian(rng));
            return g.QR().Q;
        }

        private static double Gaussian(Random rng) =>
            Math.Sqrt(-2.0 * Math.Log(1.0 - rng.NextDouble())) * Math.Cos(2.0 * Math.PI * rng.NextDouble());
    }
}
