using System;
using System.Collections.Generic;
using System.Linq;
using FsCheck;
using FsCheck.Fluent;
using MathNet.Numerics.LinearAlgebra;
using OnlineRidge.Tests.Properties;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Recursive
{
    /// <summary>
    /// The coordinates the ridge problem is judged in (MATH.md §4.4–4.5, §10): weighted means m and scales D computed by the test from the data
    /// (two-pass, compensated sums), parameters (γ₀ = b₀ + mᵀθ, γ = Dθ) over the non-excluded columns, regressor rows (1, D⁻¹(x − m)) or D⁻¹x,
    /// penalty Γ = diag(0, λI). In these coordinates H is the Hessian the estimator factors, and the §10 rule applies to the coordinate vector.
    /// </summary>
    internal sealed class RidgeFrame
    {
        private const double ConstantLevel = 1e3 * ToleranceRule.Eps;

        public RidgeFrame(RecursiveData data, int k, double beta, bool intercept, bool standardize, double lambda)
        {
            int p = data.Prior.Length;
            P = p;
            Intercept = intercept;
            A = RecursiveGenerators.EffectiveWeights(data.W, k, beta);
            W = RecursiveReference.Sum(A);
            Mean = new double[p];
            Scale = Enumerable.Repeat(1.0, p).ToArray();
            var excluded = new List<int>();
            for (int j = 0; j < p; j++)
            {
                int col = j;
                if (intercept && W > 0)
                {
                    double m = RecursiveReference.Sum(Enumerable.Range(0, k).Select(i => A[i] * data.X[i][col])) / W;
                    m += RecursiveReference.Sum(Enumerable.Range(0, k).Select(i => A[i] * (data.X[i][col] - m))) / W;
                    Mean[j] = m;
                }

                if (standardize && W > 0)
                {
                    double m = Mean[j];
                    double s = Math.Sqrt(RecursiveReference.Sum(Enumerable.Range(0, k).Select(i => A[i] * (data.X[i][col] - m) * (data.X[i][col] - m))) / W);
                    bool constant = intercept ? s <= ConstantLevel * Math.Sqrt((m * m) + (s * s)) : s == 0.0;
                    if (constant)
                    {
                        excluded.Add(j);
                    }
                    else
                    {
                        Scale[j] = s;
                    }
                }
            }

            Excluded = excluded.ToArray();
            Active = Enumerable.Range(0, p).Except(Excluded).ToArray();
            int offset = intercept ? 1 : 0;
            Dimension = Active.Length + offset;
            Rows = data.X.Take(k).Select(x =>
            {
                var r = new double[Dimension];
                if (intercept)
                {
                    r[0] = 1.0;
                }

                for (int t = 0; t < Active.Length; t++)
                {
                    int j = Active[t];
                    r[t + offset] = (x[j] - Mean[j]) / Scale[j];
                }

                return r;
            }).ToArray();
            var gamma = Matrix<double>.Build.Dense(Dimension, Dimension);
            var prior = new double[Dimension];
            for (int t = 0; t < Active.Length; t++)
            {
                gamma[t + offset, t + offset] = lambda;
                prior[t + offset] = Scale[Active[t]] * data.Prior[Active[t]];
            }

            Problem = Dimension > 0 && W > 0
                ? ToleranceRule.Problem.FromData(Rows, data.Y.Take(k).ToArray(), A, gamma, prior)
                : null;
        }

        public int P { get; }

        public bool Intercept { get; }

        public double[] A { get; }

        public double W { get; }

        public double[] Mean { get; }

        public double[] Scale { get; }

        public int[] Excluded { get; }

        public int[] Active { get; }

        public int Dimension { get; }

        public double[][] Rows { get; }

        public ToleranceRule.Problem? Problem { get; }

        /// <summary>
        /// Allowance for the intercept coordinate γ₀ = b₀ + mᵀθ beyond the §10 rule, which governs the solver's (centered) coordinates: a raw
        /// intercept b₀ = m_y − mᵀθ is a difference of terms of size Σ|mⱼθⱼ|, so its representation and the conversion back to γ₀ carry an
        /// absolute error of order ε(|b₀| + Σ|mⱼθⱼ|) that no solver can avoid (large for offset designs). Budget: 10(d + √m)ε(|b₀| + Σ|mⱼθⱼ|),
        /// the §10 constant applied to that size; 0 without an intercept.
        /// </summary>
        public double InterceptConversion(IReadOnlyList<double> theta, double b0, int m)
        {
            if (!Intercept)
            {
                return 0.0;
            }

            double size = Math.Abs(b0) + Enumerable.Range(0, P).Sum(j => Math.Abs(Mean[j] * theta[j]));
            return 10.0 * (Dimension + Math.Sqrt(m)) * ToleranceRule.Eps * size;
        }

        public double[] Coordinates(IReadOnlyList<double> theta, double b0)
        {
            int offset = Intercept ? 1 : 0;
            var v = new double[Dimension];
            if (Intercept)
            {
                v[0] = b0 + RecursiveReference.Sum(Enumerable.Range(0, P).Select(j => Mean[j] * theta[j]));
            }

            for (int t = 0; t < Active.Length; t++)
            {
                v[t + offset] = Scale[Active[t]] * theta[Active[t]];
            }

            return v;
        }
    }

    /// <summary>
    /// Property tests of <see cref="InformationFormEstimator"/> against <see cref="BatchRidge"/> (MATH.md §5.2 with §4.4–4.5), its merge (§5.3) and
    /// order independence, with the tolerance rule of MATH.md §10 (information form: Gram class; batch QR with refinement: orthogonal class).
    /// </summary>
    public class InformationFormPropertyTests
    {
        internal static RidgeSettings SettingsOf(RecursiveCase c, RecursiveData data) => new()
        {
            Penalty = c.Penalty,
            ForgettingFactor = c.Beta,
            FitIntercept = (c.Seed & 1) == 0,
            Standardize = (c.Seed & 2) == 0,
            Prior = c.PriorScale == 0.0 ? null : data.Prior,

            // Let the estimator answer wherever H is numerically positive definite: refusals are then judged by the skip rule below.
            CholeskyConditionLimit = 1e300,
        };

        internal static PenaltyRegime RegimeOf(RecursiveCase c) => c.Flag ? PenaltyRegime.Decaying : PenaltyRegime.Constant;

        /// <summary>
        /// Compares the estimator's solution after k samples with the batch solution of the first k samples; returns the difference/tolerance ratio
        /// (NaN when the §10 skip rule applied).
        /// </summary>
        internal static double CompareWithBatch(RecursiveCase c, RecursiveData data, InformationFormEstimator est, int k)
        {
            PenaltyRegime regime = RegimeOf(c);
            double lambda = regime == PenaltyRegime.Decaying ? c.Penalty * Math.Pow(c.Beta, k) : c.Penalty;
            var theta = new double[c.P];
            bool solved = est.TrySolve(c.Penalty, regime, theta, out double b0, out BreakdownInfo bd);
            return CompareSolutionWithBatch(c, data, est.Settings, k, lambda, solved, theta, b0, bd);
        }

        /// <summary>
        /// Judges one solution (θ, b₀, or a reported breakdown) of the first k samples with effective penalty λ against the batch solution for the
        /// same settings; returns the difference/tolerance ratio (NaN when the §10 skip rule applied).
        /// </summary>
        internal static double CompareSolutionWithBatch(RecursiveCase c, RecursiveData data, RidgeSettings s, int k, double lambda, bool solved, double[] theta, double b0, BreakdownInfo bd)
        {
            var frame = new RidgeFrame(data, k, c.Beta, s.FitIntercept, s.Standardize, lambda);
            if (!(frame.W > 0))
            {
                // No sample of positive weight yet: the estimator must say so rather than answer.
                Assert.False(solved);
                Assert.Equal(BreakdownKind.RankDeficient, bd.Kind);
                return double.NaN;
            }

            if (solved)
            {
                Assert.All(theta, v => Assert.True(double.IsFinite(v)));
                Assert.True(double.IsFinite(b0));
                Assert.All(frame.Excluded, j => Assert.Equal(0.0, theta[j]));
            }
            else
            {
                Assert.True(bd.Kind is BreakdownKind.NotPositiveDefinite or BreakdownKind.NonFinite, bd.ToString());
            }

            if (frame.Problem is null)
            {
                // Every column excluded (constant): θ = 0 and b₀ = m_y.
                Assert.True(solved);
                return double.NaN;
            }

            ToleranceRule.Problem problem = frame.Problem;
            double tolA = ToleranceRule.Gram(frame.Dimension, k, problem.Kappa);
            if (!(tolA <= ToleranceRule.SkipLevel))
            {
                return double.NaN;
            }

            var batchSettings = new RidgeSettings
            {
                Penalty = lambda,
                ForgettingFactor = c.Beta,
                FitIntercept = s.FitIntercept,
                Standardize = s.Standardize,
                Prior = s.Prior,
                Solver = RidgeSolver.Qr,
            };
            RidgeFit fit = BatchRidge.Fit(new MatrixView(data.RowMajor(k), k, c.P), data.Y.AsSpan(0, k), batchSettings, data.W.AsSpan(0, k));
            Assert.Equal(frame.Excluded, fit.ExcludedColumns);
            double[] reference = frame.Coordinates(fit.Coefficients, fit.Intercept);
            double tolB = ToleranceRule.Orthogonal(frame.Dimension, k, problem.Kappa, problem.Eta(fit.ObjectiveValue, ToleranceRule.Norm(reference)));
            if (tolA + tolB > ToleranceRule.SkipLevel)
            {
                return double.NaN;
            }

            Assert.True(solved, $"k={k}: the estimator refused a problem with κ = {problem.Kappa:E2}: {bd}");
            double[] mine = frame.Coordinates(theta, b0);
            double bound = problem.CoefficientBound(tolA, tolB, ToleranceRule.Norm(reference)) + frame.InterceptConversion(fit.Coefficients, fit.Intercept, k);
            double diff = ToleranceRule.Distance(mine, reference);
            Assert.True(diff <= bound, $"k={k}: ‖θ − θ_batch‖ = {diff:E3} > {bound:E3} (κ {problem.Kappa:E2}, λ {lambda:E2}, intercept {s.FitIntercept}, standardize {s.Standardize})");
            return diff / bound;
        }

        internal static int[] Checkpoints(int n) => new[] { Math.Max(1, n / 3), Math.Max(1, (2 * n) / 3), n }.Distinct().ToArray();

        /// <summary>
        /// Theorem (MATH.md §5.2, §4.4–4.5): solving the accumulated statistics gives the batch ridge solution for the same settings — with and
        /// without an intercept and standardization, λ from 0 and 10⁻⁶ to 10³, forgetting, weights with zeros, in regime C (constant penalty) and
        /// regime D (penalty λβⁿ) — checked at three checkpoints of each stream. Reference: <see cref="BatchRidge"/> (QR, refined).
        /// </summary>
        [RecursiveProperty(Replay = "(5512093,77771)")]
        public Property InformationFormEqualsBatchRidgeSolution() =>
            Prop.ForAll(RecursiveGenerators.Arbitrary(1, 150), c =>
            {
                RecursiveData data = c.Materialize();
                var est = new InformationFormEstimator(c.P, SettingsOf(c, data), RegimeOf(c));
                int[] checkpoints = Checkpoints(data.N);
                int next = 0;
                for (int k = 1; k <= data.N; k++)
                {
                    est.Update(data.X[k - 1], data.Y[k - 1], data.W[k - 1]);
                    if (k == checkpoints[next])
                    {
                        CompareWithBatch(c, data, est, k);
                        next++;
                    }
                }
            });

        /// <summary>
        /// Theorem (MATH.md §5.2, eigen form of the path of §1.4): one eigendecomposition of the scaled Gram matrix gives, for every penalty, the
        /// batch ridge solution for the same settings (λ = c·10ᵏ for k = −3, 0, 3 and λ = 0, both regimes). Reference: <see cref="BatchRidge"/>;
        /// tolerance MATH.md §10 (the eigendecomposition of the Gram matrix is Gram class).
        /// </summary>
        [RecursiveProperty(Replay = "(8675309,424243)")]
        public Property InformationFormPenaltyPathEqualsBatchRidgeForEveryPenalty() =>
            Prop.ForAll(RecursiveGenerators.Arbitrary(1, 150), c =>
            {
                RecursiveData data = c.Materialize();
                var est = new InformationFormEstimator(c.P, SettingsOf(c, data), RegimeOf(c));
                for (int k = 0; k < data.N; k++)
                {
                    est.Update(data.X[k], data.Y[k], data.W[k]);
                }

                double[] penalties = { c.Penalty * 1e-3, c.Penalty, c.Penalty * 1e3, 0.0 };
                var thetas = new double[penalties.Length * c.P];
                var intercepts = new double[penalties.Length];
                bool solved = est.TrySolvePenaltyPath(penalties, RegimeOf(c), thetas, intercepts, out BreakdownInfo bd);
                for (int r = 0; r < penalties.Length; r++)
                {
                    double lambda = RegimeOf(c) == PenaltyRegime.Decaying ? penalties[r] * Math.Pow(c.Beta, data.N) : penalties[r];
                    CompareSolutionWithBatch(c, data, est.Settings, data.N, lambda, solved, thetas.AsSpan(r * c.P, c.P).ToArray(), solved ? intercepts[r] : double.NaN, bd);
                }
            });

        internal static void AssertSameSolution(RecursiveCase c, RecursiveData data, InformationFormEstimator x, InformationFormEstimator y, string what)
        {
            PenaltyRegime regime = RegimeOf(c);
            int n = data.N;
            double lambda = regime == PenaltyRegime.Decaying ? c.Penalty * Math.Pow(c.Beta, n) : c.Penalty;
            var frame = new RidgeFrame(data, n, c.Beta, x.Settings.FitIntercept, x.Settings.Standardize, lambda);
            var t1 = new double[c.P];
            var t2 = new double[c.P];
            bool ok1 = x.TrySolve(c.Penalty, regime, t1, out double b1, out _);
            bool ok2 = y.TrySolve(c.Penalty, regime, t2, out double b2, out _);
            if (frame.Problem is null)
            {
                Assert.Equal(ok1, ok2);
                return;
            }

            double tol = ToleranceRule.Gram(frame.Dimension, n, frame.Problem.Kappa);
            if (!(2 * tol <= ToleranceRule.SkipLevel))
            {
                return;
            }

            Assert.True(ok1 && ok2, $"{what}: a solve failed with κ = {frame.Problem.Kappa:E2}");
            double[] v1 = frame.Coordinates(t1, b1);
            double[] v2 = frame.Coordinates(t2, b2);
            double bound = frame.Problem.CoefficientBound(tol, tol, ToleranceRule.Norm(v1)) + frame.InterceptConversion(t2, b2, n);
            double diff = ToleranceRule.Distance(v1, v2);
            Assert.True(diff <= bound, $"{what}: solutions differ by {diff:E3} > {bound:E3} (κ {frame.Problem.Kappa:E2})");
        }

        /// <summary>
        /// Theorem (MATH.md §5.3, with §4.2 for the centered moments): merging the state of the first s samples with the state of the remaining
        /// n − s samples (aging the earlier one by β^(n−s)) gives the state of one estimator fed all n in order: same solution (two Gram-class
        /// tolerances, MATH.md §10), same counts, and the same squared-forgetting Gram G₂ = Σ β^(2(n−i)) wᵢ x̃ᵢx̃ᵢᵀ (MATH.md §6.2), which is
        /// also checked against its definition computed with LINQ.
        /// </summary>
        [RecursiveProperty(Replay = "(3141592,65359)")]
        public Property InformationFormMergeEqualsSequentialFeed() =>
            Prop.ForAll(RecursiveGenerators.Arbitrary(1, 120), c =>
            {
                RecursiveData data = c.Materialize();
                RidgeSettings settings = SettingsOf(c, data);
                int split = new Random(c.Seed).Next(data.N + 1);
                var earlier = new InformationFormEstimator(c.P, settings, RegimeOf(c), trackSquaredForgettingGram: true);
                var later = new InformationFormEstimator(c.P, settings, RegimeOf(c), trackSquaredForgettingGram: true);
                var whole = new InformationFormEstimator(c.P, settings, RegimeOf(c), trackSquaredForgettingGram: true);
                for (int i = 0; i < data.N; i++)
                {
                    (i < split ? earlier : later).Update(data.X[i], data.Y[i], data.W[i]);
                    whole.Update(data.X[i], data.Y[i], data.W[i]);
                }

                earlier.MergeFrom(later);
                Assert.Equal(whole.SampleCount, earlier.SampleCount);
                double n = data.N;
                double countTol = 10 * (1 + Math.Sqrt(n)) * ToleranceRule.Eps;
                Assert.True(Math.Abs(earlier.WeightSum - whole.WeightSum) <= countTol * whole.WeightSum);
                Assert.True(Math.Abs(earlier.DiscountedCount - whole.DiscountedCount) <= countTol * whole.DiscountedCount);
                AssertSameSolution(c, data, earlier, whole, "merged vs sequential");

                // G₂ against its definition (LINQ): entries agree to 10(d + √n)ε·√(G₂ᵢᵢG₂ⱼⱼ) (a sum of terms bounded by Cauchy–Schwarz).
                int d = settings.FitIntercept ? c.P + 1 : c.P;
                var g2 = new double[d * d];
                var g2Whole = new double[d * d];
                earlier.CopySquaredForgettingGramTo(g2);
                whole.CopySquaredForgettingGramTo(g2Whole);
                double[] a2 = Enumerable.Range(0, data.N).Select(i => data.W[i] * Math.Pow(c.Beta, 2.0 * (data.N - 1 - i))).ToArray();
                double[][] rows = data.X.Select(x => settings.FitIntercept ? new[] { 1.0 }.Concat(x).ToArray() : x).ToArray();
                var reference = new double[d * d];
                for (int i = 0; i < d; i++)
                {
                    for (int j = 0; j < d; j++)
                    {
                        reference[(i * d) + j] = RecursiveReference.Sum(Enumerable.Range(0, data.N).Select(r => a2[r] * rows[r][i] * rows[r][j]));
                    }
                }

                for (int i = 0; i < d; i++)
                {
                    for (int j = 0; j < d; j++)
                    {
                        double scale = Math.Sqrt(reference[(i * d) + i] * reference[(j * d) + j]);
                        double tol = 10 * (d + Math.Sqrt(n)) * ToleranceRule.Eps * scale;
                        Assert.True(Math.Abs(g2[(i * d) + j] - reference[(i * d) + j]) <= tol, $"merged G2[{i},{j}]");
                        Assert.True(Math.Abs(g2Whole[(i * d) + j] - reference[(i * d) + j]) <= tol, $"sequential G2[{i},{j}]");
                    }
                }
            });

        /// <summary>
        /// Theorem (MATH.md §1.1 with β = 1): without forgetting the statistics are plain sums, so the solution does not depend on the order of the
        /// samples; two orders agree within two Gram-class tolerances (MATH.md §10).
        /// </summary>
        [RecursiveProperty(Replay = "(2718281,82845)")]
        public Property InformationFormWithoutForgettingIsOrderIndependent() =>
            Prop.ForAll(RecursiveGenerators.Arbitrary(1, 120), c =>
            {
                c = c with { Beta = 1.0 };
                RecursiveData data = c.Materialize();
                RidgeSettings settings = SettingsOf(c, data);
                var inOrder = new InformationFormEstimator(c.P, settings, RegimeOf(c));
                var shuffled = new InformationFormEstimator(c.P, settings, RegimeOf(c));
                int[] order = Enumerable.Range(0, data.N).ToArray();
                new Random(c.Seed ^ 0x2545F491).Shuffle(order);
                for (int i = 0; i < data.N; i++)
                {
                    inOrder.Update(data.X[i], data.Y[i], data.W[i]);
                    shuffled.Update(data.X[order[i]], data.Y[order[i]], data.W[order[i]]);
                }

                AssertSameSolution(c, data, shuffled, inOrder, "shuffled vs in order");
            });
    }
}
