using System;
using System.Linq;
using Xunit;

namespace OnlineRidge.Tests.Tuning
{
    /// <summary>Choosing the penalty: K-fold cross-validation against independent refits, fold layouts, and an empirical held-out check.</summary>
    public class PenaltySelectionTests
    {
        /// <summary>
        /// Forward chaining holds out block k and trains on blocks 0..k−1 only: the K-fold curve equals the weighted held-out error of
        /// independent batch refits on exactly those blocks (reference: BatchRidge per fold, computed here).
        /// </summary>
        [Theory]
        [InlineData(FoldLayout.ForwardChaining)]
        [InlineData(FoldLayout.Contiguous)]
        [InlineData(FoldLayout.Shuffled)]
        public void KFoldCurveEqualsIndependentRefitsOnEachFold(FoldLayout layout)
        {
            var (x, y, w, n, p) = RegularizationPathTests.Problem(5, 4, 90, collinear: true);
            double[] grid = { 1e-4, 1e-2, 1.0, 100.0 };
            const int K = 5;
            var choice = CrossValidation.KFold(new MatrixView(x, n, p), y, new RidgeSettings(), w, K, layout, seed: 11, penalties: grid);

            int[] fold = CrossValidation.AssignFolds(n, K, layout, 11);
            for (int g = 0; g < grid.Length; g++)
            {
                double err = 0.0;
                double held = 0.0;
                for (int k = 0; k < K; k++)
                {
                    if (layout == FoldLayout.ForwardChaining && k == 0)
                    {
                        continue;
                    }

                    var train = Enumerable.Range(0, n).Where(i => (layout == FoldLayout.ForwardChaining ? fold[i] < k : fold[i] != k) && w[i] > 0).ToArray();
                    var tx = train.SelectMany(i => x.Skip(i * p).Take(p)).ToArray();
                    var fit = BatchRidge.Fit(new MatrixView(tx, train.Length, p), train.Select(i => y[i]).ToArray(), new RidgeSettings { Penalty = grid[g] }, train.Select(i => w[i]).ToArray());
                    foreach (int i in Enumerable.Range(0, n).Where(i => fold[i] == k && w[i] > 0))
                    {
                        double e = y[i] - fit.Predict(x.AsSpan(i * p, p));
                        err += w[i] * e * e;
                        held += w[i];
                    }
                }

                Assert.Equal(err / held, choice.Values[g], 8);
            }

            Assert.Equal(PenaltyCriterion.KFold, choice.Criterion);
            Assert.Equal(grid, choice.Penalties);
        }

        [Fact]
        public void ForwardChainingBlocksAreContiguousAndOrderedInTime()
        {
            // With blocks ordered in time, "train on blocks before k" (checked against refits above) means training never sees the future.
            int n = 60;
            int[] fold = CrossValidation.AssignFolds(n, 4, FoldLayout.ForwardChaining, 0);
            for (int i = 1; i < n; i++)
            {
                Assert.True(fold[i] >= fold[i - 1], "blocks are contiguous and ordered in time");
            }

            Assert.Equal(0, fold[0]);
            Assert.Equal(3, fold[n - 1]);
        }

        [Fact]
        public void ShuffledFoldsAreReproducibleForASeedAndBalanced()
        {
            int[] a = CrossValidation.AssignFolds(103, 5, FoldLayout.Shuffled, 42);
            int[] b = CrossValidation.AssignFolds(103, 5, FoldLayout.Shuffled, 42);
            int[] c = CrossValidation.AssignFolds(103, 5, FoldLayout.Shuffled, 43);
            Assert.Equal(a, b);
            Assert.NotEqual(a, c);
            var sizes = Enumerable.Range(0, 5).Select(k => a.Count(f => f == k)).ToArray();
            Assert.True(sizes.Max() - sizes.Min() <= 1);
        }

        [Fact]
        public void InvalidFoldCountIsRejected()
        {
            var (x, y, _, n, p) = RegularizationPathTests.Problem(1, 3, 20, false);
            var ex = Assert.Throws<ArgumentOutOfRangeException>(() => CrossValidation.KFold(new MatrixView(x, n, p), y, folds: 1));
            Assert.Equal("folds", ex.ParamName);
            Assert.Throws<ArgumentOutOfRangeException>(() => CrossValidation.KFold(new MatrixView(x, n, p), y, folds: 21));
        }

        /// <summary>
        /// Empirical check, not a theorem: on an invented, noisy, strongly collinear design with known truth, the penalty chosen by GCV
        /// (and by leave-one-out and 5-fold CV) gives a lower error on fresh held-out samples than ordinary least squares (λ = 0).
        /// Ridge is expected to win here because the collinear directions carry little signal and much noise variance
        /// (Hoerl and Kennard 1970); a single seed could in principle go the other way, so 20 independent draws are averaged.
        /// </summary>
        [Fact]
        public void ChosenPenaltyBeatsOrdinaryLeastSquaresOnHeldOutDataOfACollinearDesign()
        {
            double olsError = 0.0;
            double gcvError = 0.0;
            double looError = 0.0;
            double cvError = 0.0;
            for (int rep = 0; rep < 20; rep++)
            {
                var (xTrain, yTrain) = CollinearScenario(1000 + rep, 40);
                var (xTest, yTest) = CollinearScenario(5000 + rep, 400);
                int p = 6;
                var view = new MatrixView(xTrain, yTrain.Length, p);
                var path = RegularizationPath.Compute(view, yTrain);
                var ols = BatchRidge.Fit(view, yTrain);
                var byGcv = BatchRidge.Fit(view, yTrain, new RidgeSettings { Penalty = path.ChooseByGeneralizedCrossValidation().Penalty });
                var byLoo = BatchRidge.Fit(view, yTrain, new RidgeSettings { Penalty = path.ChooseByLeaveOneOut().Penalty });
                var byCv = BatchRidge.Fit(view, yTrain, new RidgeSettings { Penalty = CrossValidation.KFold(view, yTrain, folds: 5, layout: FoldLayout.Shuffled, seed: rep).Penalty });
                olsError += HeldOut(ols, xTest, yTest, p);
                gcvError += HeldOut(byGcv, xTest, yTest, p);
                looError += HeldOut(byLoo, xTest, yTest, p);
                cvError += HeldOut(byCv, xTest, yTest, p);
            }

            Assert.True(gcvError < olsError, $"GCV {gcvError / 20:E3} vs OLS {olsError / 20:E3}");
            Assert.True(looError < olsError, $"LOO {looError / 20:E3} vs OLS {olsError / 20:E3}");
            Assert.True(cvError < olsError, $"5-fold {cvError / 20:E3} vs OLS {olsError / 20:E3}");
        }

        /// <summary>Invented scenario: six sensor channels that all follow one underlying load, each with small independent deviations.</summary>
        private static (double[] X, double[] Y) CollinearScenario(int seed, int n)
        {
            var rng = new Random(seed);
            const int P = 6;
            double[] truth = { 1.0, 0.8, -0.5, 0.3, 0.0, 0.2 };
            var x = new double[n * P];
            var y = new double[n];
            for (int i = 0; i < n; i++)
            {
                double load = rng.NextDouble() * 10.0;
                double yi = 2.0;
                for (int j = 0; j < P; j++)
                {
                    double v = load + (0.05 * Gauss(rng));
                    x[(i * P) + j] = v;
                    yi += truth[j] * v;
                }

                y[i] = yi + Gauss(rng);
            }

            return (x, y);
        }

        private static double HeldOut(RidgeFit fit, double[] x, double[] y, int p) =>
            Enumerable.Range(0, y.Length).Average(i => Math.Pow(y[i] - fit.Predict(x.AsSpan(i * p, p)), 2));

        private static double Gauss(Random rng) => Math.Sqrt(-2.0 * Math.Log(1.0 - rng.NextDouble())) * Math.Cos(2.0 * Math.PI * rng.NextDouble());
    }
}
