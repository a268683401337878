using System;
using System.Linq;
using FsCheck.Xunit;
using MathNet.Numerics.LinearAlgebra;
using OnlineRidge.Tests.Properties;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Batch
{
    /// <summary>
    /// This part: degrees of freedom and standard errors against their defining trace and sandwich formulas (MATH.md §6.3–6.4),
    /// evaluated explicitly with MathNet matrices. Tolerance: these are smooth statistics of H⁻¹, so the relative tolerance is
    /// κ × the covariance tolerance 2·tol_G(κ) (MATH.md §10), skipped above 10⁻².
    /// </summary>
    public partial class BatchRidgeProperties
    {
        private static double SmoothStatisticTolerance(int parameters, int rows, double kappa) => kappa * 2.0 * ToleranceRule.Gram(parameters, rows, kappa);

        /// <summary>The rows of the design as the fit sees them, centered on the weighted means when there is an intercept.</summary>
        private static Matrix<double> CenteredDesign(BatchCase c, double[] a)
        {
            double w = a.Sum();
            var x = Matrix<double>.Build.Dense(c.N, c.P, (i, j) => c.X[(i * c.P) + j]);
            if (c.Intercept)
            {
                for (int j = 0; j < c.P; j++)
                {
                    double m = Enumerable.Range(0, c.N).Sum(i => a[i] * x[i, j]) / w;
                    for (int i = 0; i < c.N; i++)
                    {
                        x[i, j] -= m;
                    }
                }
            }

            return x;
        }

        /// <summary>
        /// Theorem (effective degrees of freedom of a linear smoother, Hastie and Tibshirani 1990; MATH.md §6.4): df(λ) = tr(S_λ) with
        /// the hat matrix S_λ = X̃(X̃ᵀAX̃ + λD²)⁻¹X̃ᵀA (n × n, formed explicitly with MathNet; X̃ centered with an intercept), plus 1 for
        /// the unpenalized intercept. Also: df(0) = p + 1 and ν = n − p − 1 for ordinary least squares with intercept and unit weights.
        /// </summary>
        [Property(Arbitrary = new[] { typeof(BatchGenerators) }, MaxTest = 200, Replay = "(20261202009," + Gamma + ")")]
        public void EffectiveDegreesOfFreedomEqualsHatMatrixTrace(BatchCase c)
        {
            double[] a = BatchReference.EffectiveWeights(c);
            double[] d = BatchReference.Scales(c, a);
            Matrix<double> xt = CenteredDesign(c, a);
            Matrix<double> ax = Matrix<double>.Build.DiagonalOfDiagonalArray(a) * xt;
            Matrix<double> m = xt.TransposeThisAndMultiply(ax) + (c.Penalty * Matrix<double>.Build.DiagonalOfDiagonalArray(d.Select(v => v * v).ToArray()));
            double kappa = m.ConditionNumber();
            Matrix<double> hat = xt * m.Inverse() * ax.Transpose();
            double expected = hat.Trace() + (c.Intercept ? 1 : 0);
            double tol = SmoothStatisticTolerance(c.P, c.N, kappa);
            var r = BatchReference.Solve(c);
            foreach (RidgeSolver solver in AllSolvers)
            {
                RidgeFit? fit = FitOrLegitimateRefusal(c, solver, r);
                if (fit is null || tol > ToleranceRule.SkipLevel)
                {
                    continue;
                }

                Assert.True(Math.Abs(fit.EffectiveDegreesOfFreedom - expected) <= tol * expected, $"{fit.SolverUsed}: df {fit.EffectiveDegreesOfFreedom:R}, tr(S) {expected:R} (tol {tol:E2}): {c}");
            }

            // Ordinary least squares with intercept and unit weights: df = p + 1 and ν = n − p − 1 (Gauss; textbook).
            BatchCase ols = c.WithPenalty(0.0).WithBeta(1.0).WithWeights(Array.Empty<double>(), WeightKind.Unit);
            ols = new BatchCase(ols.N, ols.P, ols.X, ols.Y, ols.Weights, ols.WeightKind, ols.Design, 0.0, 1.0, true, ols.Standardize, ols.Prior);
            var rols = BatchReference.Solve(ols);
            double tolOls = SmoothStatisticTolerance(ols.P + 1, ols.N, rols.Problem.Kappa);
            foreach (RidgeSolver solver in AllSolvers)
            {
                RidgeFit? fit = FitOrLegitimateRefusal(ols, solver, rols);
                if (fit is null || tolOls > ToleranceRule.SkipLevel)
                {
                    continue;
                }

                Assert.True(Math.Abs(fit.EffectiveDegreesOfFreedom - (ols.P + 1)) <= tolOls * (ols.P + 1), $"{fit.SolverUsed}: OLS df {fit.EffectiveDegreesOfFreedom:R} != p + 1 = {ols.P + 1}");
                Assert.True(Math.Abs(fit.ResidualDegreesOfFreedom - (ols.N - ols.P - 1)) <= tolOls * ols.N, $"{fit.SolverUsed}: OLS nu {fit.ResidualDegreesOfFreedom:R} != n - p - 1 = {ols.N - ols.P - 1}");
            }
        }

        /// <summary>
        /// Theorem (MATH.md §6.4, exact expectation of the weighted RSS under the precision-weight model): ν = N − 2 tr(H⁻¹G₂) +
        /// tr(H⁻¹GH⁻¹G₂) with G = Σ aᵢuᵢuᵢᵀ, G₂ = Σ wᵢβ²⁽ⁿ⁻¹⁻ⁱ⁾uᵢuᵢᵀ, H = G + blockdiag(0, λD²), N = Σ_{wᵢ&gt;0} βⁿ⁻¹⁻ⁱ, u = (1, x − m)
        /// with an intercept (the traces are invariant under the reparametrization b₀ = c₀ − mᵀθ, a similarity), for every β, λ, weight.
        /// </summary>
        [Property(Arbitrary = new[] { typeof(BatchGenerators) }, MaxTest = 200, Replay = "(20261202010," + Gamma + ")")]
        public void ResidualDegreesOfFreedomEqualsTraceFormula(BatchCase c)
        {
            double[] a = BatchReference.EffectiveWeights(c);
            double[] d = BatchReference.Scales(c, a);
            Matrix<double> xt = CenteredDesign(c, a);
            int ic = c.Intercept ? 1 : 0;
            int m = c.P + ic;
            Matrix<double> u = Matrix<double>.Build.Dense(c.N, m, (i, j) => ic == 1 && j == 0 ? 1.0 : xt[i, j - ic]);
            double[] a2 = Enumerable.Range(0, c.N).Select(i => c.Weight(i) * Math.Pow(c.Beta, 2.0 * (c.N - 1 - i))).ToArray();
            Matrix<double> g = u.TransposeThisAndMultiply(Matrix<double>.Build.DiagonalOfDiagonalArray(a) * u);
            Matrix<double> g2 = u.TransposeThisAndMultiply(Matrix<double>.Build.DiagonalOfDiagonalArray(a2) * u);
            Matrix<double> h = g.Clone();
            for (int j = 0; j < c.P; j++)
            {
                h[ic + j, ic + j] += c.Penalty * d[j] * d[j];
            }

            Matrix<double> hinv = h.Inverse();
            double discounted = Enumerable.Range(0, c.N).Where(i => c.Weight(i) > 0.0).Sum(i => Math.Pow(c.Beta, c.N - 1 - i));
            double t1 = (hinv * g2).Trace();
            double t2 = (hinv * g * hinv * g2).Trace();
            double expected = discounted - (2.0 * t1) + t2;
            double tol = SmoothStatisticTolerance(m, c.N, h.ConditionNumber());
            var r = BatchReference.Solve(c);
            foreach (RidgeSolver solver in AllSolvers)
            {
                RidgeFit? fit = FitOrLegitimateRefusal(c, solver, r);
                if (fit is null || tol > ToleranceRule.SkipLevel)
                {
                    continue;
                }

                Assert.True(
                    Math.Abs(fit.ResidualDegreesOfFreedom - expected) <= tol * (discounted + (2.0 * t1) + t2),
                    $"{fit.SolverUsed}: nu {fit.ResidualDegreesOfFreedom:R}, formula {expected:R} (N {discounted:R}, t1 {t1:R}, t2 {t2:R}, tol {tol:E2}): {c}");
                Assert.True(Math.Abs(fit.DiscountedCount - discounted) <= 10.0 * c.N * ToleranceRule.Eps * discounted, $"N {fit.DiscountedCount:R} vs {discounted:R}");
            }
        }

        /// <summary>
        /// Theorem (MATH.md §6.3, covariance of a linear estimator under Var eᵢ = σ²/wᵢ): with λ = 0 (and β &lt; 1 in at least half the
        /// cases; with β = 1 the sandwich reduces to σ̂²·H⁻¹, the textbook weighted-least-squares covariance),
        /// Cov(b̂₀, θ̂) = σ²·H⁻¹G₂H⁻¹ on the intercept-augmented raw design (H = Σ aᵢuᵢuᵢᵀ, G₂ = Σ wᵢβ²⁽ⁿ⁻¹⁻ⁱ⁾uᵢuᵢᵀ, u = (1, x)), with
        /// σ̂² = RSS/ν and ν = N − tr(H⁻¹G₂) (§6.4 with G = H). Everything by MathNet from the raw data; the RSS from the reference
        /// QR solution. Relative tolerance: the smooth-statistic rule plus the rounding level of the RSS, 10(p + √n)ε·Σaᵢ(|yᵢ| + |xᵢ||θ|)²/RSS.
        /// </summary>
        [Property(Arbitrary = new[] { typeof(BatchGenerators) }, MaxTest = 200, Replay = "(20261202011," + Gamma + ")")]
        public void ForgettingStandardErrorsEqualSandwichCovariance(BatchCase generated)
        {
            BatchCase c = generated.WithPenalty(0.0).WithBeta(generated.Beta == 1.0 && generated.N % 2 == 0 ? 0.98 : generated.Beta);
            ReferenceSolution r = BatchReference.Solve(c);
            double[] a = r.EffectiveWeights;
            int ic = c.Intercept ? 1 : 0;
            int m = c.P + ic;
            Matrix<double> u = Matrix<double>.Build.Dense(c.N, m, (i, j) => ic == 1 && j == 0 ? 1.0 : c.X[(i * c.P) + j - ic]);
            double[] a2 = Enumerable.Range(0, c.N).Select(i => c.Weight(i) * Math.Pow(c.Beta, 2.0 * (c.N - 1 - i))).ToArray();
            Matrix<double> h = u.TransposeThisAndMultiply(Matrix<double>.Build.DiagonalOfDiagonalArray(a) * u);
            Matrix<double> g2 = u.TransposeThisAndMultiply(Matrix<double>.Build.DiagonalOfDiagonalArray(a2) * u);
            Matrix<double> hinv = h.Inverse();
            Matrix<double> cov = hinv * g2 * hinv;
            double discounted = Enumerable.Range(0, c.N).Where(i => c.Weight(i) > 0.0).Sum(i => Math.Pow(c.Beta, c.N - 1 - i));
            double t1 = (hinv * g2).Trace();
            double nu = discounted - t1;
            double sigma2 = r.ResidualSumOfSquares / nu;
            double[] expected = Enumerable.Range(0, m).Select(j => Math.Sqrt(sigma2 * cov[j, j])).ToArray();

            double scale2 = Enumerable.Range(0, c.N).Sum(i =>
            {
                double s = Math.Abs(c.Y[i]) + (ic == 1 ? Math.Abs(r.Intercept) : 0.0) + Enumerable.Range(0, c.P).Sum(j => Math.Abs(c.X[(i * c.P) + j] * r.Theta[j]));
                return a[i] * s * s;
            });
            double rssTol = 10.0 * (m + Math.Sqrt(c.N)) * ToleranceRule.Eps * scale2 / r.ResidualSumOfSquares;
            double tol = SmoothStatisticTolerance(m, c.N, h.ConditionNumber()) + rssTol;
            if (!(nu >= 1.0) || !(tol <= ToleranceRule.SkipLevel))
            {
                return;
            }

            foreach (RidgeSolver solver in AllSolvers)
            {
                RidgeFit? fit = FitOrLegitimateRefusal(c, solver, r);
                if (fit is null)
                {
                    continue;
                }

                Assert.True(Math.Abs(fit.ResidualDegreesOfFreedom - nu) <= tol * (discounted + t1), $"{fit.SolverUsed}: nu {fit.ResidualDegreesOfFreedom:R} vs {nu:R}: {c}");
                Assert.NotNull(fit.StandardErrors);
                double[] actual = (c.Intercept ? new[] { fit.InterceptStandardError } : Array.Empty<double>()).Concat(fit.StandardErrors!).ToArray();
                for (int j = 0; j < m; j++)
                {
                    Assert.True(
                        Math.Abs(actual[j] - expected[j]) <= tol * expected[j],
                        $"{fit.SolverUsed}: se[{j}] {actual[j]:R} vs sandwich {expected[j]:R} (tol {tol:E2}): {c}");
                }
            }
        }

        /// <summary>
        /// Definition check (RidgeFit.ConditionEstimate): the estimate is the 2-norm condition number of the weighted, centered (with an
        /// intercept) and standardized design stacked with the penalty rows, √κ(ZᵀAZ + λI) with Z = (X − 1mᵀ)D⁻¹ (D = I without
        /// standardization; only λ &gt; 0 there, where no internal scaling is involved), computed here with MathNet's SVD. The SVD solver
        /// reports it exactly, within the singular-value perturbation bound |δs| ≤ c·ε·s₁ (Weyl; Golub and Van Loan 2013, from memory), so
        /// relatively within 10(p + √n)ε·√κ. The Lanczos estimate (Cholesky, QR) gives a lower bound (Ritz values never exceed the
        /// extreme singular values; for Cholesky up to the Gram-class perturbation of the formed matrix), and the documented accuracy
        /// "usually within a few percent" is checked as a factor of 2 (worst ratio seen over 3000 generated problems: 0.91).
        /// </summary>
        [Property(Arbitrary = new[] { typeof(BatchGenerators) }, MaxTest = 200, Replay = "(20261202012," + Gamma + ")")]
        public void ConditionEstimateIsThatOfTheStandardizedStackedDesign(BatchCase generated)
        {
            BatchCase c = generated.Standardize || generated.Penalty > 0.0 ? generated : generated.WithStandardize(true);
            double[] a = BatchReference.EffectiveWeights(c);
            double[] d = BatchReference.Scales(c, a);
            Matrix<double> xt = CenteredDesign(c, a);
            var stacked = Matrix<double>.Build.Dense(c.N + c.P, c.P, (i, j) =>
                i < c.N ? Math.Sqrt(a[i]) * xt[i, j] / d[j] : (i - c.N == j ? Math.Sqrt(c.Penalty) : 0.0));
            double[] sv = stacked.Svd(false).S.ToArray();
            double exact = sv[0] / sv[^1];
            double tol = 10.0 * (c.P + Math.Sqrt(c.N)) * ToleranceRule.Eps * exact;
            if (tol > ToleranceRule.SkipLevel)
            {
                return;
            }

            var r = BatchReference.Solve(c);
            foreach (RidgeSolver solver in AllSolvers)
            {
                RidgeFit? fit = FitOrLegitimateRefusal(c, solver, r);
                if (fit is null)
                {
                    continue;
                }

                double estimate = fit.ConditionEstimate;
                if (fit.SolverUsed == RidgeSolver.Svd)
                {
                    Assert.True(Math.Abs(estimate - exact) <= tol * exact, $"SVD: condition {estimate:R} vs exact {exact:R}: {c}");
                }
                else
                {
                    // Cholesky factors the formed Gram matrix, perturbed by about ε‖H‖, which moves λ_min by ε·λ_max: Gram class, ε·κ(H) = ε·exact².
                    double classTol = fit.SolverUsed == RidgeSolver.Cholesky ? tol * exact : tol;
                    Assert.True(estimate <= exact * (1.0 + classTol), $"{fit.SolverUsed}: estimate {estimate:R} above the exact {exact:R}: {c}");
                    Assert.True(estimate >= exact / 2.0, $"{fit.SolverUsed}: estimate {estimate:R} far below the exact {exact:R}: {c}");
                }
            }
        }
    }
}
