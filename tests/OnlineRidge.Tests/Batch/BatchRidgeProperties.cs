using System;
using System.Linq;
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
        internal static RidgeFit? FitOrLegitimateRefusal(BatchCase c, RidgeSolver solver, ReferenceSolution r)
        {
            var settings = c.Settings(solver);
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
                RidgeFit? fit = FitOrLegitimateRefusal(c, solver, r);
                if (fit is null)
                {
                    continue;
                }

                BatchReference.AssertClose(BatchReference.Augmented(fit), r.Augmented, r.Problem, r.Tolerance(fit.SolverUsed), r.OwnTolerance, $"{solver} vs MathNet QR, {c}");
            }
        }

        /// <summary>
        /// Theorem (ridge as augmented least squares; MATH.md §1.3, §4.5): the minimizer of Σ aᵢ(yᵢ − b₀ − xᵢᵀθ)² + λ‖D(θ − θ₀)‖² is
        /// the least-squares solution of [√A·[1, X]; [0, √λ·D]]·(b₀, θ) ≈ [√A·y; √λ·D·θ₀] (intercept unpenalized). Checked for every
        /// solver, with and without intercept, standardization, prior and forgetting. Reference: MathNet's QR solve of that system.
        /// </summary>
        [Property(Arbitrary = new[] { typeof(BatchGenerators) }, MaxTest = 300, Replay = "(20261202002," + Gamma + ")")]
        public void RidgeEqualsLeastSquaresOfTheAugmentedSystem(BatchCase c)
        {
            Assert.True(c.Penalty > 0.0);
            ReferenceSolution r = BatchReference.Solve(c);
            foreach (RidgeSolver solver in AllSolvers)
            {
                RidgeFit? fit = FitOrLegitimateRefusal(c, solver, r);
                if (fit is null)
                {
                    continue;
                }

                BatchReference.AssertClose(BatchReference.Augmented(fit), r.Augmented, r.Problem, r.Tolerance(fit.SolverUsed), r.OwnTolerance, $"{solver} vs MathNet QR, {c}");

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
