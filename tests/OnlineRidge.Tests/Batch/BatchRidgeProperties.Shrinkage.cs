using System;
using System.Linq;
using FsCheck.Xunit;
using OnlineRidge.Tests.Properties;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Batch
{
    /// <summary>This part: how the solution moves with the penalty and with the units of the data.</summary>
    public partial class BatchRidgeProperties
    {
        private static readonly double[] PenaltyGrid = new[] { 0.0 }.Concat(Enumerable.Range(-5, 11).Select(k => Math.Pow(10.0, k))).ToArray();

        /// <summary>max(‖θ̂‖, Y/√λ_max): the scale the §10 coefficient rule multiplies its tolerance with.</summary>
        private static double RuleScale(ReferenceSolution r) => Math.Max(ToleranceRule.Norm(r.Augmented), Math.Sqrt(r.Problem.Y2 / r.Problem.LambdaMax));

        /// <summary>
        /// Theorem (Hoerl and Kennard 1970; the two-point exchange argument for any penalized least squares): as λ increases, the
        /// penalized length ‖D(θ̂(λ) − θ₀)‖ is non-increasing and the weighted RSS is non-decreasing. Checked on a sorted grid
        /// λ ∈ {0, 10⁻⁵, …, 10⁵} with the QR solver. Allowed violations are rounding level only: each θ̂(λ) is within
        /// e = tol·max(‖θ̂‖, Y/√λ_max) of the exact minimizer (§10, κ and η of that λ by MathNet), so the length may rise by at most
        /// max(D)·(e₁ + e₂), and RSS (a quadratic in θ with gradient 2·X̃ᵀA·r) may fall by at most Σ (2√(RSS·λ_max)·e + λ_max·e²)
        /// plus the rounding of its own sum, 10·n·ε·RSS.
        /// </summary>
        [Property(Arbitrary = new[] { typeof(BatchGenerators) }, MaxTest = 150, Replay = "(20261202004," + Gamma + ")")]
        public void HoerlKennardLengthShrinksAndRssGrowsWithPenalty(BatchCase generated)
        {
            double previousLength = double.PositiveInfinity;
            double previousRss = double.NegativeInfinity;
            double previousError = 0.0;
            double previousLambdaMax = 0.0;
            for (int k = 0; k < PenaltyGrid.Length; k++)
            {
                BatchCase c = generated.WithPenalty(PenaltyGrid[k]);
                ReferenceSolution r = BatchReference.Solve(c);
                RidgeFit fit = BatchRidge.Fit(c.View, c.Y, c.Settings(RidgeSolver.Qr), c.Weights);
                double tol = r.Tolerance(RidgeSolver.Qr);
                if (tol > ToleranceRule.SkipLevel)
                {
                    previousLength = double.PositiveInfinity;
                    previousRss = double.NegativeInfinity;
                    continue;
                }

                double error = tol * RuleScale(r);
                double length = Math.Sqrt(fit.Coefficients.Select((t, j) => Math.Pow(r.Scales[j] * (t - (c.Prior?[j] ?? 0.0)), 2)).Sum());
                double rss = fit.ResidualSumOfSquares;
                double lengthSlack = r.Scales.Max() * (error + previousError);
                Assert.True(
                    length <= previousLength + lengthSlack,
                    $"‖D(θ − θ0)‖ rose from {previousLength:R} to {length:R} (slack {lengthSlack:E3}) at lambda {PenaltyGrid[k]:E1}: {c}");
                double lambdaMax = Math.Max(r.Problem.LambdaMax, previousLambdaMax);
                double rssSlack = (2.0 * Math.Sqrt(Math.Max(rss, 0.0) * lambdaMax) * (error + previousError))
                    + (lambdaMax * ((error * error) + (previousError * previousError)))
                    + (10.0 * c.N * ToleranceRule.Eps * (Math.Abs(rss) + Math.Abs(previousRss)));
                Assert.True(
                    rss >= previousRss - rssSlack,
                    $"RSS fell from {previousRss:R} to {rss:R} (slack {rssSlack:E3}) at lambda {PenaltyGrid[k]:E1}: {c}");
                previousLength = length;
                previousRss = rss;
                previousError = error;
                previousLambdaMax = r.Problem.LambdaMax;
            }
        }

        /// <summary>
        /// Theorem (scale invariance of the standardized ridge, MATH.md §4.5): standardization measures column j in units of its own
        /// weighted standard deviation (or RMS), so multiplying x_j by c &gt; 0 (and θ₀ⱼ by 1/c) divides θ̂ⱼ by c and leaves every other
        /// coefficient and the intercept unchanged, for any λ &gt; 0. Each fit is within e = tol·max(‖θ̂‖, Y/√λ_max) of its exact
        /// solution (§10, κ and η of its own problem by MathNet); mapping the scaled fit back multiplies its error by at most max(1, c).
        /// </summary>
        [Property(Arbitrary = new[] { typeof(BatchGenerators) }, MaxTest = 200, Replay = "(20261202005," + Gamma + ")")]
        public void StandardizedRidgeIsInvariantToRegressorUnits(BatchCase generated, byte column, byte exponent)
        {
            BatchCase a = generated.WithStandardize(true);
            int j = column % a.P;
            double factor = Math.Pow(10.0, ((exponent % 9) - 4) / 2.0) * 1.37;
            double[] x = (double[])a.X.Clone();
            for (int i = 0; i < a.N; i++)
            {
                x[(i * a.P) + j] *= factor;
            }

            double[]? prior = a.Prior?.Select((v, k) => k == j ? v / factor : v).ToArray();
            BatchCase b = a.WithData(x, a.Y).WithPrior(prior);
            ReferenceSolution ra = BatchReference.Solve(a);
            ReferenceSolution rb = BatchReference.Solve(b);
            foreach (RidgeSolver solver in AllSolvers)
            {
                RidgeFit? fa = FitOrLegitimateRefusal(a, solver, ra);
                RidgeFit? fb = FitOrLegitimateRefusal(b, solver, rb);
                if (fa is null || fb is null)
                {
                    continue;
                }

                double tolA = ra.Tolerance(fa.SolverUsed);
                double tolB = rb.Tolerance(fb.SolverUsed);
                if (tolA + tolB > ToleranceRule.SkipLevel)
                {
                    continue;
                }

                double[] mapped = BatchReference.Augmented(fb);
                mapped[(a.Intercept ? 1 : 0) + j] *= factor;
                double bound = (tolA * RuleScale(ra)) + (Math.Max(1.0, factor) * tolB * RuleScale(rb));
                double distance = ToleranceRule.Distance(BatchReference.Augmented(fa), mapped);
                Assert.True(distance <= bound, $"{solver}: column {j} scaled by {factor:R}: difference {distance:E3} > {bound:E3}; {a}");
            }
        }

        /// <summary>
        /// Theorem (equivariance in the output units): the objective is homogeneous of degree 2 in (y, b₀, θ, θ₀), so multiplying y and
        /// θ₀ by c &gt; 0 multiplies θ̂ and b̂₀ by c, for every λ, standardized or not. Tolerances as in the regressor-scaling property;
        /// the scaled problem's error divided by c is its tolerance times the original scale.
        /// </summary>
        [Property(Arbitrary = new[] { typeof(BatchGenerators) }, MaxTest = 200, Replay = "(20261202006," + Gamma + ")")]
        public void RidgeIsEquivariantToOutputUnits(BatchCase generated, byte exponent)
        {
            BatchCase a = generated.WithStandardize(true);
            double factor = Math.Pow(10.0, ((exponent % 13) - 6) / 2.0) * 1.37;
            BatchCase b = a.WithData(a.X, a.Y.Select(v => v * factor).ToArray()).WithPrior(a.Prior?.Select(v => v * factor).ToArray());
            ReferenceSolution ra = BatchReference.Solve(a);
            ReferenceSolution rb = BatchReference.Solve(b);
            foreach (RidgeSolver solver in AllSolvers)
            {
                RidgeFit? fa = FitOrLegitimateRefusal(a, solver, ra);
                RidgeFit? fb = FitOrLegitimateRefusal(b, solver, rb);
                if (fa is null || fb is null)
                {
                    continue;
                }

                double tolA = ra.Tolerance(fa.SolverUsed);
                double tolB = rb.Tolerance(fb.SolverUsed);
                if (tolA + tolB > ToleranceRule.SkipLevel)
                {
                    continue;
                }

                double[] mapped = BatchReference.Augmented(fb).Select(v => v / factor).ToArray();
                double bound = (tolA * RuleScale(ra)) + (tolB * RuleScale(rb) / factor);
                double distance = ToleranceRule.Distance(BatchReference.Augmented(fa), mapped);
                Assert.True(distance <= bound, $"{solver}: y scaled by {factor:R}: difference {distance:E3} > {bound:E3}; {a}");
            }
        }
    }
}
