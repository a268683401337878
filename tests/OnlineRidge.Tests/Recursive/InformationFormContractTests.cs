using System;
using System.Linq;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Recursive
{
    /// <summary>
    /// Contract tests of <see cref="InformationFormEstimator"/>: caller mistakes (DESIGN.md failure tier 1), breakdown reporting (tier 2), the
    /// warm-up, and the allocation-free hot path.
    /// </summary>
    public class InformationFormContractTests
    {
        private static InformationFormEstimator Trained(bool intercept)
        {
            var est = new InformationFormEstimator(3, new RidgeSettings { Penalty = 0.5, ForgettingFactor = 0.9, FitIntercept = intercept }, PenaltyRegime.Constant, true);
            est.Update(new[] { 1.0, 2.0, 3.0 }, 4.0);
            est.Update(new[] { -1.0, 0.5, 2.0 }, 1.0, 2.0);
            est.Update(new[] { 0.3, -0.5, 1.0 }, -1.0, 0.7);
            return est;
        }

        private static (double[] Theta, double B0, double W, double N, long Count, double[] G2) Snapshot(InformationFormEstimator est)
        {
            var theta = new double[est.ParameterCount];
            double b0 = est.Solve(0.25, PenaltyRegime.Decaying, theta);
            int d = est.Settings.FitIntercept ? est.ParameterCount + 1 : est.ParameterCount;
            var g2 = new double[d * d];
            est.CopySquaredForgettingGramTo(g2);
            return (theta, b0, est.WeightSum, est.DiscountedCount, est.SampleCount, g2);
        }

        private static void AssertUnchanged((double[] Theta, double B0, double W, double N, long Count, double[] G2) before, InformationFormEstimator est)
        {
            var after = Snapshot(est);
            Assert.Equal(before.Theta, after.Theta);
            Assert.Equal(before.B0, after.B0);
            Assert.Equal(before.W, after.W);
            Assert.Equal(before.N, after.N);
            Assert.Equal(before.Count, after.Count);
            Assert.Equal(before.G2, after.G2);
        }

        public static TheoryData<double[], double, double, string> BadUpdates() => CovarianceFormContractTests.BadUpdates();

        /// <summary>Bad x, y or weight throws ArgumentException naming the parameter, before any change (solutions and statistics compared).</summary>
        [Theory]
        [MemberData(nameof(BadUpdates))]
        public void BadInputThrowsNamingTheParameterAndLeavesTheStateUnchanged(double[] x, double y, double weight, string parameter)
        {
            foreach (bool intercept in new[] { false, true })
            {
                var est = Trained(intercept);
                var before = Snapshot(est);
                Assert.Equal(parameter, Assert.ThrowsAny<ArgumentException>(() => est.Update(x, y, weight)).ParamName);
                Assert.Equal(parameter, Assert.ThrowsAny<ArgumentException>(() => est.TryUpdate(x, y, weight, out _)).ParamName);
                AssertUnchanged(before, est);
            }
        }

        [Fact]
        public void ConstructorRejectsUnsupportedSolverWrongPriorAndBadCount()
        {
            Assert.Equal("parameterCount", Assert.ThrowsAny<ArgumentException>(() => new InformationFormEstimator(0)).ParamName);
            Assert.Equal("settings", Assert.ThrowsAny<ArgumentException>(() => new InformationFormEstimator(2, new RidgeSettings { Solver = RidgeSolver.Qr })).ParamName);
            Assert.Equal("settings", Assert.ThrowsAny<ArgumentException>(() => new InformationFormEstimator(2, new RidgeSettings { Solver = RidgeSolver.Svd })).ParamName);
            Assert.Equal("settings", Assert.ThrowsAny<ArgumentException>(() => new InformationFormEstimator(2, new RidgeSettings { Prior = new[] { 1.0 } })).ParamName);
            Assert.Equal("regime", Assert.ThrowsAny<ArgumentException>(() => new InformationFormEstimator(2, null, (PenaltyRegime)5)).ParamName);
        }

        [Theory]
        [InlineData(0.0)]
        [InlineData(1.01)]
        [InlineData(double.NaN)]
        public void ForgettingFactorOutOfRangeIsRejectedBySettings(double beta)
        {
            Assert.Equal(nameof(RidgeSettings.ForgettingFactor), Assert.Throws<ArgumentOutOfRangeException>(() => new RidgeSettings { ForgettingFactor = beta }).ParamName);
        }

        [Fact]
        public void SolveRejectsBadPenaltyRegimeAndBuffer()
        {
            var est = Trained(true);
            var theta = new double[3];
            Assert.Equal("penaltyValue", Assert.ThrowsAny<ArgumentException>(() => est.Solve(-1.0, PenaltyRegime.Constant, theta)).ParamName);
            Assert.Equal("penaltyValue", Assert.ThrowsAny<ArgumentException>(() => est.Solve(double.NaN, PenaltyRegime.Constant, theta)).ParamName);
            Assert.Equal("penaltyRegime", Assert.ThrowsAny<ArgumentException>(() => est.Solve(1.0, (PenaltyRegime)3, theta)).ParamName);
            Assert.Equal("coefficients", Assert.ThrowsAny<ArgumentException>(() => est.Solve(1.0, PenaltyRegime.Constant, new double[2])).ParamName);
            Assert.Equal("destination", Assert.ThrowsAny<ArgumentException>(() => est.CopyParametersTo(new double[2])).ParamName);
            Assert.Equal("later", Assert.ThrowsAny<ArgumentException>(() => est.MergeFrom(new InformationFormEstimator(3, new RidgeSettings { ForgettingFactor = 0.8 }, PenaltyRegime.Constant, true))).ParamName);
            Assert.Throws<InvalidOperationException>(() => new InformationFormEstimator(2).CopySquaredForgettingGramTo(new double[9]));
        }

        /// <summary>Warm-up: before any sample of positive weight there is nothing to solve; the estimator reports RankDeficient (tier 2), not a made-up answer.</summary>
        [Fact]
        public void BeforeAnyPositiveWeightSolvingReportsRankDeficient()
        {
            var est = new InformationFormEstimator(2, new RidgeSettings { Penalty = 1.0 });
            est.Update(new[] { 1.0, 2.0 }, 3.0, 0.0);
            Assert.False(est.TrySolve(1.0, PenaltyRegime.Constant, new double[2], out _, out BreakdownInfo info));
            Assert.Equal(BreakdownKind.RankDeficient, info.Kind);
            var ex = Assert.Throws<RidgeBreakdownException>(() => est.CopyParametersTo(new double[2]));
            Assert.Equal(BreakdownKind.RankDeficient, ex.Info.Kind);
        }

        /// <summary>
        /// Tier 2 (MATH.md §1.2): with λ = 0 and collinear regressors H is singular; the Cholesky solve must report it (NotPositiveDefinite, or
        /// IllConditioned when rounding leaves a tiny positive pivot) and never add a hidden jitter.
        /// </summary>
        [Fact]
        public void SingularProblemIsReportedNotJittered()
        {
            var est = new InformationFormEstimator(2, new RidgeSettings { FitIntercept = false, Standardize = false });
            for (int i = 0; i < 10; i++)
            {
                est.Update(new[] { i, 2.0 * i }, i);
            }

            Assert.False(est.TrySolve(0.0, PenaltyRegime.Constant, new double[2], out _, out BreakdownInfo info));
            Assert.True(info.Kind is BreakdownKind.NotPositiveDefinite or BreakdownKind.IllConditioned, info.ToString());
            Assert.True(est.TrySolve(1e-3, PenaltyRegime.Constant, new double[2], out _, out _));
        }

        /// <summary>
        /// MATH.md §1.3 (λ = 0, rank deficiency): with two identical columns t, t and y = 2t the solutions are θ₁ + θ₂ = 2, and the one nearest
        /// the prior θ₀ = (3, −3) is (4, −2) — what the penalty path returns at λ = 0 (exact answer known by hand); the Cholesky solve reports instead.
        /// </summary>
        [Fact]
        public void PenaltyPathAtZeroPenaltyGivesTheSolutionNearestThePriorWhenRankDeficient()
        {
            var est = new InformationFormEstimator(2, new RidgeSettings { FitIntercept = false, Standardize = false, Prior = new[] { 3.0, -3.0 } });
            for (int i = 1; i <= 10; i++)
            {
                est.Update(new[] { 0.1 * i, 0.1 * i }, 0.2 * i);
            }

            var theta = new double[4];
            var b0 = new double[2];
            est.SolvePenaltyPath(new[] { 0.0, 1e-8 }, PenaltyRegime.Constant, theta, b0);
            Assert.Equal(4.0, theta[0], 1e-7);
            Assert.Equal(-2.0, theta[1], 1e-7);
            Assert.Equal(4.0, theta[2], 1e-6);
            Assert.Equal(-2.0, theta[3], 1e-6);
            Assert.Equal(0.0, b0[0]);
            Assert.False(est.TrySolve(0.0, PenaltyRegime.Constant, new double[2], out _, out _));
        }

        [Fact]
        public void PenaltyPathRejectsBadPenaltiesAndBuffers()
        {
            var est = Trained(true);
            Assert.Equal("penalties", Assert.ThrowsAny<ArgumentException>(() => est.SolvePenaltyPath(new[] { 1.0, -1.0 }, PenaltyRegime.Constant, new double[6], new double[2])).ParamName);
            Assert.Equal("penalties", Assert.ThrowsAny<ArgumentException>(() => est.SolvePenaltyPath(new[] { double.NaN }, PenaltyRegime.Constant, new double[3], new double[1])).ParamName);
            Assert.Equal("coefficients", Assert.ThrowsAny<ArgumentException>(() => est.SolvePenaltyPath(new[] { 1.0, 2.0 }, PenaltyRegime.Constant, new double[5], new double[2])).ParamName);
            Assert.Equal("intercepts", Assert.ThrowsAny<ArgumentException>(() => est.SolvePenaltyPath(new[] { 1.0, 2.0 }, PenaltyRegime.Constant, new double[6], new double[1])).ParamName);
            Assert.Equal("penaltyRegime", Assert.ThrowsAny<ArgumentException>(() => est.SolvePenaltyPath(new[] { 1.0 }, (PenaltyRegime)9, new double[3], new double[1])).ParamName);
        }

        /// <summary>Overflowing statistics are a tier-2 breakdown: reported, nothing changed.</summary>
        [Fact]
        public void OverflowingUpdateIsReportedAndLeavesTheStateUnchanged()
        {
            foreach (bool intercept in new[] { false, true })
            {
                var est = Trained(intercept);
                var before = Snapshot(est);
                Assert.False(est.TryUpdate(new[] { 1e200, 0.0, 0.0 }, 1.0, 1.0, out BreakdownInfo info));
                Assert.Equal(BreakdownKind.NonFinite, info.Kind);
                Assert.Throws<RidgeBreakdownException>(() => est.Update(new[] { 0.0, 0.0, 0.0 }, 1e200));
                AssertUnchanged(before, est);
            }
        }

        /// <summary>The cached solution behind CopyParametersTo/Intercept/Predict is the settings' penalty in the chosen regime, refreshed after every update.</summary>
        [Fact]
        public void CachedSolutionFollowsUpdatesAndRegime()
        {
            foreach (var regime in new[] { PenaltyRegime.Constant, PenaltyRegime.Decaying })
            {
                var est = new InformationFormEstimator(2, new RidgeSettings { Penalty = 2.0, ForgettingFactor = 0.8 }, regime);
                var rng = new Random(2);
                var x = new double[2];
                var cached = new double[2];
                var solved = new double[2];
                for (int i = 0; i < 20; i++)
                {
                    x[0] = rng.NextDouble();
                    x[1] = rng.NextDouble();
                    est.Update(x, x[0] - x[1] + rng.NextDouble());
                    est.CopyParametersTo(cached);
                    double b0 = est.Solve(2.0, regime, solved);
                    Assert.Equal(solved, cached);
                    Assert.Equal(b0, est.Intercept);
                    Assert.Equal(b0 + (solved[0] * x[0]) + (solved[1] * x[1]), est.Predict(x), 12);
                }
            }
        }

        /// <summary>
        /// Hot-path claim: 10⁵ updates (p = 16, and p = 4 where the update without intercept has its register path; with and without intercept,
        /// with G₂) and 10³ solves allocate nothing, counted after a warm-up of as many updates (AllocationCount).
        /// </summary>
        [Theory]
        [InlineData(false, false, 16)]
        [InlineData(true, false, 16)]
        [InlineData(true, true, 16)]
        [InlineData(false, false, 4)]
        public void UpdatesAndSolvesAllocateNothing(bool intercept, bool squared, int P)
        {
            var est = new InformationFormEstimator(P, new RidgeSettings { Penalty = 0.1, ForgettingFactor = 0.999, FitIntercept = intercept }, PenaltyRegime.Constant, squared);
            var other = new InformationFormEstimator(P, new RidgeSettings { Penalty = 0.1, ForgettingFactor = 0.999, FitIntercept = intercept }, PenaltyRegime.Constant, squared);
            var x = new double[P];
            var theta = new double[P];
            var rng = new Random(4);
            for (int j = 0; j < P; j++)
            {
                x[j] = rng.NextDouble() - 0.5;
            }

            for (int i = 0; i < 1000; i++)
            {
                x[i % P] = -x[i % P] + 0.01;
                est.Update(x, x[0] + x[1], (i % 5) == 4 ? 0.0 : 1.5);
                other.Update(x, x[2]);
                est.TrySolve(0.1, PenaltyRegime.Decaying, theta, out _, out _);
                est.Predict(x);
            }

            est.MergeFrom(other);
            double sink = 0.0;
            long allocated = AllocationCount.InSteadyState(() =>
            {
                UpdateMany(est, x);
                for (int i = 0; i < 1000; i++)
                {
                    est.Update(x, x[3]);
                    sink += est.Predict(x);
                    sink += est.Solve(1e-3 * (i + 1), PenaltyRegime.Constant, theta);
                }

                est.MergeFrom(other);
            });
            Assert.Equal(0, allocated);
            Assert.True(double.IsFinite(sink) && theta.All(double.IsFinite));
        }

        private static void UpdateMany(InformationFormEstimator est, double[] x)
        {
            int p = x.Length;
            for (int i = 0; i < 100_000; i++)
            {
                x[i % p] = -x[i % p] + 0.01;
                est.Update(x, x[0] - x[2], (i % 5) == 4 ? 0.0 : 1.5);
            }
        }
    }
}
