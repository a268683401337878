using System;
using System.Linq;
using MathNet.Numerics.LinearAlgebra;
using OnlineRidge.Tests.Properties;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Recursive
{
    /// <summary>
    /// FsCheck properties of <see cref="SquareRootEstimator"/> (MATH.md §3, §4.3–4.5), each against an independent reference: the batch
    /// QR solver with β̃ = fl(√β)² weights (MATH.md §10), MathNet singular values, or a second run of the estimator. Tolerances follow the
    /// MATH.md §10 rule (orthogonal class for both sides). Each property runs <see cref="SquareRootGenerators.CaseCount"/> seeded cases.
    /// </summary>
    public class SquareRootPropertyTests
    {
        /// <summary>
        /// Theorem (MATH.md §3.3 with §4.4–4.5, regime C of §1.1): the data-only square-root state, solved at read time with the constant
        /// penalty λ (and at a second, caller-given penalty), gives the minimizer of the batch objective
        /// Σ β̃ⁿ⁻ⁱwᵢ(yᵢ − b₀ − xᵢᵀθ)² + λ(θ − θ₀)ᵀD²(θ − θ₀), with and without intercept and standardization, and ρ² + t² equals its minimal
        /// value (batch ObjectiveValue) within tol_J.
        /// </summary>
        [Fact]
        public void CoefficientsAndMinimalObjectiveEqualBatchConstantPenaltySolution()
        {
            var tally = new Tally();
            SquareRootGenerators.Check(SquareRootGenerators.Arbitrary(), 0x5EED_0001UL, c =>
            {
                var est = new SquareRootEstimator(c.P, c.Settings());
                int done = 0;
                int[] checkpoints = SquareRootReference.Checkpoints(c);
                foreach (int m in checkpoints)
                {
                    SquareRootReference.Feed(est, c, done, m);
                    done = m;
                    tally.Add(CompareWithBatch(est, c, m, c.Penalty, useCachedSolve: true));
                }

                // Any penalty from the same state (MATH.md §3.3: the penalty is added at solve time).
                double other = c.Penalty == 0.0 ? 1.0 : c.Penalty * 1e-3;
                tally.Add(CompareWithBatch(est, c, c.N, other, useCachedSolve: false));
            });
            tally.Report("regime C");
        }

        /// <summary>
        /// Theorem (MATH.md §1.1 regime D, §3.3): with a decaying prior of initial weight δ applied at solve time as δ·β̃ⁿ, the square-root
        /// state gives the batch solution with penalty λ + δ·β̃ⁿ (the classic recursive least-squares objective when λ = 0), and its
        /// minimal objective.
        /// </summary>
        [Fact]
        public void DecayingPriorSolutionEqualsBatchRegimeDSolution()
        {
            var tally = new Tally();
            SquareRootGenerators.Check(SquareRootGenerators.Arbitrary(decaying: true), 0x5EED_0002UL, c =>
            {
                var est = new SquareRootEstimator(c.P, c.Settings());
                int done = 0;
                foreach (int m in SquareRootReference.Checkpoints(c))
                {
                    SquareRootReference.Feed(est, c, done, m);
                    done = m;
                    tally.Add(CompareWithBatch(est, c, m, c.Penalty, useCachedSolve: true));
                }
            });
            tally.Report("regime D");
        }

        /// <summary>
        /// Theorem (MATH.md §3.5): for a state A of the first k samples and a fresh state B fed the remaining n − k (same settings),
        /// merge(A, B) = QR of [q^(n−k)·T_A; T_B] is the state of one estimator fed all n samples in order: same coefficients and
        /// objective within the §10 rule, same sample count, weight sum and discounted count to rounding.
        /// </summary>
        [Fact]
        public void MergeOfConsecutiveStatesEqualsSequentialFeeding()
        {
            SquareRootGenerators.Check(SquareRootGenerators.Arbitrary(decaying: false), 0x5EED_0003UL, c =>
            {
                int k = (int)((uint)c.Seed % (uint)(c.N + 1));
                var single = new SquareRootEstimator(c.P, c.Settings());
                SquareRootReference.Feed(single, c, 0, c.N);
                var a = new SquareRootEstimator(c.P, c.Settings());
                var b = new SquareRootEstimator(c.P, c.Settings());
                SquareRootReference.Feed(a, c, 0, k);
                SquareRootReference.Feed(b, c, k, c.N);
                a.Merge(b);

                Assert.Equal(single.SampleCount, a.SampleCount);
                Assert.True(Math.Abs(a.WeightSum - single.WeightSum) <= 1e-13 * single.WeightSum, $"W {a.WeightSum:R} vs {single.WeightSum:R}");
                Assert.True(Math.Abs(a.DiscountedCount - single.DiscountedCount) <= 1e-13 * single.DiscountedCount, "N");

                ToleranceRule.Problem problem = SquareRootReference.Problem(c, c.N, c.Penalty);
                double[]? merged = SquareRootReference.Solution(a, c, out double jMerged);
                double[]? reference = SquareRootReference.Solution(single, c, out double jSingle);
                if (reference is null)
                {
                    // The sequential state is numerically singular: the merged one must say so too or be finite; the rule decides.
                    Assert.True(merged is null || merged.All(double.IsFinite));
                    return;
                }

                SquareRootReference.AssertClose(c, c.N, problem, merged, reference, jSingle, jMerged, $"merge at k={k}");
            });
        }

        /// <summary>
        /// Theorem (MATH.md §1.1 with β = 1: the objective is a plain sum over samples): feeding the samples in a random order gives the same
        /// solution as feeding them in order, within twice the orthogonal-class tolerance (both sides are square-root solutions).
        /// </summary>
        [Fact]
        public void WithoutForgettingSampleOrderDoesNotMatter()
        {
            SquareRootGenerators.Check(SquareRootGenerators.Arbitrary(forgetting: false), 0x5EED_0004UL, c =>
            {
                var inOrder = new SquareRootEstimator(c.P, c.Settings());
                SquareRootReference.Feed(inOrder, c, 0, c.N);
                var shuffled = new SquareRootEstimator(c.P, c.Settings());
                foreach (int i in SquareRootGenerators.Permutation(c.N, c.Seed))
                {
                    shuffled.Update(c.X[i], c.Y[i], c.W[i]);
                }

                ToleranceRule.Problem problem = SquareRootReference.Problem(c, c.N, c.Penalty);
                double[]? a = SquareRootReference.Solution(shuffled, c, out double ja);
                double[]? b = SquareRootReference.Solution(inOrder, c, out double jb);
                if (b is null)
                {
                    Assert.True(a is null || a.All(double.IsFinite));
                    return;
                }

                SquareRootReference.AssertClose(c, c.N, problem, a, b, jb, ja, "permuted order");
            });
        }

        /// <summary>
        /// Theorem (MATH.md §0 and §3.2: a step with w = 0 is a pure forgetting step): after an update of weight 0 the factor is exactly
        /// q·T (q = fl(√β), entry by entry), W and N are multiplied by β̃ = q², the sample count grows by one, and x, y play no role.
        /// </summary>
        [Fact]
        public void ZeroWeightSampleOnlyForgets()
        {
            SquareRootGenerators.Check(SquareRootGenerators.Arbitrary(extraN: 40), 0x5EED_0005UL, c =>
            {
                var est = new SquareRootEstimator(c.P, c.Settings());
                SquareRootReference.Feed(est, c, 0, c.N / 2);
                int order = est.FactorOrder;
                var before = new double[order * order];
                est.CopyFactorTo(before);
                double w = est.WeightSum;
                double n = est.DiscountedCount;
                long count = est.SampleCount;

                int i = c.N - 1;
                est.Update(c.X[i], c.Y[i] * 1e6, 0.0);

                var after = new double[order * order];
                est.CopyFactorTo(after);
                double q = Math.Sqrt(c.Beta);
                for (int k = 0; k < before.Length; k++)
                {
                    Assert.Equal(q * before[k], after[k]);
                }

                Assert.Equal(q * q * w, est.WeightSum);
                Assert.Equal(q * q * n, est.DiscountedCount);
                Assert.Equal(count + 1, est.SampleCount);
            });
        }

        /// <summary>
        /// Theorem (MATH.md §3.4, from Xw = Q·R with QᵀQ = I): the factor T has the singular values of the weighted augmented design
        /// A^½[1, X, y] (MathNet SVD of the data as general-purpose reference), within Weyl's bound |δs| ≤ ‖δA‖ ≤ 10(c + √n)ε·s₁ per side;
        /// hence cond(R) = cond(A^½[1, X]) (not its square), checked by the interval that bound implies.
        /// </summary>
        [Fact]
        public void FactorSingularValuesEqualThoseOfWeightedDesign()
        {
            SquareRootGenerators.Check(SquareRootGenerators.Arbitrary(), 0x5EED_0006UL, c =>
            {
                var est = new SquareRootEstimator(c.P, c.Settings());
                SquareRootReference.Feed(est, c, 0, c.N);
                int order = est.FactorOrder;
                var t = new double[order * order];
                est.CopyFactorTo(t);
                Matrix<double> tm = Matrix<double>.Build.Dense(order, order, (i, j) => t[(i * order) + j]);

                double[] a = SquareRootReference.EffectiveWeights(c, c.N);
                int off = c.Intercept ? 1 : 0;
                Matrix<double> design = Matrix<double>.Build.Dense(c.N, order, (i, j) =>
                {
                    double v = j < off ? 1.0 : (j == order - 1 ? c.Y[i] : c.X[i][j - off]);
                    return Math.Sqrt(a[i]) * v;
                });

                CompareSpectra(tm, design, c.N, "[1, X, y]");
                CompareSpectra(tm.SubMatrix(0, order - 1, 0, order - 1), design.SubMatrix(0, c.N, 0, order - 1), c.N, "[1, X]");
            });
        }

        /// <summary>
        /// Claim (type docs of <see cref="SquareRootEstimator.ConditionEstimate"/>, MATH.md §3.3–3.4): the estimate is the condition number
        /// of the scaled penalized system [A^½(X − 1m_xᵀ)S⁻¹; √μ·I] (centered only with an intercept; S = D with standardization, the
        /// column norms without penalty and standardization, else I), computed here from the data with MathNet: never above the Weyl interval
        /// of the true value (it is a lower bound) and at least 0.9 of its lower end ("within a few percent").
        /// </summary>
        [Fact]
        public void ConditionEstimateMatchesTheScaledPenalizedDesign()
        {
            SquareRootGenerators.Check(SquareRootGenerators.Arbitrary(decaying: false), 0x5EED_0009UL, c =>
            {
                var est = new SquareRootEstimator(c.P, c.Settings());
                SquareRootReference.Feed(est, c, 0, c.N);
                bool solved = est.TrySolve(out BreakdownInfo breakdown);
                double[] a = SquareRootReference.EffectiveWeights(c, c.N);
                double wsum = a.Sum();
                int n = c.N;
                int p = c.P;
                double[] means = Enumerable.Range(0, p).Select(j => c.Intercept ? Enumerable.Range(0, n).Sum(k => a[k] * c.X[k][j]) / wsum : 0.0).ToArray();
                var centered = Matrix<double>.Build.Dense(n, p, (i, j) => Math.Sqrt(a[i]) * (c.X[i][j] - means[j]));
                double mu = c.Penalty;
                var scale = new double[p];
                for (int j = 0; j < p; j++)
                {
                    double norm = centered.Column(j).L2Norm();
                    scale[j] = c.Standardize ? norm / Math.Sqrt(wsum) : (mu > 0.0 ? 1.0 : norm);
                }

                var stacked = Matrix<double>.Build.Dense(n + p, p, (i, j) => i < n ? centered[i, j] / scale[j] : (i - n == j ? Math.Sqrt(mu) : 0.0));
                double[] sv = stacked.Svd(false).S.ToArray();
                double e = 2.0 * 10.0 * (p + 2 + Math.Sqrt(n)) * ToleranceRule.Eps * sv[0];
                double smin = sv[p - 1];
                double hi = smin > e ? (sv[0] + e) / (smin - e) : double.PositiveInfinity;
                if (!solved)
                {
                    // A rank report must be justified: the true condition reaches the documented threshold 1/(10(p + 1)ε).
                    Assert.Equal(BreakdownKind.RankDeficient, breakdown.Kind);
                    Assert.True(hi >= 1.0 / (10.0 * (p + 1) * ToleranceRule.Eps), $"rank report at cond ≤ {hi:E3} for {c}");
                    return;
                }

                if (smin > 2.0 * e)
                {
                    // Otherwise the Weyl interval is unbounded above and only the lower end below applies.
                    Assert.InRange(est.ConditionEstimate, 0.0, hi);
                }

                double lo = (sv[0] - e) / (smin + e);
                Assert.True(est.ConditionEstimate >= 0.9 * lo, $"estimate {est.ConditionEstimate:E3} < 0.9·{lo:E3} for {c}");
            });
        }

        /// <summary>
        /// Theorem (MATH.md §10 applied at p = 16): measures the largest recursive-vs-batch coefficient difference as a fraction of the
        /// tolerance over the generated cases with 16 regressors, prints it, and asserts it is at most 1 (the same property as above).
        /// </summary>
        [Fact]
        public void SixteenRegressorsStayWithinTheToleranceRule()
        {
            var tally = new Tally();
            SquareRootGenerators.Check(SquareRootGenerators.Arbitrary(minP: 16, maxP: 16), 0x5EED_0016UL, c =>
            {
                var est = new SquareRootEstimator(c.P, c.Settings());
                SquareRootReference.Feed(est, c, 0, c.N);
                tally.Add(CompareWithBatch(est, c, c.N, c.Penalty, useCachedSolve: true));
            });
            tally.Report("p = 16");
            Assert.True(tally.Compared > 0);
        }

        /// <summary>Counts compared and skipped comparisons and the largest difference/bound ratio, and prints them.</summary>
        private sealed class Tally
        {
            public int Compared { get; private set; }

            public int Skipped { get; private set; }

            public double Worst { get; private set; }

            public void Add(double ratio)
            {
                if (double.IsNaN(ratio))
                {
                    Skipped++;
                }
                else
                {
                    Compared++;
                    Worst = Math.Max(Worst, ratio);
                }
            }

            public void Report(string label) => TestContext.Current.TestOutputHelper?.WriteLine(FormattableString.Invariant(
                $"{label}: {Compared} comparisons, {Skipped} skipped by the rule; largest |θ_SRIF − θ_batch| / bound = {Worst:E3}"));
        }

        private static void CompareSpectra(Matrix<double> factor, Matrix<double> design, int n, string label)
        {
            double[] sf = factor.Svd(false).S.ToArray();
            double[] sd = design.Svd(false).S.ToArray();
            int order = factor.ColumnCount;
            double e = 2.0 * 10.0 * (order + Math.Sqrt(n)) * ToleranceRule.Eps * sd[0];
            for (int k = 0; k < order; k++)
            {
                Assert.True(Math.Abs(sf[k] - sd[k]) <= e, FormattableString.Invariant($"{label}: s_{k} {sf[k]:R} vs {sd[k]:R}, bound {e:E3}"));
            }

            double smin = sd[order - 1];
            if (smin > 2.0 * e)
            {
                double condFactor = sf[0] / sf[order - 1];
                double lo = (sd[0] - e) / (smin + e);
                double hi = (sd[0] + e) / (smin - e);
                Assert.InRange(condFactor, lo, hi);
            }
        }

        /// <summary>Compares the estimator (cached solve, or a caller-given penalty) with the batch reference at time m; returns the ratio or NaN (skipped).</summary>
        private static double CompareWithBatch(SquareRootEstimator est, SquareRootCase c, int m, double lambda, bool useCachedSolve)
        {
            double mu = SquareRootReference.TotalPenalty(c, m, lambda);
            ToleranceRule.Problem problem = SquareRootReference.Problem(c, m, mu);
            double[]? a;
            double? objective = null;
            if (useCachedSolve)
            {
                a = SquareRootReference.Solution(est, c, out double ja);
                objective = a is null ? null : ja;
            }
            else
            {
                var theta = new double[c.P];
                a = est.TrySolveWithPenalty(lambda, theta, out double b0, out BreakdownInfo bd) ? SquareRootReference.Full(c, b0, theta) : null;
                Assert.True(a is not null || bd.Kind is BreakdownKind.RankDeficient or BreakdownKind.NonFinite, bd.ToString());
            }

            RidgeFit? fit = SquareRootReference.Batch(c, m, mu, out BreakdownInfo batchBreakdown);
            if (fit is null)
            {
                // The batch QR solver refuses only a numerically rank-deficient problem; then the rule must call for a skip.
                double tolSkip = ToleranceRule.Orthogonal(c.P + (c.Intercept ? 1 : 0), m, problem.Kappa, 0.0);
                Assert.True(2.0 * tolSkip > ToleranceRule.SkipLevel, $"batch refused ({batchBreakdown}) a problem the rule covers: {c}");
                Assert.True(a is null || a.All(double.IsFinite));
                return double.NaN;
            }

            double[] b = SquareRootReference.Full(c, fit);
            double ratio = SquareRootReference.AssertClose(c, m, problem, a, b, fit.ObjectiveValue, objective, $"m={m}, λ={lambda:R}");
            if (useCachedSolve && !double.IsNaN(ratio))
            {
                // Residual sum of squares: RSS = J − μ‖D(θ − θ₀)‖², and ∇J(θ_B) = 0, so to first order
                // |RSS(θ_A) − RSS(θ_B)| ≤ ‖∇RSS(θ_B)‖·‖δθ‖ + λ_max‖δθ‖² with ∇RSS(θ_B) = −2μD²(θ_B − θ₀) (Taylor expansion), plus the rounding
                // of either evaluation (tol_J each).
                double[] d = SquareRootReference.PenaltyScales(c, m, SquareRootReference.EffectiveWeights(c, m));
                int off = c.Intercept ? 1 : 0;
                double g2 = 0.0;
                for (int j = 0; j < c.P; j++)
                {
                    double gj = 2.0 * mu * d[j] * d[j] * (b[j + off] - (c.Prior?[j] ?? 0.0));
                    g2 += gj * gj;
                }

                double thetaNorm = ToleranceRule.Norm(b);
                double tol = ToleranceRule.Orthogonal(b.Length, m, problem.Kappa, problem.Eta(fit.ObjectiveValue, thetaNorm));
                double bound = problem.CoefficientBound(tol, tol, thetaNorm);
                double tolJ = ToleranceRule.Objective(b.Length, m, problem.Y2, fit.ObjectiveValue, problem.LambdaMax, thetaNorm);
                double tolRss = (2.0 * tolJ) + (Math.Sqrt(g2) * bound) + (problem.LambdaMax * bound * bound);
                double rss = est.ResidualSumOfSquares;
                Assert.True(Math.Abs(rss - fit.ResidualSumOfSquares) <= tolRss, FormattableString.Invariant(
                    $"RSS {rss:R} vs batch {fit.ResidualSumOfSquares:R}, bound {tolRss:E3} for {c}"));
            }

            return ratio;
        }
    }
}
