using System;
using System.Linq;
using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using OnlineRidge.Tests.Properties;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Batch
{
    /// <summary>
    /// FsCheck properties of the batch ridge estimator: each compares it against an independent reference (MathNet.Numerics' QR of the
    /// stacked system, see <see cref="BatchReference"/>) or against a textbook identity, within MATH.md §10's tolerances computed from
    /// the data (κ, η, Y by MathNet), never from the code under test. Generators: <see cref="BatchGenerators"/>.
    /// This part: equivalence with least squares on the stacked system, and agreement of the solvers.
    /// </summary>
    public partial class BatchRidgeProperties
    {
        /// <summary>Golden-ratio gamma of the SplitMix generator behind FsCheck's Replay (odd, as the generator requires).</summary>
        internal const string Gamma = "11400714819323198485";

        internal static readonly RidgeSolver[] AllSolvers = { RidgeSolver.Cholesky, RidgeSolver.Qr, RidgeSolver.Svd, RidgeSolver.Auto };

        /// <summary>
        /// Fits with one solver. Cholesky may refuse, but only legitimately (see <see cref="BatchReference.AssertLegitimateCholeskyRefusal"/>);
        /// every other solver must succeed on these full-rank problems. Returns null when Cholesky refused.
        /// </summary>
        internal static RidgeFit? FitOrLegitimateRefusal(BatchCase c, RidgeSolver solver, ReferenceSolution r, int refinementSteps = 3)
        {
            var settings = c.Settings(solver, refinementSteps);
            if (BatchRidge.TryFit(c.View, c.Y, settings, c.Weights, out RidgeFit? fit, out BreakdownInfo bd))
            {
                Assert.NotEqual(RidgeSolver.Auto, fit.SolverUsed);
                Assert.True(solver == RidgeSolver.Auto || fit.SolverUsed == solver, $"asked for {solver}, ran {fit.SolverUsed}");
                return fit;
            }

            Assert.True(solver == RidgeSolver.Cholesky, $"{solver} broke down ({bd}) on a full-rank problem (kappa {r.Problem.Kappa:E3}): {c}");
            BatchReference.AssertLegitimateCholeskyRefusal(c, r, bd, settings.CholeskyConditionLimit);
            return null;
        }

        /// <summary>
        /// Guard against vacuous properties: MATH.md §10 skips a comparison whose tolerances sum to more than 10⁻², so the generator
        /// must keep most problems below that level. On 300 fixed-seed draws at full size, at least 90 % must be informative for the
        /// orthogonal class (QR, SVD) and 75 % for the Gram class (Cholesky), and every design kind must occur, with a wide spread of κ.
        /// </summary>
        [Fact]
        public void GeneratedProblemsMostlyCarryInformation()
        {
            BatchCase[] cases = Gen.Sample(BatchGenerators.Case, 300, new Rnd(20261202UL, 11400714819323198485UL), 100);
            Assert.Equal(300, cases.Length);
            var references = cases.Select(BatchReference.Solve).ToArray();
            int orthogonal = references.Count(r => 2.0 * r.OwnTolerance <= ToleranceRule.SkipLevel);
            int gram = references.Count(r => r.Tolerance(RidgeSolver.Cholesky) + r.OwnTolerance <= ToleranceRule.SkipLevel);
            Assert.True(orthogonal >= 270, $"only {orthogonal}/300 problems informative for QR/SVD");
            Assert.True(gram >= 225, $"only {gram}/300 problems informative for Cholesky");
            Assert.All(Enum.GetValues<BatchDesignKind>(), k => Assert.Contains(cases, c => c.Design == k));
            Assert.Contains(references, r => r.Problem.Kappa > 1e8);
            Assert.Contains(references, r => r.Problem.Kappa < 10.0);
            Assert.Contains(cases, c => c.P == 1);
            Assert.Contains(cases, c => c.P == 20);
            Assert.Contains(cases, c => c.Beta < 1.0 && c.Prior is not null && c.Intercept && c.Standardize && c.Weights.Any(w => w == 0.0));
        }

        /// <summary>
        /// Theorem (Gauss; normal equations): with penalty 0 the estimate is the weighted least-squares solution of
        /// √A·[1, X]·(b₀, θ) ≈ √A·y, whatever the standardization, forgetting or prior (the prior only matters through the penalty).
        /// Reference: MathNet's Householder QR least-squares solve of that system.
        /// </summary>
        [Property(Arbitrary = new[] { typeof(BatchGenerators) }, MaxTest = 300, Replay = "(20261202001," + Gamma + ")")]
        public void ZeroPenaltyEqualsWeightedOrdinaryLeastSquares(BatchCase generated)
        {
            BatchCase c = generated.WithPenalty(0.0);
            ReferenceSolution r = BatchReference.Solve(c);
            foreach (RidgeSolver solver in AllSolvers)
            {
                // The solver alone (no refinement) is within its own class tolerance too.
                RidgeFit? unrefined = FitOrLegitimateRefusal(c, solver, r, refinementSteps: 0);
                if (unrefined is not null)
                {
                    BatchReference.AssertClose(BatchReference.Augmented(unrefined), r.Augmented, r.Problem, r.Tolerance(unrefined.SolverUsed), r.OwnTolerance, $"{solver} without refinement vs MathNet QR, {c}");
                }

                RidgeFit? fit = FitOrLegitimateRefusal(c, solver, r);
                if (fit is null)
                {
                    continue;
                }

                if (!BatchReference.AssertClose(BatchReference.Augmented(fit), r.Augmented, r.Problem, r.Tolerance(fit.SolverUsed), r.OwnTolerance, $"{solver} vs MathNet QR, {c}"))
                {
                    continue;
                }

                // RSS: at the least-squares minimizer the gradient vanishes, so RSS(θ̂ + δ) = RSS(θ̂) + δᵀHδ exactly, with ‖δ‖ bounded by the
                // coefficient rule; plus the rounding of the residuals themselves, 10(p + √n)ε·Σaᵢ(|yᵢ| + |b₀| + Σ|xᵢⱼθⱼ|)².
                double e = r.Tolerance(fit.SolverUsed) * RuleScale(r);
                double rounding = 10.0 * (r.Parameters + Math.Sqrt(c.N)) * ToleranceRule.Eps * ResidualScale(c, r);
                double rssSlack = (r.Problem.LambdaMax * e * e) + (2.0 * rounding);
                Assert.True(Math.Abs(fit.ResidualSumOfSquares - r.ResidualSumOfSquares) <= rssSlack, $"{solver}: RSS {fit.ResidualSumOfSquares:R} vs {r.ResidualSumOfSquares:R} (slack {rssSlack:E2}), {c}");
                AssertRSquaredDefinition(c, r, fit);
            }
        }

        /// <summary>Σ aᵢ(|yᵢ| + |b₀| + Σⱼ|xᵢⱼθⱼ|)²: the scale of the rounding errors of the weighted residuals.</summary>
        internal static double ResidualScale(BatchCase c, ReferenceSolution r) => Enumerable.Range(0, c.N).Sum(i =>
        {
            double s = Math.Abs(c.Y[i]) + Math.Abs(r.Intercept) + Enumerable.Range(0, c.P).Sum(j => Math.Abs(c.X[(i * c.P) + j] * r.Theta[j]));
            return r.EffectiveWeights[i] * s * s;
        });

        /// <summary>
        /// Definition (RidgeFit.RSquared, as NIST StRD defines it): 1 − RSS/TSS with the weighted TSS Σaᵢ(yᵢ − ȳ_a)² about the weighted
        /// mean with an intercept, and the uncentered Σaᵢyᵢ² without; TSS computed here by the textbook two-pass formula.
        /// </summary>
        internal static void AssertRSquaredDefinition(BatchCase c, ReferenceSolution r, RidgeFit fit)
        {
            double[] a = r.EffectiveWeights;
            double mean = c.Intercept ? Enumerable.Range(0, c.N).Sum(i => a[i] * c.Y[i]) / a.Sum() : 0.0;
            double tss = Enumerable.Range(0, c.N).Sum(i => a[i] * (c.Y[i] - mean) * (c.Y[i] - mean));
            double expected = 1.0 - (fit.ResidualSumOfSquares / tss);
            double tol = 10.0 * c.N * ToleranceRule.Eps * (Enumerable.Range(0, c.N).Sum(i => a[i] * c.Y[i] * c.Y[i]) / tss) * Math.Max(1.0, Math.Abs(1.0 - expected));
            Assert.True(Math.Abs(fit.RSquared - expected) <= tol, $"R² {fit.RSquared:R} vs 1 − RSS/TSS = {expected:R} (tol {tol:E2}), {c}");
        }

        /// <summary>
        /// Theorem (ridge as augmented least squares; MATH.md §1.3, §4.5): the minimizer of Σ aᵢ(yᵢ − b₀ − xᵢᵀθ)² + λ‖D(θ − θ₀)‖² is
        /// the least-squares solution of [√A·[1, X]; [0, √λ·D]]·(b₀, θ) ≈ [√A·y; √λ·D·θ₀] (intercept unpenalized). Checked for every
        /// solver, with and without intercept, standardization, prior and forgetting, and also without iterative refinement (which would
        /// otherwise repair a wrong solve: a QR solver ignoring the prior passes once refined). Reference: MathNet's QR solve of that system.
        /// </summary>
        [Property(Arbitrary = new[] { typeof(BatchGenerators) }, MaxTest = 300, Replay = "(20261202002," + Gamma + ")")]
        public void RidgeEqualsLeastSquaresOfTheAugmentedSystem(BatchCase c)
        {
            Assert.True(c.Penalty > 0.0);
            ReferenceSolution r = BatchReference.Solve(c);
            foreach (RidgeSolver solver in AllSolvers)
            {
                RidgeFit? unrefined = FitOrLegitimateRefusal(c, solver, r, refinementSteps: 0);
                if (unrefined is not null)
                {
                    BatchReference.AssertClose(BatchReference.Augmented(unrefined), r.Augmented, r.Problem, r.Tolerance(unrefined.SolverUsed), r.OwnTolerance, $"{solver} without refinement vs MathNet QR, {c}");
                }

                RidgeFit? fit = FitOrLegitimateRefusal(c, solver, r);
                if (fit is null)
                {
                    continue;
                }

                BatchReference.AssertClose(BatchReference.Augmented(fit), r.Augmented, r.Problem, r.Tolerance(fit.SolverUsed), r.OwnTolerance, $"{solver} vs MathNet QR, {c}");
                AssertRSquaredDefinition(c, r, fit);

                // The reported objective is the minimum J* (MATH.md §10 objective rule, f = 1 + κ for a Gram-class solver, 1 otherwise).
                double f = fit.SolverUsed == RidgeSolver.Cholesky ? 1.0 + r.Problem.Kappa : 1.0;
                double tolJ = ToleranceRule.Objective(r.Parameters, c.N, r.Problem.Y2, r.Objective, r.Problem.LambdaMax, ToleranceRule.Norm(r.Augmented));
                if (r.Tolerance(fit.SolverUsed) + r.OwnTolerance <= ToleranceRule.SkipLevel)
                {
                    Assert.True(
                        Math.Abs(fit.ObjectiveValue - r.Objective) <= tolJ * (f + 1.0),
                        $"{solver}: objective {fit.ObjectiveValue:R} vs reference {r.Objective:R} (tolerance {tolJ * (f + 1.0):E3}), {c}");
                }
            }
        }

        /// <summary>
        /// Theorem (uniqueness of the minimizer of a strictly convex quadratic): Cholesky, QR and SVD solve the same problem, so their
        /// results agree within the sum of their §10 tolerances (Gram class for Cholesky, orthogonal class for QR and SVD), with κ, η
        /// and Y of the problem computed by MathNet.
        /// </summary>
        [Property(Arbitrary = new[] { typeof(BatchGenerators) }, MaxTest = 300, Replay = "(20261202003," + Gamma + ")")]
        public void CholeskyQrAndSvdAgree(BatchCase generated)
        {
            // Half the cases without penalty (ordinary least squares), half with.
            BatchCase c = generated.N % 2 == 0 ? generated.WithPenalty(0.0) : generated;
            ReferenceSolution r = BatchReference.Solve(c);
            var fits = new[] { RidgeSolver.Cholesky, RidgeSolver.Qr, RidgeSolver.Svd }
                .Select(s => FitOrLegitimateRefusal(c, s, r))
                .Where(f => f is not null)
                .Select(f => f!)
                .ToArray();
            for (int a = 0; a < fits.Length; a++)
            {
                for (int b = a + 1; b < fits.Length; b++)
                {
                    BatchReference.AssertClose(
                        BatchReference.Augmented(fits[a]), BatchReference.Augmented(fits[b]), r.Problem,
                        r.Tolerance(fits[a].SolverUsed), r.Tolerance(fits[b].SolverUsed), $"{fits[a].SolverUsed} vs {fits[b].SolverUsed}, {c}");
                }
            }
        }
    }
}
