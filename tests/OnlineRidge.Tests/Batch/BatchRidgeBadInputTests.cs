using System;
using System.Globalization;
using System.Linq;
using Xunit;

namespace OnlineRidge.Tests.Batch
{
    /// <summary>
    /// Caller mistakes (DESIGN.md, failures tier 1): every one throws <see cref="ArgumentException"/> (or its
    /// <see cref="ArgumentOutOfRangeException"/> subclass) whose ParamName names the parameter and whose message contains the offending value.
    /// </summary>
    public class BatchRidgeBadInputTests
    {
        private const int N = 6;
        private const int P = 2;

        private static double[] GoodX() => new[] { 1.0, 0.5, 2.0, -1.0, 3.0, 0.25, 4.0, 2.0, 5.0, -0.5, 6.0, 1.5 };

        private static double[] GoodY() => new[] { 1.0, 2.0, 2.5, 4.5, 4.0, 6.5 };

        private static string Text(double v) => v.ToString("R", CultureInfo.InvariantCulture);

        private static void AssertRejected(Action call, string paramName, params string[] fragments)
        {
            ArgumentException e = Assert.ThrowsAny<ArgumentException>(call);
            Assert.Equal(paramName, e.ParamName);
            foreach (string fragment in fragments)
            {
                Assert.Contains(fragment, e.Message, StringComparison.Ordinal);
            }
        }

        private static void Fit(double[] x, double[] y, RidgeSettings? settings = null, double[]? weights = null, int rows = N, int columns = P) =>
            BatchRidge.Fit(new MatrixView(x, rows, columns), y, settings, weights ?? Array.Empty<double>());

        [Fact]
        public void ValidProblemFits()
        {
            // The baseline every case below spoils in one place.
            RidgeFit fit = BatchRidge.Fit(new MatrixView(GoodX(), N, P), GoodY(), new RidgeSettings(), Enumerable.Repeat(1.0, N).ToArray());
            Assert.Equal(P, fit.ParameterCount);
        }

        [Theory]
        [InlineData(double.NaN)]
        [InlineData(double.PositiveInfinity)]
        [InlineData(double.NegativeInfinity)]
        public void NonFiniteRegressorIsRejected(double bad)
        {
            double[] x = GoodX();
            x[(3 * P) + 1] = bad;
            AssertRejected(() => Fit(x, GoodY()), "x", Text(bad), "[3, 1]");
        }

        [Theory]
        [InlineData(double.NaN)]
        [InlineData(double.PositiveInfinity)]
        [InlineData(double.NegativeInfinity)]
        public void NonFiniteOutputIsRejected(double bad)
        {
            double[] y = GoodY();
            y[4] = bad;
            AssertRejected(() => Fit(GoodX(), y), "y", Text(bad), "[4]");
        }

        [Theory]
        [InlineData(double.NaN)]
        [InlineData(double.PositiveInfinity)]
        [InlineData(double.NegativeInfinity)]
        [InlineData(-0.5)]
        [InlineData(-double.Epsilon)]
        public void InvalidWeightIsRejected(double bad)
        {
            double[] w = Enumerable.Repeat(1.0, N).ToArray();
            w[2] = bad;
            AssertRejected(() => Fit(GoodX(), GoodY(), weights: w), "weights", Text(bad), "[2]");
        }

        [Fact]
        public void AllZeroWeightsAreRejected()
        {
            AssertRejected(() => Fit(GoodX(), GoodY(), weights: new double[N]), "weights", "0");
        }

        [Theory]
        [InlineData(N - 1)]
        [InlineData(N + 1)]
        public void OutputOfWrongLengthIsRejected(int length)
        {
            AssertRejected(() => Fit(GoodX(), new double[length]), "y", length.ToString(CultureInfo.InvariantCulture), N.ToString(CultureInfo.InvariantCulture));
        }

        [Theory]
        [InlineData(N - 1)]
        [InlineData(N + 1)]
        public void WeightsOfWrongLengthAreRejected(int length)
        {
            AssertRejected(() => Fit(GoodX(), GoodY(), weights: Enumerable.Repeat(1.0, length).ToArray()), "weights", length.ToString(CultureInfo.InvariantCulture));
        }

        [Theory]
        [InlineData(1)]
        [InlineData(3)]
        public void PriorOfWrongLengthIsRejected(int length)
        {
            var settings = new RidgeSettings { Penalty = 1.0, Prior = new double[length] };
            AssertRejected(() => Fit(GoodX(), GoodY(), settings), "settings", "Prior", length.ToString(CultureInfo.InvariantCulture));
        }

        [Fact]
        public void NonFinitePriorIsRejected()
        {
            AssertRejected(() => _ = new RidgeSettings { Prior = new[] { 0.0, double.NaN } }, "Prior", "NaN", "[1]");
        }

        [Fact]
        public void RaggedDataAreRejected()
        {
            // Row-major storage whose length is not rows × columns (one value missing).
            AssertRejected(() => _ = new MatrixView(GoodX().Take((N * P) - 1).ToArray(), N, P), "rowMajor", ((N * P) - 1).ToString(CultureInfo.InvariantCulture));
        }

        [Fact]
        public void EmptyDataAreRejected()
        {
            AssertRejected(() => BatchRidge.Fit(new MatrixView(Array.Empty<double>(), 0, P), Array.Empty<double>()), "x", "0");
            AssertRejected(() => BatchRidge.Fit(new double[0, P], Array.Empty<double>()), "x", "0");
            AssertRejected(() => BatchRidge.Fit(new double[N, 0], GoodY()), "x", "0");
        }

        [Fact]
        public void NullArraysAreRejected()
        {
            Assert.Equal("x", Assert.Throws<ArgumentNullException>(() => BatchRidge.Fit(null!, GoodY())).ParamName);
            Assert.Equal("y", Assert.Throws<ArgumentNullException>(() => BatchRidge.Fit(new double[N, P], null!)).ParamName);
        }

        [Theory]
        [InlineData(-1.0)]
        [InlineData(-1e-300)]
        [InlineData(double.NaN)]
        [InlineData(double.PositiveInfinity)]
        [InlineData(double.NegativeInfinity)]
        public void InvalidPenaltyIsRejected(double bad)
        {
            AssertRejected(() => _ = new RidgeSettings { Penalty = bad }, "Penalty", Text(bad));
        }

        [Theory]
        [InlineData(0.0)]
        [InlineData(-0.5)]
        [InlineData(1.0000000000000002)]
        [InlineData(2.0)]
        [InlineData(double.NaN)]
        [InlineData(double.PositiveInfinity)]
        public void InvalidForgettingFactorIsRejected(double bad)
        {
            AssertRejected(() => _ = new RidgeSettings { ForgettingFactor = bad }, "ForgettingFactor", Text(bad));
        }

        [Theory]
        [InlineData(-1)]
        [InlineData(11)]
        [InlineData(int.MinValue)]
        public void RefinementStepsOutOfRangeAreRejected(int bad)
        {
            AssertRejected(() => _ = new RidgeSettings { RefinementSteps = bad }, "RefinementSteps", bad.ToString(CultureInfo.InvariantCulture));
        }

        [Theory]
        [InlineData(0.999)]
        [InlineData(0.0)]
        [InlineData(-5.0)]
        [InlineData(double.NaN)]
        public void CholeskyConditionLimitBelowOneIsRejected(double bad)
        {
            AssertRejected(() => _ = new RidgeSettings { CholeskyConditionLimit = bad }, "CholeskyConditionLimit", Text(bad));
        }

        [Theory]
        [InlineData(-1e-3)]
        [InlineData(1.0)]
        [InlineData(1.5)]
        [InlineData(double.NaN)]
        [InlineData(double.PositiveInfinity)]
        public void RankToleranceOutsideUnitIntervalIsRejected(double bad)
        {
            AssertRejected(() => _ = new RidgeSettings { RankTolerance = bad }, "RankTolerance", Text(bad));
        }

        [Fact]
        public void UnknownSolverIsRejected()
        {
            AssertRejected(() => _ = new RidgeSettings { Solver = (RidgeSolver)7 }, "Solver", "7");
        }

        [Fact]
        public void BoundarySettingsAreAccepted()
        {
            // The closed ends of the documented ranges must stay open to callers.
            var s = new RidgeSettings { Penalty = 0.0, ForgettingFactor = 1.0, RefinementSteps = 10, CholeskyConditionLimit = 1.0, RankTolerance = 0.0 };
            Assert.Equal(10, s.RefinementSteps);
            Assert.Equal(0, new RidgeSettings { RefinementSteps = 0 }.RefinementSteps);
            Assert.Equal(double.Epsilon, new RidgeSettings { ForgettingFactor = double.Epsilon }.ForgettingFactor);
        }

        /// <summary>
        /// Fewer rows of positive weight than parameters and no penalty: the problem has no unique solution. Cholesky, QR and Auto reject
        /// it as a caller mistake naming x and the counts; the SVD solver is documented to return the minimum-norm solution instead
        /// (checked against MathNet's pseudo-inverse in BatchRidgeBreakdownTests).
        /// </summary>
        [Theory]
        [InlineData(RidgeSolver.Cholesky)]
        [InlineData(RidgeSolver.Qr)]
        [InlineData(RidgeSolver.Auto)]
        public void TooFewSamplesWithoutPenaltyAreRejected(RidgeSolver solver)
        {
            // 3 rows, 4 regressors plus intercept: 5 parameters.
            double[] x = Enumerable.Range(0, 12).Select(k => Math.Sin(k + 1.0)).ToArray();
            double[] y = { 1.0, 2.0, 3.0 };
            AssertRejected(() => BatchRidge.Fit(new MatrixView(x, 3, 4), y, new RidgeSettings { Solver = solver }), "x", "3", "5");

            // Rows of zero weight do not count: 4 rows, one of weight 0, 4 parameters without intercept.
            double[] x4 = Enumerable.Range(0, 16).Select(k => Math.Cos(k + 1.0)).ToArray();
            AssertRejected(
                () => BatchRidge.Fit(new MatrixView(x4, 4, 4), new[] { 1.0, 2.0, 3.0, 4.0 }, new RidgeSettings { Solver = solver, FitIntercept = false }, new[] { 1.0, 0.0, 1.0, 1.0 }),
                "x", "3", "4");

            // With a penalty the same data are fine.
            RidgeFit fit = BatchRidge.Fit(new MatrixView(x, 3, 4), y, new RidgeSettings { Solver = solver, Penalty = 0.1 });
            Assert.All(fit.Coefficients, c => Assert.True(double.IsFinite(c)));
        }

        [Fact]
        public void PredictRejectsWrongLengthAndNonFiniteInput()
        {
            RidgeFit fit = BatchRidge.Fit(new MatrixView(GoodX(), N, P), GoodY());
            AssertRejected(() => fit.Predict(new double[3]), "x", "3");
            AssertRejected(() => fit.Predict(new[] { 1.0, double.NaN }), "x", "NaN");
        }
    }
}
