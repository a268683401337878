using System;
using System.Linq;
using OnlineRidge.Tests.Properties;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Recursive
{
    /// <summary>
    /// The contract of <see cref="SquareRootEstimator"/> besides its accuracy: two-tier failures that leave the state unchanged, allocation-free
    /// hot paths, the diagnostics read from the augmented triangle (MATH.md §4.3), the constant-column policy (§4.5) and behaviour without
    /// excitation (§2.3).
    /// </summary>
    public class SquareRootBehaviourTests
    {
        private sealed class Snapshot
        {
            public Snapshot(SquareRootEstimator est)
            {
                Factor = new double[est.FactorOrder * est.FactorOrder];
                est.CopyFactorTo(Factor);
                Weight = est.WeightSum;
                Count = est.SampleCount;
                Discounted = est.DiscountedCount;
                Solved = est.TrySolve(out BreakdownInfo breakdown);
                Breakdown = breakdown;
                Theta = new double[est.ParameterCount];
                if (Solved)
                {
                    est.CopyParametersTo(Theta);
                    Intercept = est.Intercept;
                }
            }

            public double[] Factor { get; }

            public double Weight { get; }

            public long Count { get; }

            public double Discounted { get; }

            public bool Solved { get; }

            public BreakdownInfo Breakdown { get; }

            public double[] Theta { get; }

            public double Intercept { get; }

            public void AssertSame(Snapshot other, string label)
            {
                Assert.True(Factor.SequenceEqual(other.Factor), $"{label}: factor changed");
                Assert.Equal(Weight, other.Weight);
                Assert.Equal(Count, other.Count);
                Assert.Equal(Discounted, other.Discounted);
                Assert.Equal(Solved, other.Solved);
                Assert.Equal(Breakdown, other.Breakdown);
                Assert.True(Theta.SequenceEqual(other.Theta), $"{label}: parameters changed");
                Assert.Equal(Intercept, other.Intercept);
            }
        }

        private static void AssertRejected(SquareRootEstimator est, string parameter, Action call, string label)
        {
            var before = new Snapshot(est);
            ArgumentException ex = Assert.ThrowsAny<ArgumentException>(call);
            Assert.Equal(parameter, ex.ParamName);
            new Snapshot(est).AssertSame(before, label);
        }

        /// <summary>
        /// Theorem (DESIGN.md failure tier 1): every caller mistake — NaN or ∞ in x or y, wrong length, negative, NaN or infinite weight, bad
        /// penalty or buffer, merging mismatched settings — throws ArgumentException naming the parameter, and the factor, counts and
        /// parameters are bit-for-bit unchanged; a sample that would overflow the factor (tier 2) is rejected the same way.
        /// </summary>
        [Fact]
        public void BadInputThrowsNamingParameterAndLeavesStateUnchanged()
        {
            SquareRootGenerators.Check(SquareRootGenerators.Arbitrary(extraN: 30), 0x5EED_0007UL, c =>
            {
                var est = new SquareRootEstimator(c.P, c.Settings());
                SquareRootReference.Feed(est, c, 0, c.N / 2);
                int j = (int)((uint)c.Seed % (uint)c.P);
                double[] x = (double[])c.X[c.N - 1].Clone();
                double y = c.Y[c.N - 1];

                foreach (double bad in new[] { double.NaN, double.PositiveInfinity, double.NegativeInfinity })
                {
                    double[] xb = (double[])x.Clone();
                    xb[j] = bad;
                    AssertRejected(est, "x", () => est.Update(xb, y), $"x[{j}]={bad}");
                    AssertRejected(est, "x", () => est.Update(xb, y, 1.0), $"x[{j}]={bad} weighted");
                    AssertRejected(est, "x", () => est.TryUpdate(xb, y, 1.0, out _), $"x[{j}]={bad} try");
                    AssertRejected(est, "x", () => est.Predict(xb), $"predict x[{j}]={bad}");
                    AssertRejected(est, "y", () => est.Update(x, bad), $"y={bad}");
                    AssertRejected(est, "weight", () => est.Update(x, y, bad), $"weight={bad}");
                    AssertRejected(est, "penalty", () => est.SolveWithPenalty(bad, new double[c.P]), $"penalty={bad}");
                }

                AssertRejected(est, "weight", () => est.Update(x, y, -1e-300), "negative weight");
                AssertRejected(est, "weight", () => est.Update(x, y, -2.0), "negative weight");
                AssertRejected(est, "penalty", () => est.SolveWithPenalty(-1.0, new double[c.P]), "negative penalty");
                AssertRejected(est, "x", () => est.Update(new double[c.P + 1], y), "long x");
                AssertRejected(est, "x", () => est.Update(new double[c.P - 1], y), "short x");
                AssertRejected(est, "x", () => est.Predict(new double[c.P + 1]), "long x predict");
                AssertRejected(est, "destination", () => est.CopyParametersTo(new double[c.P - 1]), "short destination");
                AssertRejected(est, "coefficients", () => est.TrySolveWithPenalty(1.0, new double[c.P - 1], out _, out _), "short coefficients");
                AssertRejected(est, "destination", () => est.CopyFactorTo(new double[(est.FactorOrder * est.FactorOrder) - 1]), "short factor buffer");
                AssertRejected(est, "later", () => est.Merge(est), "self merge");
                AssertRejected(est, "later", () => est.Merge(new SquareRootEstimator(c.P, c.Settings(penalty: c.Penalty + 1.0))), "merge other penalty");
                AssertRejected(est, "later", () => est.Merge(new SquareRootEstimator(c.P + 1, new SquareRootSettings
                {
                    ForgettingFactor = c.Beta,
                    Penalty = c.Penalty,
                    FitIntercept = c.Intercept,
                    Standardize = c.Standardize,
                })), "merge other size");

                // Tier 2: a finite sample whose square would overflow the factor is refused, state unchanged.
                double[] huge = (double[])x.Clone();
                huge[j] = 1e200;
                var before = new Snapshot(est);
                Assert.False(est.TryUpdate(huge, y, 1.0, out BreakdownInfo bd));
                Assert.Equal(BreakdownKind.NonFinite, bd.Kind);
                RidgeBreakdownException thrown = Assert.Throws<RidgeBreakdownException>(() => est.Update(huge, y));
                Assert.Equal(BreakdownKind.NonFinite, thrown.Info.Kind);
                new Snapshot(est).AssertSame(before, "overflowing sample");
            });
        }

        /// <summary>Theorem (DESIGN.md failure tier 1): settings out of range throw ArgumentException naming the setting and value.</summary>
        [Fact]
        public void SettingsOutOfRangeThrowNamingTheSetting()
        {
            foreach (double beta in new[] { 0.0, -0.5, 1.0000001, double.NaN, double.PositiveInfinity })
            {
                var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new SquareRootSettings { ForgettingFactor = beta });
                Assert.Equal(nameof(SquareRootSettings.ForgettingFactor), ex.ParamName);
            }

            foreach (double bad in new[] { -1.0, -1e-300, double.NaN, double.PositiveInfinity })
            {
                Assert.Equal(nameof(SquareRootSettings.Penalty), Assert.Throws<ArgumentOutOfRangeException>(() => new SquareRootSettings { Penalty = bad }).ParamName);
                Assert.Equal(nameof(SquareRootSettings.DecayingPriorWeight), Assert.Throws<ArgumentOutOfRangeException>(() => new SquareRootSettings { DecayingPriorWeight = bad }).ParamName);
            }

            Assert.Equal(nameof(SquareRootSettings.Prior), Assert.Throws<ArgumentException>(() => new SquareRootSettings { Prior = new[] { 1.0, double.NaN } }).ParamName);
            Assert.Equal("settings", Assert.Throws<ArgumentException>(() => new SquareRootEstimator(3, new SquareRootSettings { Prior = new[] { 1.0, 2.0 } })).ParamName);
            Assert.Equal("parameterCount", Assert.Throws<ArgumentOutOfRangeException>(() => new SquareRootEstimator(0)).ParamName);
            Assert.Throws<ArgumentNullException>(() => new SquareRootEstimator(2).Merge(null!));
        }

        /// <summary>
        /// Theorem (DESIGN.md failure tier 2): a numerically singular solve (no penalty, fewer independent samples than parameters) reports
        /// RankDeficient through TrySolve and RidgeBreakdownException through the reads, and changes nothing; the next informative sample
        /// makes it solvable. With an intercept, a solve before any weighted sample reports RankDeficient for the intercept (index −1).
        /// </summary>
        [Fact]
        public void SingularSolveReportsRankDeficiencyAndChangesNothing()
        {
            var est = new SquareRootEstimator(3, new SquareRootSettings { FitIntercept = false, Standardize = false });
            est.Update(new[] { 1.0, 2.0, 3.0 }, 1.0);
            est.Update(new[] { 2.0, 4.0, 6.5 }, 2.0);
            var before = new Snapshot(est);
            Assert.False(before.Solved);
            Assert.Equal(BreakdownKind.RankDeficient, before.Breakdown.Kind);
            Assert.Equal(BreakdownKind.RankDeficient, Assert.Throws<RidgeBreakdownException>(() => est.CopyParametersTo(new double[3])).Info.Kind);
            Assert.Throws<RidgeBreakdownException>(() => est.Predict(new[] { 1.0, 1.0, 1.0 }));
            Assert.Throws<RidgeBreakdownException>(() => est.SolveWithPenalty(0.0, new double[3]));
            new Snapshot(est).AssertSame(before, "after failed reads");

            // The same state with a penalty is solvable at once (the penalty is applied at solve time).
            Assert.True(est.TrySolveWithPenalty(0.5, new double[3], out _, out _));
            est.Update(new[] { 0.0, 1.0, -1.0 }, 0.5);
            Assert.True(est.TrySolve(out _));

            var empty = new SquareRootEstimator(2);
            Assert.False(empty.TrySolve(out BreakdownInfo none));
            Assert.Equal(BreakdownKind.RankDeficient, none.Kind);
            Assert.Equal(-1, none.PivotIndex);
        }

        /// <summary>
        /// Theorem (MATH.md §2.3 and §1.1 regime C): with β &lt; 1 and no excitation of one direction, a constant penalty keeps the unexcited
        /// coefficient at its prior for ever (the state cannot wind up: it only shrinks). Without a penalty the information left on that
        /// direction decays like β̃ᵏ and the unpenalized coefficient then carries an error of order ε‖y‖ divided by that information
        /// (MATH.md §10 gives no accuracy there, κ ≈ 10³⁶⁶), so only the penalized estimator is checked.
        /// </summary>
        [Fact]
        public void NoExcitationWithForgettingIsBoundedByThePenaltyOrReported()
        {
            SquareRootSettings Make(double penalty) => new()
            {
                ForgettingFactor = 0.9,
                FitIntercept = false,
                Standardize = false,
                Prior = new[] { 2.0, 0.25 },
                Penalty = penalty,
            };

            var penalized = new SquareRootEstimator(2, Make(1.0));
            var rng = new Random(5);
            for (int i = 0; i < 50; i++)
            {
                double[] x = { rng.NextDouble(), rng.NextDouble() };
                double y = (2.0 * x[0]) - x[1];
                penalized.Update(x, y);
            }

            void Unexcited(int steps)
            {
                for (int i = 0; i < steps; i++)
                {
                    double[] x = { 1.0 + rng.NextDouble(), 0.0 };
                    penalized.Update(x, 2.0 * x[0]);
                }
            }

            // After 8000 steps the information on θ₂ is 0.9^8000 ≈ 10⁻³⁶⁶ of the data's: the penalty alone determines θ₂.
            Unexcited(8000);
            var theta = new double[2];
            penalized.CopyParametersTo(theta);
            Assert.Equal(2.0, theta[0], 12);
            Assert.Equal(0.25, theta[1], 14);

            // And after 20000 steps (the remaining information is far below the smallest double).
            Unexcited(12000);
            penalized.CopyParametersTo(theta);
            Assert.Equal(2.0, theta[0], 12);
            Assert.Equal(0.25, theta[1], 14);
            Assert.All(theta, v => Assert.True(double.IsFinite(v)));
        }

        /// <summary>
        /// Theorem (MATH.md §4.3): r₁₁² = W, m_x = r₁₂/r₁₁, m_y = z₁/r₁₁, σⱼ = ‖R₂₂[:, j]‖/r₁₁ (population SD) with an intercept and
        /// ‖R[:, j]‖/√W (RMS) without, against two-pass weighted sums of the data; the bound 2·10(c + √n)ε·√(mⱼ² + σⱼ²) is the backward error
        /// of the rotations on column j (the rounding level of R₂₂ the §4.5 policy uses).
        /// </summary>
        [Fact]
        public void MeansAndScalesFromTheTriangleEqualWeightedMoments()
        {
            SquareRootGenerators.Check(SquareRootGenerators.Arbitrary(), 0x5EED_0008UL, c =>
            {
                var est = new SquareRootEstimator(c.P, c.Settings());
                SquareRootReference.Feed(est, c, 0, c.N);
                double[] a = SquareRootReference.EffectiveWeights(c, c.N);
                double wsum = a.Sum();
                double level = 2.0 * 10.0 * (est.FactorOrder + Math.Sqrt(c.N)) * ToleranceRule.Eps;
                Assert.True(Math.Abs(est.WeightSum - wsum) <= level * wsum, "W");
                double discounted = Enumerable.Range(0, c.N).Where(i => c.W[i] > 0.0).Sum(i => Math.Pow(c.Q * c.Q, c.N - 1 - i));
                Assert.True(Math.Abs(est.DiscountedCount - discounted) <= level * discounted, "N (MATH.md §5.1, over samples of positive weight)");
                var scales = new double[c.P];
                est.CopyScalesTo(scales);
                var means = new double[c.P];
                if (c.Intercept)
                {
                    est.CopyMeansTo(means);
                    double my = Enumerable.Range(0, c.N).Sum(i => a[i] * c.Y[i]) / wsum;
                    double sy = Math.Sqrt(Enumerable.Range(0, c.N).Sum(i => a[i] * (c.Y[i] - my) * (c.Y[i] - my)) / wsum);
                    Assert.True(Math.Abs(est.OutputMean - my) <= level * Math.Sqrt((my * my) + (sy * sy)), "m_y");
                }
                else
                {
                    Assert.Throws<InvalidOperationException>(() => est.CopyMeansTo(means));
                }

                for (int j = 0; j < c.P; j++)
                {
                    double m = c.Intercept ? Enumerable.Range(0, c.N).Sum(i => a[i] * c.X[i][j]) / wsum : 0.0;
                    double s = Math.Sqrt(Enumerable.Range(0, c.N).Sum(i => a[i] * (c.X[i][j] - m) * (c.X[i][j] - m)) / wsum);
                    double bound = level * Math.Sqrt((m * m) + (s * s));
                    Assert.True(Math.Abs(scales[j] - s) <= bound, FormattableString.Invariant($"σ_{j} {scales[j]:R} vs {s:R} (bound {bound:E3}) for {c}"));
                    if (c.Intercept)
                    {
                        Assert.True(Math.Abs(means[j] - m) <= bound, FormattableString.Invariant($"m_{j} {means[j]:R} vs {m:R} for {c}"));
                    }

                    Assert.False(est.IsExcluded(j));
                }
            });
        }

        /// <summary>
        /// Theorem (MATH.md §4.5 policy, as <see cref="BatchRidge"/> applies it): with an intercept and standardization, a constant column is
        /// excluded (coefficient 0, reported by IsExcluded) and the remaining coefficients solve the reduced problem; checked against the
        /// batch QR solution with the §10 rule computed on the reduced design (MathNet).
        /// </summary>
        [Fact]
        public void ConstantColumnIsExcludedAsInBatch()
        {
            var rng = new Random(11);
            const int n = 60;
            const int p = 4;
            var flat = new double[n * p];
            var y = new double[n];
            var w = new double[n];
            var est = new SquareRootEstimator(p, new SquareRootSettings { ForgettingFactor = 0.97, Penalty = 0.3 });
            for (int i = 0; i < n; i++)
            {
                var x = new[] { rng.NextDouble(), 7.25, rng.NextDouble() - 0.5, 2.0 * rng.NextDouble() };
                x.CopyTo(flat, i * p);
                y[i] = 1.0 + x[0] - (2.0 * x[2]) + (0.5 * x[3]) + (0.01 * rng.NextDouble());
                w[i] = 0.5 + rng.NextDouble();
                est.Update(x, y[i], w[i]);
            }

            double beta = est.EffectiveForgettingFactor;
            RidgeFit fit = BatchRidge.Fit(new MatrixView(flat, n, p), y, new RidgeSettings { ForgettingFactor = beta, Penalty = 0.3, Solver = RidgeSolver.Qr }, w);
            Assert.Equal(new[] { 1 }, fit.ExcludedColumns);
            Assert.True(est.IsExcluded(1));
            Assert.False(est.IsExcluded(0));
            var theta = new double[p];
            est.CopyParametersTo(theta);
            Assert.Equal(0.0, theta[1]);

            // §10 rule on the reduced problem (intercept, columns 0, 2, 3), penalty 0.3·D².
            int[] keep = { 0, 2, 3 };
            double[] a = Enumerable.Range(0, n).Select(i => w[i] * Math.Pow(beta, n - 1 - i)).ToArray();
            double wsum = a.Sum();
            double[][] rows = Enumerable.Range(0, n).Select(i => new[] { 1.0 }.Concat(keep.Select(j => flat[(i * p) + j])).ToArray()).ToArray();
            var gamma = MathNet.Numerics.LinearAlgebra.Matrix<double>.Build.Dense(4, 4);
            for (int k = 0; k < 3; k++)
            {
                double m = Enumerable.Range(0, n).Sum(i => a[i] * rows[i][k + 1]) / wsum;
                double v = Enumerable.Range(0, n).Sum(i => a[i] * (rows[i][k + 1] - m) * (rows[i][k + 1] - m)) / wsum;
                gamma[k + 1, k + 1] = 0.3 * v;
            }

            var problem = ToleranceRule.Problem.FromData(rows, y, a, gamma, new double[4]);
            double[] reference = new[] { fit.Intercept }.Concat(keep.Select(j => fit.Coefficients[j])).ToArray();
            double[] actual = new[] { est.Intercept }.Concat(keep.Select(j => theta[j])).ToArray();
            double tol = ToleranceRule.Orthogonal(4, n, problem.Kappa, problem.Eta(fit.ObjectiveValue, ToleranceRule.Norm(reference)));
            Assert.True(2.0 * tol <= ToleranceRule.SkipLevel);
            Assert.True(ToleranceRule.Distance(actual, reference) <= problem.CoefficientBound(tol, tol, ToleranceRule.Norm(reference)));
        }

        /// <summary>
        /// Claim (type docs, DESIGN.md hot path): 10⁵ updates allocate 0 bytes (GC.GetAllocatedBytesForCurrentThread, after a warm-up: AllocationCount), for every
        /// setting combination at p = 16; reads (the first after the updates solves), solves at another penalty, predictions and merges allocate 0 bytes too.
        /// </summary>
        [Theory]
        [InlineData(true, true, 0.99, 0.1)]
        [InlineData(false, false, 1.0, 0.0)]
        [InlineData(true, false, 0.95, 0.0)]
        public void HotPathsAllocateNothing(bool intercept, bool standardize, double beta, double penalty)
        {
            const int p = 16;
            var settings = new SquareRootSettings { ForgettingFactor = beta, Penalty = penalty, FitIntercept = intercept, Standardize = standardize, DecayingPriorWeight = 1.0 };
            var est = new SquareRootEstimator(p, settings);
            var other = new SquareRootEstimator(p, settings);
            var rng = new Random(3);
            var xs = new double[100][];
            var ys = new double[100];
            for (int i = 0; i < xs.Length; i++)
            {
                xs[i] = Enumerable.Range(0, p).Select(_ => rng.NextDouble()).ToArray();
                ys[i] = xs[i].Sum() + rng.NextDouble();
            }

            var theta = new double[p];
            void Work(int count)
            {
                for (int i = 0; i < count; i++)
                {
                    est.Update(xs[i % 100], ys[i % 100], (i % 7) == 0 ? 0.0 : 1.5);
                }
            }

            Work(2000);
            est.CopyParametersTo(theta);
            est.SolveWithPenalty(2.0, theta);
            other.Update(xs[0], ys[0]);
            est.Merge(other);

            long updates = AllocationCount.InSteadyState(() => Work(100_000));

            double sink = 0.0;
            long reads = AllocationCount.InSteadyState(() =>
            {
                est.CopyParametersTo(theta); // the first read after updates solves and refreshes the cache; the others only copy
                for (int i = 0; i < 1000; i++)
                {
                    est.CopyParametersTo(theta);
                    sink += est.Predict(xs[i % 100]) + est.Intercept + est.ObjectiveValue + est.ResidualSumOfSquares;
                }
            });

            long solves = AllocationCount.InSteadyState(() =>
            {
                for (int i = 0; i < 100; i++)
                {
                    est.Update(xs[i], ys[i]);
                    sink += est.Predict(xs[i]);
                    sink += est.SolveWithPenalty(0.5 + i, theta);
                    est.Merge(other);
                }
            });

            Assert.True(double.IsFinite(sink));
            Assert.Equal(0, updates);
            Assert.Equal(0, reads);
            Assert.Equal(0, solves);
        }

        /// <summary>
        /// Claim (Reset docs): after <see cref="SquareRootEstimator.Reset"/> the estimator is indistinguishable from a new one — feeding the
        /// same samples gives the same factor, counts and parameters, bit for bit.
        /// </summary>
        [Fact]
        public void ResetReturnsToTheConstructedState()
        {
            var settings = new SquareRootSettings { ForgettingFactor = 0.95, Penalty = 0.2, Prior = new[] { 1.0, -1.0, 0.5 } };
            var used = new SquareRootEstimator(3, settings);
            var rng = new Random(17);
            for (int i = 0; i < 40; i++)
            {
                used.Update(new[] { rng.NextDouble(), rng.NextDouble(), rng.NextDouble() }, rng.NextDouble(), 2.0 * rng.NextDouble());
            }

            used.CopyParametersTo(new double[3]);
            used.Reset();
            Assert.Equal(0, used.SampleCount);
            Assert.Equal(0.0, used.WeightSum);
            var fresh = new SquareRootEstimator(3, settings);
            for (int i = 0; i < 25; i++)
            {
                double[] x = { rng.NextDouble(), rng.NextDouble(), rng.NextDouble() };
                double y = rng.NextDouble();
                used.Update(x, y);
                fresh.Update(x, y);
            }

            new Snapshot(used).AssertSame(new Snapshot(fresh), "reset");
        }

        /// <summary>
        /// Theorem (DESIGN.md failure tier 2, Merge docs): a merge whose weighted sum of squares would exceed 10³⁰⁰ is refused by TryMerge and
        /// Merge (RidgeBreakdownException, NonFinite) and leaves both estimators unchanged.
        /// </summary>
        [Fact]
        public void OverflowingMergeIsRefusedAndChangesNothing()
        {
            var a = new SquareRootEstimator(1, new SquareRootSettings { FitIntercept = false, Standardize = false });
            var b = new SquareRootEstimator(1, new SquareRootSettings { FitIntercept = false, Standardize = false });
            a.Update(new[] { 8e149 }, 1.0);
            b.Update(new[] { 8e149 }, 2.0);
            var beforeA = new Snapshot(a);
            var beforeB = new Snapshot(b);
            Assert.False(a.TryMerge(b, out BreakdownInfo bd));
            Assert.Equal(BreakdownKind.NonFinite, bd.Kind);
            Assert.Equal(BreakdownKind.NonFinite, Assert.Throws<RidgeBreakdownException>(() => a.Merge(b)).Info.Kind);
            new Snapshot(a).AssertSame(beforeA, "earlier state");
            new Snapshot(b).AssertSame(beforeB, "later state");
        }

        /// <summary>
        /// Textbook identity (MATH.md §3.1 with exact data): for data on a plane y = 1 + 2x₁ − 3x₂ (exact in binary), ordinary least squares
        /// by the square-root form reproduces the plane, the objective is at rounding level, and the factor satisfies TᵀT = [1 X y]ᵀ[1 X y]
        /// (compared with the directly summed Gram matrix, exact sums of small integers).
        /// </summary>
        [Fact]
        public void ExactPlaneIsReproduced()
        {
            var est = new SquareRootEstimator(2);
            var gram = new double[4, 4];
            for (int i = 0; i < 10; i++)
            {
                double[] u = { 1.0, i % 4, (i * i) % 5, 0.0 };
                u[3] = 1.0 + (2.0 * u[1]) - (3.0 * u[2]);
                est.Update(new[] { u[1], u[2] }, u[3]);
                for (int r = 0; r < 4; r++)
                {
                    for (int s = 0; s < 4; s++)
                    {
                        gram[r, s] += u[r] * u[s];
                    }
                }
            }

            var theta = new double[2];
            est.CopyParametersTo(theta);
            Assert.Equal(2.0, theta[0], 13);
            Assert.Equal(-3.0, theta[1], 13);
            Assert.Equal(1.0, est.Intercept, 13);
            Assert.True(est.ObjectiveValue <= 1e-24, est.ObjectiveValue.ToString("R", System.Globalization.CultureInfo.InvariantCulture));
            Assert.Equal(10.0, est.WeightSum);

            var t = new double[16];
            est.CopyFactorTo(t);
            for (int r = 0; r < 4; r++)
            {
                for (int s = 0; s < 4; s++)
                {
                    double g = 0.0;
                    for (int k = 0; k < 4; k++)
                    {
                        g += t[(k * 4) + r] * t[(k * 4) + s];
                    }

                    // Backward error of the rotations, 10(c + √n)ε relative to the column norms (MATH.md §10 constant).
                    double level = 10.0 * (4 + Math.Sqrt(10.0)) * ToleranceRule.Eps;
                    Assert.True(Math.Abs(g - gram[r, s]) <= level * Math.Sqrt(gram[r, r] * gram[s, s]), $"TᵀT[{r},{s}] = {g:R} vs {gram[r, s]}");
                }

                Assert.True(t[(r * 4) + r] >= 0.0, "diag(T) ≥ 0 (MATH.md §3.2)");
            }
        }
    }
}
