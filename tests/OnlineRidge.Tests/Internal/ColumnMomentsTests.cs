using System;
using System.Linq;
using OnlineRidge.Internal;
using Xunit;

namespace OnlineRidge.Tests.Internal
{
    /// <summary>
    /// The row-pass column statistics against the plain column-by-column loops written here (two-pass weighted mean; scaled weighted root
    /// mean square). Both add the same terms in the same order without fused multiply-adds, so the results must agree bit for bit, for
    /// every width from 1 to 30 (every vector body and tail).
    /// </summary>
    public class ColumnMomentsTests
    {
        public static TheoryData<int> Widths() => new(Enumerable.Range(1, 30));

        [Theory]
        [MemberData(nameof(Widths))]
        public void RowPassesGiveTheBitsOfTheColumnLoops(int p)
        {
            const int N = 57;
            var rng = new Random(p);
            var x = new double[N * p];
            var a = new double[N];
            for (int i = 0; i < N; i++)
            {
                a[i] = i % 5 == 2 ? 0.0 : rng.NextDouble() * 3.0;
                for (int j = 0; j < p; j++)
                {
                    x[(i * p) + j] = j % 7 == 3 ? 4.25 : (Math.Pow(10.0, (j % 5) - 2) * (rng.NextDouble() - 0.3)) + (1e3 * j);
                }
            }

            double w = a.Sum();
            var mean = new double[p];
            ColumnMoments.WeightedMeans(x, N, p, a, w, mean);
            var spread = new double[p];
            ColumnMoments.WeightedSpreads(x, N, p, a, mean, w, spread);
            var spreadAtZero = new double[p];
            ColumnMoments.WeightedSpreads(x, N, p, a, new double[p], w, spreadAtZero);
            for (int j = 0; j < p; j++)
            {
                double m = 0.0;
                for (int i = 0; i < N; i++)
                {
                    m += a[i] * x[(i * p) + j];
                }

                m /= w;
                double c = 0.0;
                for (int i = 0; i < N; i++)
                {
                    c += a[i] * (x[(i * p) + j] - m);
                }

                double expectedMean = m + (c / w);
                Assert.Equal(expectedMean, mean[j]);
                Assert.Equal(ReferenceSpread(x, a, N, p, j, expectedMean, w), spread[j]);
                Assert.Equal(ReferenceSpread(x, a, N, p, j, 0.0, w), spreadAtZero[j]);
            }
        }

        private static double ReferenceSpread(double[] x, double[] a, int n, int p, int j, double m, double w)
        {
            double largest = 0.0;
            for (int i = 0; i < n; i++)
            {
                if (a[i] > 0.0)
                {
                    largest = Math.Max(largest, Math.Abs(x[(i * p) + j] - m));
                }
            }

            if (largest == 0.0)
            {
                return 0.0;
            }

            double s = 0.0;
            for (int i = 0; i < n; i++)
            {
                if (a[i] > 0.0)
                {
                    double d = (x[(i * p) + j] - m) / largest;
                    s += a[i] * d * d;
                }
            }

            return largest * Math.Sqrt(s / w);
        }
    }
}
