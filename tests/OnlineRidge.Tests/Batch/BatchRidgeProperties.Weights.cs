using System;
using System.Collections.Generic;
using System.Linq;
using FsCheck.Xunit;
using OnlineRidge.Tests.Properties;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Batch
{
    /// <summary>This part: what sample weights and the forgetting factor mean.</summary>
    public partial class BatchRidgeProperties
    {
        /// <summary>Compares the (b₀, θ) of two fits of problems with the same exact solution, each within its own §10 tolerance.</summary>
        private static void AssertSameSolution(RidgeFit fa, ReferenceSolution ra, RidgeFit fb, ReferenceSolution rb, string label)
        {
            double tolA = ra.Tolerance(fa.SolverUsed);
            double tolB = rb.Tolerance(fb.SolverUsed);
            if (tolA + tolB > ToleranceRule.SkipLevel)
            {
                return;
            }

            double bound = (tolA * RuleScale(ra)) + (tolB * RuleScale(rb));
            double distance = ToleranceRule.Distance(BatchReference.Augmented(fa), BatchReference.Augmented(fb));
            Assert.True(distance <= bound, $"{label}: difference {distance:E3} > {bound:E3}");
        }

        /// <summary>
        /// Theorem (integer weights are replication counts for the point estimate): Σ wᵢ(yᵢ − b₀ − xᵢᵀθ)² with wᵢ = k equals the
        /// unweighted sum over the data with row i repeated k times (k = 0 drops it), and the weighted means and standard deviations
        /// of the standardization are the replicated ones; hence the same coefficients and intercept (β = 1).
        /// </summary>
        [Property(Arbitrary = new[] { typeof(BatchGenerators) }, MaxTest = 200, Replay = "(20261202007," + Gamma + ")")]
        public void IntegerWeightsEqualReplicatedRows(BatchCase generated)
        {
            BatchCase c = generated.WithBeta(1.0);
            double[] counts = Enumerable.Range(0, c.N).Select(i => c.WeightKind == WeightKind.Counts ? c.Weights[i] : Math.Ceiling(c.Weight(i))).ToArray();
            c = c.WithWeights(counts, WeightKind.Counts);
            var x = new List<double>();
            var y = new List<double>();
            for (int i = 0; i < c.N; i++)
            {
                for (int k = 0; k < (int)counts[i]; k++)
                {
                    x.AddRange(c.X.Skip(i * c.P).Take(c.P));
                    y.Add(c.Y[i]);
                }
            }

            var replicated = new BatchCase(y.Count, c.P, x.ToArray(), y.ToArray(), Array.Empty<double>(), WeightKind.Unit, c.Design, c.Penalty, 1.0, c.Intercept, c.Standardize, c.Prior);
            ReferenceSolution rc = BatchReference.Solve(c);
            ReferenceSolution rr = BatchReference.Solve(replicated);
            foreach (RidgeSolver solver in AllSolvers)
            {
                RidgeFit? fc = FitOrLegitimateRefusal(c, solver, rc);
                RidgeFit? fr = FitOrLegitimateRefusal(replicated, solver, rr);
                if (fc is not null && fr is not null)
                {
                    AssertSameSolution(fc, rc, fr, rr, $"{solver}, weighted vs replicated ({replicated.N} rows): {c}");
                    Assert.Equal(fr.WeightSum, fc.WeightSum);
                }
            }
        }

        /// <summary>
        /// Definition check (MATH.md §0): forgetting factor β gives row i the effective weight wᵢ·βⁿ⁻¹⁻ⁱ (the newest row age 0), with a
        /// penalty that does not decay (regime C). So a fit with β equals a fit with β = 1 and the explicit weights wᵢ·βⁿ⁻¹⁻ⁱ, in
        /// coefficients, intercept, RSS and objective (standard errors differ by design: the weights mean different noise models, §6).
        /// </summary>
        [Property(Arbitrary = new[] { typeof(BatchGenerators) }, MaxTest = 200, Replay = "(20261202008," + Gamma + ")")]
        public void ForgettingFactorEqualsExplicitExponentialWeights(BatchCase generated)
        {
            BatchCase c = generated.Beta == 1.0 ? generated.WithBeta(0.97) : generated;
            double[] explicitWeights = BatchReference.EffectiveWeights(c);
            BatchCase e = c.WithBeta(1.0).WithWeights(explicitWeights, WeightKind.Continuous);
            ReferenceSolution rc = BatchReference.Solve(c);
            ReferenceSolution re = BatchReference.Solve(e);
            foreach (RidgeSolver solver in AllSolvers)
            {
                RidgeFit? fc = FitOrLegitimateRefusal(c, solver, rc);
                RidgeFit? fe = FitOrLegitimateRefusal(e, solver, re);
                if (fc is null || fe is null)
                {
                    continue;
                }

                AssertSameSolution(fc, rc, fe, re, $"{solver}, beta {c.Beta} vs explicit weights: {c}");
                double tolJ = ToleranceRule.Objective(rc.Parameters, c.N, rc.Problem.Y2, rc.Objective, rc.Problem.LambdaMax, ToleranceRule.Norm(rc.Augmented));
                double f = fc.SolverUsed == RidgeSolver.Cholesky ? 1.0 + rc.Problem.Kappa : 1.0;
                if (rc.Tolerance(fc.SolverUsed) <= ToleranceRule.SkipLevel)
                {
                    Assert.True(Math.Abs(fc.ObjectiveValue - fe.ObjectiveValue) <= 2.0 * f * tolJ, $"{solver}: objective {fc.ObjectiveValue:R} vs {fe.ObjectiveValue:R}");
                    Assert.True(Math.Abs(fc.ResidualSumOfSquares - fe.ResidualSumOfSquares) <= 2.0 * f * tolJ, $"{solver}: RSS {fc.ResidualSumOfSquares:R} vs {fe.ResidualSumOfSquares:R}");
                }

                double w = rc.EffectiveWeights.Sum();
                Assert.True(Math.Abs(w - fc.WeightSum) <= 10.0 * c.N * ToleranceRule.Eps * w, $"weight sum {fc.WeightSum:R} vs {w:R}");
            }
        }

        /// <summary>
        /// Definition (MATH.md §0: weights enter only through √w·x and √w·y): a row of weight 0 contributes nothing, whatever finite values it
        /// holds. Overwriting the zero-weight rows with extreme finite values (±double.MaxValue, ±10³⁰⁰; missing-data sentinels) changes
        /// nothing: coefficients, intercept, RSS and the degrees of freedom equal those of the same problem with ordinary values there.
        /// (Found the standardization scale turning NaN through 0·∞.)
        /// </summary>
        [Property(Arbitrary = new[] { typeof(BatchGenerators) }, MaxTest = 200, Replay = "(20261202013," + Gamma + ")")]
        public void ZeroWeightRowsDoNotTakePartWhateverTheirValues(BatchCase generated)
        {
            double[] w = Enumerable.Range(0, generated.N).Select(i => generated.Weight(i)).ToArray();
            for (int i = 0; i < generated.N && w.Count(v => v == 0.0) < 2; i += 3)
            {
                if (w.Count(v => v > 0.0) > generated.P + 2)
                {
                    w[i] = 0.0;
                }
            }

            BatchCase c = generated.WithWeights(w, WeightKind.Continuous);
            double[] sentinels = { double.MaxValue, -double.MaxValue, 1e300, -1e300 };
            double[] x = (double[])c.X.Clone();
            double[] y = (double[])c.Y.Clone();
            int k = 0;
            for (int i = 0; i < c.N; i++)
            {
                if (w[i] == 0.0)
                {
                    for (int j = 0; j < c.P; j++)
                    {
                        x[(i * c.P) + j] = sentinels[k++ % sentinels.Length];
                    }

                    y[i] = sentinels[k++ % sentinels.Length];
                }
            }

            BatchCase s = c.WithData(x, y);
            ReferenceSolution r = BatchReference.Solve(c);
            foreach (RidgeSolver solver in AllSolvers)
            {
                RidgeFit? fc = FitOrLegitimateRefusal(c, solver, r);
                if (fc is null)
                {
                    continue;
                }

                Assert.True(BatchRidge.TryFit(s.View, s.Y, s.Settings(solver), s.Weights, out RidgeFit? fs, out BreakdownInfo bd), $"{solver}: {bd} with sentinels in zero-weight rows: {c}");
                AssertSameSolution(fs, r, fc, r, $"{solver}, sentinels in zero-weight rows: {c}");
                double tol = r.Tolerance(fc.SolverUsed);
                Assert.True(Math.Abs(fs.ResidualSumOfSquares - fc.ResidualSumOfSquares) <= (tol * fc.ResidualSumOfSquares) + (1e3 * ToleranceRule.Eps * ResidualScale(c, r)), $"{solver}: RSS {fs.ResidualSumOfSquares:R} vs {fc.ResidualSumOfSquares:R}");
                Assert.Equal(fc.DiscountedCount, fs.DiscountedCount);
                Assert.True(Math.Abs(fs.EffectiveDegreesOfFreedom - fc.EffectiveDegreesOfFreedom) <= tol * fc.EffectiveDegreesOfFreedom, $"{solver}: df {fs.EffectiveDegreesOfFreedom:R} vs {fc.EffectiveDegreesOfFreedom:R}");
            }
        }

        /// <summary>
        /// Contract (BatchRidge remarks): the input is not copied and not modified, and the same inputs give the same bits. Every solver,
        /// with TryFit and Fit; a breakdown must leave the inputs unchanged too.
        /// </summary>
        [Property(Arbitrary = new[] { typeof(BatchGenerators) }, MaxTest = 100, Replay = "(20261202014," + Gamma + ")")]
        public void FitLeavesItsInputsUnchangedAndIsReproducible(BatchCase c)
        {
            double[] x = (double[])c.X.Clone();
            double[] y = (double[])c.Y.Clone();
            double[] w = (double[])c.Weights.Clone();
            foreach (RidgeSolver solver in AllSolvers)
            {
                bool first = BatchRidge.TryFit(c.View, c.Y, c.Settings(solver), c.Weights, out RidgeFit? f1, out BreakdownInfo b1);
                bool second = BatchRidge.TryFit(c.View, c.Y, c.Settings(solver), c.Weights, out RidgeFit? f2, out BreakdownInfo b2);
                Assert.Equal(first, second);
                Assert.Equal(b1, b2);
                if (first)
                {
                    Assert.Equal(BatchReference.Augmented(f1!), BatchReference.Augmented(f2!));
                    Assert.Equal(f1!.ResidualSumOfSquares, f2!.ResidualSumOfSquares);
                    Assert.Equal(f1.ConditionEstimate, f2.ConditionEstimate);
                    Assert.Equal(f1.EffectiveDegreesOfFreedom, f2.EffectiveDegreesOfFreedom);
                }

                Assert.Equal(x, c.X);
                Assert.Equal(y, c.Y);
                Assert.Equal(w, c.Weights);
            }
        }
    }
}
