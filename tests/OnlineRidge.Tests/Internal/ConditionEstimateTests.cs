using System;
using System.Linq;
using MathNet.Numerics.LinearAlgebra;
using OnlineRidge.Internal;
using Xunit;

namespace OnlineRidge.Tests.Internal
{
    /// <summary>
    /// <see cref="Triangular.ConditionEstimate"/> against the singular values of MathNet.Numerics' SVD (an outside reference) for triangular
    /// factors with designed spectra: R = the triangular factor of U·diag(σ)·Vᵀ with random orthogonal U, V (MathNet QR of Gaussian matrices),
    /// so R has exactly the singular values σ up to rounding. Spectra: geometric spread (well separated), a clustered top, a clustered
    /// bottom, all singular values within 1% (near a multiple of the identity), two clusters, and evenly spaced values (the slowest case for
    /// Krylov methods, whose extreme eigenvalues have the smallest relative gaps).
    /// Theorems checked: Ritz values of a symmetric matrix lie inside its spectrum (Cauchy interlacing; in floating point up to a small
    /// multiple of ε‖A‖, Paige 1980), so the estimate is at most cond(R) up to rounding (factor 1 + 1e-9); when the Lanczos method runs the
    /// whole Krylov space (n ≤ 24) the largest Ritz value is the largest eigenvalue, asserted to 1e-6 relative; above that the estimate is
    /// asserted at no less than 0.9·cond(R), the bound the recursive forms' property tests also use. Orders 1…40, then 48, 64, 96 and 130.
    /// </summary>
    public class ConditionEstimateTests
    {
        private readonly ITestOutputHelper output;

        public ConditionEstimateTests(ITestOutputHelper output) => this.output = output;

        public static TheoryData<string> Spectra() => new TheoryData<string> { "geometric", "clusteredTop", "clusteredBottom", "nearIdentity", "twoClusters", "evenlySpaced" };

        private static readonly int[] Orders = Enumerable.Range(1, 40).Concat(new[] { 48, 64, 96, 130 }).ToArray();

        [Theory]
        [MemberData(nameof(Spectra))]
        public void Estimate_is_a_lower_bound_within_ten_percent_of_the_svd_condition(string spectrum)
        {
            var rng = new Random(20261202);
            double worst = double.PositiveInfinity;
            double worstFull = double.PositiveInfinity;
            foreach (int n in Orders)
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
                    double estimate = Triangular.ConditionEstimate(packed, n, n, new double[Triangular.ConditionWorkLength(n)]);
                    Assert.True(estimate <= exact * (1.0 + 1e-9), $"{spectrum} n={n}: estimate {estimate:R} above the SVD condition {exact:R}");
                    Assert.True(estimate >= 0.9 * exact, $"{spectrum} n={n}: estimate {estimate:R} below 0.9 × the SVD condition {exact:R}");
                    if (n <= Triangular.ConditionSteps)
                    {
                        Assert.True(estimate >= exact * (1.0 - 1e-6), $"{spectrum} n={n}: full Krylov space, estimate {estimate:R} not the SVD condition {exact:R}");
                        worstFull = Math.Min(worstFull, estimate / exact);
                    }

                    worst = Math.Min(worst, estimate / exact);
                }
            }

            output.WriteLine($"{spectrum}: smallest estimate / SVD condition, 5 trials each: n ≤ {Triangular.ConditionSteps}: {worstFull:F9}; all orders to 130: {worst:F4}");
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
                    "evenlySpaced" => 1.0 - (0.999 * t),
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
