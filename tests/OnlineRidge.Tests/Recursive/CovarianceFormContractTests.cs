using System;
using System.Linq;
using OnlineRidge.Internal;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Recursive
{
    /// <summary>
    /// Contract tests of <see cref="CovarianceFormEstimator"/>: caller mistakes (DESIGN.md failure tier 1), breakdown reporting (tier 2, MATH.md
    /// §2.2 item 3), the explicit initial covariance, and the allocation-free hot path.
    /// </summary>
    public class CovarianceFormContractTests
    {
        private static CovarianceFormEstimator Trained(CovarianceUpdate form = CovarianceUpdate.Symmetric)
        {
            var est = new CovarianceFormEstimator(3, new CovarianceFormSettings { ForgettingFactor = 0.97, PriorWeight = 0.01, Prior = new[] { 0.5, -1.0, 2.0 }, Update = form });
            est.Update(new[] { 1.0, 2.0, 3.0 }, 4.0);
            est.Update(new[] { -1.0, 0.5, 2.0 }, 1.0, 2.0);
            return est;
        }

        private static (double[] Theta, double[] P, double Cost, long Count, double Error) Snapshot(CovarianceFormEstimator est)
        {
            var theta = new double[est.ParameterCount];
            var p = new double[est.ParameterCount * est.ParameterCount];
            est.CopyParametersTo(theta);
            est.CopyCovarianceTo(p);
            return (theta, p, est.MinimumCost, est.SampleCount, est.LastPriorError);
        }

        private static void AssertUnchanged((double[] Theta, double[] P, double Cost, long Count, double Error) before, CovarianceFormEstimator est)
        {
            var after = Snapshot(est);
            Assert.Equal(before.Theta, after.Theta);
            Assert.Equal(before.P, after.P);
            Assert.Equal(before.Cost, after.Cost);
            Assert.Equal(before.Count, after.Count);
            Assert.Equal(before.Error, after.Error);
        }

        public static TheoryData<double[], double, double, string> BadUpdates() => new()
        {
            { new[] { 1.0, double.NaN, 0.0 }, 1.0, 1.0, "x" },
            { new[] { 1.0, 0.0, double.NegativeInfinity }, 1.0, 1.0, "x" },
            { new[] { 1.0, 0.0 }, 1.0, 1.0, "x" },
            { new[] { 1.0, 0.0, 0.0, 0.0 }, 1.0, 1.0, "x" },
            { new[] { 1.0, 0.0, 0.0 }, double.NaN, 1.0, "y" },
            { new[] { 1.0, 0.0, 0.0 }, double.PositiveInfinity, 1.0, "y" },
            { new[] { 1.0, 0.0, 0.0 }, 1.0, double.NaN, "weight" },
            { new[] { 1.0, 0.0, 0.0 }, 1.0, -0.1, "weight" },
            { new[] { 1.0, 0.0, 0.0 }, 1.0, double.PositiveInfinity, "weight" },

            // Several bad arguments: x is named first, then y. A weight of 0 (a pure forgetting step) still checks x.
            { new[] { double.NaN, 0.0, 0.0 }, double.NaN, 1.0, "x" },
            { new[] { 0.0, double.PositiveInfinity, 0.0 }, 1.0, -1.0, "x" },
            { new[] { 0.0, 0.0, double.PositiveInfinity }, 1.0, 0.0, "x" },
            { new[] { 1.0, 0.0, 0.0 }, double.NaN, double.NaN, "y" },
        };

        /// <summary>
        /// A non-finite entry at any position of x throws ArgumentException naming x on a fresh estimator too, where θ = 0 (so xᵀθ is
        /// ∞·0 = NaN rather than ∞), in both update forms and with weight 1 and 0, and leaves the state unchanged.
        /// </summary>
        [Fact]
        public void NonFiniteRegressorIsRejectedAtEveryPositionWithZeroParameters()
        {
            foreach (var form in new[] { CovarianceUpdate.Symmetric, CovarianceUpdate.JosephLike })
            {
                foreach (double bad in new[] { double.NaN, double.PositiveInfinity, double.NegativeInfinity })
                {
                    for (int j = 0; j < 5; j++)
                    {
                        foreach (double weight in new[] { 1.0, 0.0 })
                        {
                            var est = new CovarianceFormEstimator(5, new CovarianceFormSettings { Update = form });
                            var x = new double[5];
                            x[j] = bad;
                            Assert.Equal("x", Assert.ThrowsAny<ArgumentException>(() => est.Update(x, 1.0, weight)).ParamName);
                            Assert.Equal(0, est.SampleCount);
                            var theta = new double[5];
                            est.CopyParametersTo(theta);
                            Assert.All(theta, t => Assert.Equal(0.0, t));
                        }
                    }
                }
            }
        }

        /// <summary>Bad x, y or weight throws ArgumentException naming the parameter, before any change (compared with CopyParametersTo/CopyCovarianceTo).</summary>
        [Theory]
        [MemberData(nameof(BadUpdates))]
        public void BadInputThrowsNamingTheParameterAndLeavesTheStateUnchanged(double[] x, double y, double weight, string parameter)
        {
            foreach (var form in new[] { CovarianceUpdate.Symmetric, CovarianceUpdate.JosephLike })
            {
                var est = Trained(form);
                var before = Snapshot(est);
                var ex = Assert.ThrowsAny<ArgumentException>(() => est.Update(x, y, weight));
                Assert.Equal(parameter, ex.ParamName);
                ex = Assert.ThrowsAny<ArgumentException>(() => est.TryUpdate(x, y, weight, out _));
                Assert.Equal(parameter, ex.ParamName);
                AssertUnchanged(before, est);
            }
        }

        [Theory]
        [InlineData(0.0)]
        [InlineData(-0.9)]
        [InlineData(1.5)]
        [InlineData(double.NaN)]
        [InlineData(double.NegativeInfinity)]
        public void ForgettingFactorOutOfRangeIsRejectedBySettings(double beta)
        {
            var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new CovarianceFormSettings { ForgettingFactor = beta });
            Assert.Equal(nameof(CovarianceFormSettings.ForgettingFactor), ex.ParamName);
        }

        [Theory]
        [InlineData(0.0)]
        [InlineData(-1.0)]
        [InlineData(double.NaN)]
        [InlineData(double.PositiveInfinity)]
        public void PriorWeightMustBePositiveAndFinite(double delta)
        {
            var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new CovarianceFormSettings { PriorWeight = delta });
            Assert.Equal(nameof(CovarianceFormSettings.PriorWeight), ex.ParamName);
        }

        [Fact]
        public void SettingsRejectNonFinitePriorAndUnknownUpdateForm()
        {
            Assert.Equal(nameof(CovarianceFormSettings.Prior), Assert.ThrowsAny<ArgumentException>(() => new CovarianceFormSettings { Prior = new[] { 1.0, double.NaN } }).ParamName);
            Assert.Equal(nameof(CovarianceFormSettings.Update), Assert.ThrowsAny<ArgumentException>(() => new CovarianceFormSettings { Update = (CovarianceUpdate)7 }).ParamName);
        }

        [Fact]
        public void ConstructorRejectsWrongPriorLengthAndBadInitialCovariance()
        {
            Assert.Equal("parameterCount", Assert.ThrowsAny<ArgumentException>(() => new CovarianceFormEstimator(0)).ParamName);
            Assert.Equal("settings", Assert.ThrowsAny<ArgumentException>(() => new CovarianceFormEstimator(3, new CovarianceFormSettings { Prior = new[] { 1.0, 2.0 } })).ParamName);
            const string Name = "initialCovariance";
            Assert.Equal(Name, Assert.ThrowsAny<ArgumentException>(() => new CovarianceFormEstimator(2, null, new[] { 1.0, 0.0, 0.0 })).ParamName);
            Assert.Equal(Name, Assert.ThrowsAny<ArgumentException>(() => new CovarianceFormEstimator(2, null, new[] { 1.0, 0.5, 0.4, 1.0 })).ParamName);
            Assert.Equal(Name, Assert.ThrowsAny<ArgumentException>(() => new CovarianceFormEstimator(2, null, new[] { 1.0, 2.0, 2.0, 1.0 })).ParamName);
            Assert.Equal(Name, Assert.ThrowsAny<ArgumentException>(() => new CovarianceFormEstimator(2, null, new[] { 1.0, 0.0, 0.0, double.NaN })).ParamName);
        }

        [Fact]
        public void ShortBuffersAreRejected()
        {
            var est = Trained();
            Assert.Equal("destination", Assert.ThrowsAny<ArgumentException>(() => est.CopyParametersTo(new double[2])).ParamName);
            Assert.Equal("destination", Assert.ThrowsAny<ArgumentException>(() => est.CopyCovarianceTo(new double[8])).ParamName);
            Assert.Equal("x", Assert.ThrowsAny<ArgumentException>(() => est.Predict(new double[2])).ParamName);
        }

        /// <summary>
        /// Theorem (MATH.md §2.1): with an explicit P₀ the recursion minimizes Σ βⁿ⁻ⁱwᵢ(yᵢ − xᵢᵀθ)² + βⁿ(θ − θ₀)ᵀP₀⁻¹(θ − θ₀), whose minimizer solves
        /// (Σ aᵢxᵢxᵢᵀ + βⁿP₀⁻¹)θ = Σ aᵢxᵢyᵢ + βⁿP₀⁻¹θ₀ — solved here with MathNet (general-purpose reference) for a non-diagonal P₀.
        /// </summary>
        [Fact]
        public void ExplicitInitialCovarianceGivesTheRegimeDSolutionWithThatPrior()
        {
            var p0 = new[] { 2.0, 0.5, 0.1, 0.5, 1.0, -0.2, 0.1, -0.2, 0.5 };
            var theta0 = new[] { 1.0, -1.0, 0.5 };
            const double Beta = 0.95;
            var est = new CovarianceFormEstimator(3, new CovarianceFormSettings { ForgettingFactor = Beta, Prior = theta0 }, p0);
            var rng = new Random(11);
            var rows = Enumerable.Range(0, 12).Select(_ => new[] { rng.NextDouble(), rng.NextDouble() - 0.5, (2 * rng.NextDouble()) - 1 }).ToArray();
            var ys = rows.Select(r => r[0] - (2 * r[1]) + (0.1 * rng.NextDouble())).ToArray();
            for (int i = 0; i < rows.Length; i++)
            {
                est.Update(rows[i], ys[i]);
            }

            var m = MathNet.Numerics.LinearAlgebra.Matrix<double>.Build;
            var gamma0 = m.DenseOfRowMajor(3, 3, p0).Inverse();
            double decay = Math.Pow(Beta, rows.Length);
            var h = decay * gamma0;
            var rhs = decay * (gamma0 * MathNet.Numerics.LinearAlgebra.Vector<double>.Build.DenseOfArray(theta0));
            for (int i = 0; i < rows.Length; i++)
            {
                var x = MathNet.Numerics.LinearAlgebra.Vector<double>.Build.DenseOfArray(rows[i]);
                double a = Math.Pow(Beta, rows.Length - 1 - i);
                h += a * x.OuterProduct(x);
                rhs += a * ys[i] * x;
            }

            // Reference: MathNet LU solve of the normal equations (Gram class); tolerance MATH.md §10 with κ_path of the run and κ of H_n.
            var expected = h.Solve(rhs);
            var path = new Properties.RecursiveReference.PathCondition(gamma0, Beta);
            foreach (var r in rows)
            {
                path.Add(r, 1.0);
            }

            var problem = Support.ToleranceRule.Problem.FromData(rows, ys, rows.Select((_, i) => Math.Pow(Beta, rows.Length - 1 - i)).ToArray(), decay * gamma0, theta0);
            double tolA = Support.ToleranceRule.Gram(3, rows.Length, path.Path);
            double tolB = Support.ToleranceRule.Gram(3, rows.Length, problem.Kappa);
            var theta = new double[3];
            est.CopyParametersTo(theta);
            double diff = (MathNet.Numerics.LinearAlgebra.Vector<double>.Build.DenseOfArray(theta) - expected).L2Norm();
            Assert.True(diff <= problem.CoefficientBound(tolA, tolB, expected.L2Norm()), $"diff {diff:E3}");
            var pn = new double[9];
            est.CopyCovarianceTo(pn);
            var hInv = h.Inverse();
            Assert.True((m.DenseOfRowMajor(3, 3, pn) - hInv).FrobeniusNorm() <= (tolA + tolB) * hInv.FrobeniusNorm());
        }

        /// <summary>
        /// Tier-2 failure (MATH.md §2.2 item 3): with P₀ = 2¹⁰⁰⁰·I and x = (1, 0) the exact P₁₁ is 2¹⁰⁰⁰/(1 + 2¹⁰⁰⁰) ≈ 1, but d = 1 + 2¹⁰⁰⁰ rounds
        /// to 2¹⁰⁰⁰ and P₁₁ − (w/d)·v₁² cancels to exactly 0: the update must report LostDefiniteness and keep the old state.
        /// </summary>
        [Fact]
        public void LossOfDefinitenessIsReportedAndLeavesTheStateUnchanged()
        {
            var est = new CovarianceFormEstimator(2, new CovarianceFormSettings { PriorWeight = Math.Pow(2.0, -1000) });
            var before = Snapshot(est);
            Assert.False(est.TryUpdate(new[] { 1.0, 0.0 }, 3.0, 1.0, out BreakdownInfo info));
            Assert.Equal(BreakdownKind.LostDefiniteness, info.Kind);
            Assert.Equal(0, info.PivotIndex);
            AssertUnchanged(before, est);
            Assert.Throws<RidgeBreakdownException>(() => est.Update(new[] { 1.0, 0.0 }, 3.0));
            AssertUnchanged(before, est);
        }

        /// <summary>
        /// Scale equivariance (textbook identity of least squares): with x' = 2⁵⁰⁵·x and δ' = 2¹⁰¹⁰·δ the recursion gives P' = 2⁻¹⁰¹⁰·P and
        /// θ' = 2⁻⁵⁰⁵·θ. In the scaled run the squares of P̃x fall below 2⁻¹⁰⁰⁰, so every update takes the exact power-of-two rescaling of
        /// the projection; the two runs agree to 10⁻¹² relative.
        /// </summary>
        [Fact]
        public void TinyProjectionsAreRescaledExactlyAndKeepTheScaleIdentity()
        {
            const int P = 3;
            double up = Math.Pow(2.0, 505);
            var plain = new CovarianceFormEstimator(P, new CovarianceFormSettings { ForgettingFactor = 0.98, PriorWeight = 1.0 });
            var scaled = new CovarianceFormEstimator(P, new CovarianceFormSettings { ForgettingFactor = 0.98, PriorWeight = Math.Pow(2.0, 1010) });
            var rng = new Random(42);
            var x = new double[P];
            var xs = new double[P];
            for (int i = 0; i < 40; i++)
            {
                for (int j = 0; j < P; j++)
                {
                    x[j] = rng.NextDouble() - 0.5;
                    xs[j] = x[j] * up;
                }

                double y = x[0] - x[2] + (0.01 * rng.NextDouble());
                plain.Update(x, y);
                scaled.Update(xs, y);
            }

            var cp = new double[P * P];
            var cs = new double[P * P];
            plain.CopyCovarianceTo(cp);
            scaled.CopyCovarianceTo(cs);
            double largest = cp.Max(Math.Abs);
            for (int k = 0; k < P * P; k++)
            {
                Assert.True(Math.Abs((cs[k] * up * up) - cp[k]) <= 1e-12 * largest, $"P[{k}]: {cs[k] * up * up:R} vs {cp[k]:R}");
            }

            var tp = new double[P];
            var ts = new double[P];
            plain.CopyParametersTo(tp);
            scaled.CopyParametersTo(ts);
            for (int j = 0; j < P; j++)
            {
                Assert.True(Math.Abs((ts[j] * up) - tp[j]) <= 1e-12 * Math.Max(1.0, Math.Abs(tp[j])), $"theta[{j}]");
            }

            Assert.True(Math.Abs(scaled.MinimumCost - plain.MinimumCost) <= 1e-12 * plain.MinimumCost);
        }

        /// <summary>
        /// Tier-2 failure (MATH.md §2.2 item 3): an update whose intermediate values overflow is reported as a breakdown
        /// (false from TryUpdate, RidgeBreakdownException from Update) and leaves θ, P, J* and the count unchanged.
        /// </summary>
        [Fact]
        public void OverflowingUpdateIsReportedAndLeavesTheStateUnchanged()
        {
            var est = new CovarianceFormEstimator(2, new CovarianceFormSettings { PriorWeight = 1e-300 });
            var before = Snapshot(est);
            Assert.False(est.TryUpdate(new[] { 1e160, 1e160 }, 1.0, 1.0, out BreakdownInfo info));
            Assert.Equal(BreakdownKind.NonFinite, info.Kind);
            AssertUnchanged(before, est);
            var ex = Assert.Throws<RidgeBreakdownException>(() => est.Update(new[] { 1e160, 1e160 }, 1.0));
            Assert.Equal(BreakdownKind.NonFinite, ex.Info.Kind);
            AssertUnchanged(before, est);
        }

        /// <summary>
        /// The §2.2 guard of the update kernel: a source matrix that is not positive definite (here indefinite, as rounding could make P) is
        /// reported as a non-positive diagonal or a non-finite entry without a result being kept. Kernel-level, because a valid P cannot be made
        /// indefinite through the public API with finite data.
        /// </summary>
        [Fact]
        public void UpdateKernelReportsLossOfDefiniteness()
        {
            // P = [[1, 2], [2, 1]] (indefinite), v = P·x for x = (1, 0): v = (1, 2); g = 1 gives diagonal 1 − 1 = 0 → not positive.
            var packed = new[] { 1.0, 2.0, 1.0 };
            var dst = new double[3];
            int code = RecursiveKernels.CovarianceUpdate(packed, dst, 2, 1.0, new[] { 1.0, 2.0 }, 1.0, out int index, out double value);
            Assert.Equal(2, code);
            Assert.Equal(0, index);
            Assert.Equal(0.0, value);
            code = RecursiveKernels.JosephUpdate(packed, dst, 2, new[] { double.PositiveInfinity, 0.0 }, new[] { 1.0, 2.0 }, 1.0, 1.0, out index, out _);
            Assert.Equal(1, code);
        }

        /// <summary>
        /// Hot-path claim: 10⁵ updates of each form (p = 16, and p = 4 where the symmetric update has its register path; with forgetting and
        /// zero weights) allocate nothing, counted after a warm-up of as many updates (AllocationCount).
        /// </summary>
        [Theory]
        [InlineData(CovarianceUpdate.Symmetric, 16)]
        [InlineData(CovarianceUpdate.JosephLike, 16)]
        [InlineData(CovarianceUpdate.Symmetric, 4)]
        public void UpdatesAllocateNothing(CovarianceUpdate form, int P)
        {
            var est = new CovarianceFormEstimator(P, new CovarianceFormSettings { ForgettingFactor = 0.999, PriorWeight = 1e-2, Update = form });
            var x = new double[P];
            var theta = new double[P];
            var rng = new Random(1);
            for (int j = 0; j < P; j++)
            {
                x[j] = rng.NextDouble() - 0.5;
            }

            for (int i = 0; i < 1000; i++)
            {
                x[i % P] = -x[i % P];
                est.Update(x, x[0] + x[1], (i % 7) == 0 ? 0.0 : 1.0);
                est.TryUpdate(x, 1.0, 0.5, out _);
            }

            double sink = 0.0;
            long allocated = AllocationCount.InSteadyState(() =>
            {
                sink += UpdateMany(est, x);
                est.CopyParametersTo(theta);
            });
            Assert.Equal(0, allocated);
            Assert.True(double.IsFinite(sink) && theta.All(double.IsFinite));
        }

        private static double UpdateMany(CovarianceFormEstimator est, double[] x)
        {
            int p = x.Length;
            double sink = 0.0;
            for (int i = 0; i < 100_000; i++)
            {
                x[i % p] = -x[i % p];
                est.Update(x, x[0] - x[2], (i % 7) == 0 ? 0.0 : 1.0);
                sink += est.Predict(x);
            }

            return sink;
        }
    }
}
