using System;
using System.Linq;
using MathNet.Numerics.LinearAlgebra;
using OnlineRidge.Tests.Properties;
using Xunit;

namespace OnlineRidge.Tests.Support
{
    /// <summary>
    /// An independent reference solution of a batch ridge problem: the least-squares solution of the stacked system
    /// [√A·[1, X]; [0, √λ·D]]·(b₀, θ) ≈ [√A·y; √λ·D·θ₀] by MathNet.Numerics' Householder QR (a general-purpose reference library;
    /// MATH.md §1.3 for the stacked form, §4.5 for the unpenalized intercept and the standardized metric D).
    /// Everything here is computed from the raw data with textbook formulas, never with the code under test.
    /// </summary>
    public sealed class ReferenceSolution
    {
        internal ReferenceSolution(bool intercept, Vector<double> solution, Matrix<double> design, Vector<double> rhs, double[] a, double[] d, double rss, double penaltyTerm)
        {
            HasIntercept = intercept;
            Augmented = solution.ToArray();
            Theta = intercept ? Augmented.Skip(1).ToArray() : Augmented;
            Intercept = intercept ? Augmented[0] : 0.0;
            Design = design;
            Rhs = rhs;
            EffectiveWeights = a;
            Scales = d;
            ResidualSumOfSquares = rss;
            PenaltyTerm = penaltyTerm;
            Objective = rss + penaltyTerm;
            Problem = new ToleranceRule.Problem(design.TransposeThisAndMultiply(design), rhs * rhs);
        }

        public bool HasIntercept { get; }

        /// <summary>(b₀, θ) with an intercept, θ without.</summary>
        public double[] Augmented { get; }

        public double[] Theta { get; }

        public double Intercept { get; }

        /// <summary>The stacked design [√A·[1, X]; [0, √λ·D]].</summary>
        public Matrix<double> Design { get; }

        public Vector<double> Rhs { get; }

        /// <summary>aᵢ = wᵢ·βⁿ⁻¹⁻ⁱ.</summary>
        public double[] EffectiveWeights { get; }

        /// <summary>The penalty metric D (weighted population SD, RMS, or 1).</summary>
        public double[] Scales { get; }

        /// <summary>Σ aᵢ(yᵢ − b₀ − xᵢᵀθ)² at the reference solution.</summary>
        public double ResidualSumOfSquares { get; }

        /// <summary>λ‖D(θ − θ₀)‖² at the reference solution.</summary>
        public double PenaltyTerm { get; }

        /// <summary>J* = RSS + penalty term.</summary>
        public double Objective { get; }

        /// <summary>H = design ᵀ design (the batch Hessian as the (b₀, θ) problem sees it) and Y² = ‖rhs‖².</summary>
        public ToleranceRule.Problem Problem { get; }

        public int Parameters => Augmented.Length;

        /// <summary>η of MATH.md §10 for this problem.</summary>
        public double Eta => Problem.Eta(Objective, ToleranceRule.Norm(Augmented));

        /// <summary>The §10 tolerance of the class a solver belongs to: Gram for Cholesky, orthogonal for QR and SVD.</summary>
        public double Tolerance(RidgeSolver solverUsed) => solverUsed == RidgeSolver.Cholesky
            ? ToleranceRule.Gram(Parameters, EffectiveWeights.Length, Problem.Kappa)
            : ToleranceRule.Orthogonal(Parameters, EffectiveWeights.Length, Problem.Kappa, Eta);

        /// <summary>The orthogonal-class tolerance of the reference itself (MathNet's Householder QR is backward stable).</summary>
        public double OwnTolerance => ToleranceRule.Orthogonal(Parameters, EffectiveWeights.Length, Problem.Kappa, Eta);
    }

    public static class BatchReference
    {
        /// <summary>aᵢ = wᵢ βⁿ⁻¹⁻ⁱ (MATH.md §0: the newest row has age 0).</summary>
        public static double[] EffectiveWeights(BatchCase c) =>
            Enumerable.Range(0, c.N).Select(i => c.Weight(i) * Math.Pow(c.Beta, c.N - 1 - i)).ToArray();

        /// <summary>
        /// The penalty metric D of MATH.md §4.5: with standardization the weighted population standard deviation (divisor W, with an
        /// intercept) or the weighted root mean square (without); 1 otherwise. Two-pass textbook formula.
        /// </summary>
        public static double[] Scales(BatchCase c, double[] a)
        {
            var d = Enumerable.Repeat(1.0, c.P).ToArray();
            if (!c.Standardize)
            {
                return d;
            }

            double w = a.Sum();
            for (int j = 0; j < c.P; j++)
            {
                double mean = 0.0;
                if (c.Intercept)
                {
                    for (int i = 0; i < c.N; i++)
                    {
                        mean += a[i] * c.X[(i * c.P) + j];
                    }

                    mean /= w;
                }

                double s = 0.0;
                for (int i = 0; i < c.N; i++)
                {
                    double e = c.X[(i * c.P) + j] - mean;
                    s += a[i] * e * e;
                }

                d[j] = Math.Sqrt(s / w);
            }

            return d;
        }

        /// <summary>Solves the stacked system with MathNet's QR (see <see cref="ReferenceSolution"/>).</summary>
        public static ReferenceSolution Solve(BatchCase c)
        {
            double[] a = EffectiveWeights(c);
            double[] d = Scales(c, a);
            int ic = c.Intercept ? 1 : 0;
            int m = c.P + ic;
            int penaltyRows = c.Penalty > 0.0 ? c.P : 0;
            var design = Matrix<double>.Build.Dense(c.N + penaltyRows, m);
            var rhs = Vector<double>.Build.Dense(c.N + penaltyRows);
            for (int i = 0; i < c.N; i++)
            {
                double s = Math.Sqrt(a[i]);
                if (ic == 1)
                {
                    design[i, 0] = s;
                }

                for (int j = 0; j < c.P; j++)
                {
                    design[i, ic + j] = s * c.X[(i * c.P) + j];
                }

                rhs[i] = s * c.Y[i];
            }

            double sl = Math.Sqrt(c.Penalty);
            for (int j = 0; j < penaltyRows; j++)
            {
                design[c.N + j, ic + j] = sl * d[j];
                rhs[c.N + j] = sl * d[j] * (c.Prior?[j] ?? 0.0);
            }

            Vector<double> solution = design.QR().Solve(rhs);
            double rss = 0.0;
            for (int i = 0; i < c.N; i++)
            {
                double r = c.Y[i] - (ic == 1 ? solution[0] : 0.0);
                for (int j = 0; j < c.P; j++)
                {
                    r -= c.X[(i * c.P) + j] * solution[ic + j];
                }

                rss += a[i] * r * r;
            }

            double pen = 0.0;
            for (int j = 0; j < c.P; j++)
            {
                double e = d[j] * (solution[ic + j] - (c.Prior?[j] ?? 0.0));
                pen += c.Penalty * e * e;
            }

            return new ReferenceSolution(c.Intercept, solution, design, rhs, a, d, rss, pen);
        }

        /// <summary>(b₀, θ) of a fit, or θ without an intercept (the layout of <see cref="ReferenceSolution.Augmented"/>).</summary>
        public static double[] Augmented(RidgeFit fit) =>
            fit.HasIntercept ? new[] { fit.Intercept }.Concat(fit.Coefficients).ToArray() : fit.Coefficients.ToArray();

        /// <summary>
        /// Asserts MATH.md §10's coefficient rule ‖θ_A − θ_B‖ ≤ (tol_A + tol_B)·max(‖θ_B‖, Y/√λ_max) for (b₀, θ); when the tolerances
        /// sum to more than 10⁻² the rule carries no information and only finiteness is checked (§10 "Skip"). Returns whether it compared.
        /// </summary>
        public static bool AssertClose(double[] actual, double[] expected, ToleranceRule.Problem problem, double tolActual, double tolExpected, string label)
        {
            Assert.All(actual, v => Assert.True(double.IsFinite(v), $"{label}: non-finite coefficient {v}"));
            if (tolActual + tolExpected > ToleranceRule.SkipLevel)
            {
                return false;
            }

            double bound = problem.CoefficientBound(tolActual, tolExpected, ToleranceRule.Norm(expected));
            double distance = ToleranceRule.Distance(actual, expected);
            Assert.True(
                distance <= bound,
                $"{label}: |difference| = {distance:E3} > bound {bound:E3} (kappa {problem.Kappa:E3}, tolerances {tolActual:E2} + {tolExpected:E2}); " +
                $"actual [{string.Join(", ", actual.Select(v => v.ToString("G10", System.Globalization.CultureInfo.InvariantCulture)))}], " +
                $"expected [{string.Join(", ", expected.Select(v => v.ToString("G10", System.Globalization.CultureInfo.InvariantCulture)))}]");
            return true;
        }

        /// <summary>
        /// A Cholesky refusal is legitimate only when the problem really is that ill-conditioned. The solver factors the centered, scaled
        /// Hessian, whose condition is at most p·κ(H) of the raw (b₀, θ) Hessian: the centered block is a Schur complement (its
        /// eigenvalues lie within H's), and diagonal (Jacobi) scaling is within a factor p of the best scaling (van der Sluis 1969, from
        /// memory). The estimate is a lower bound of that condition. So IllConditioned needs p·κ ≥ the limit; a non-positive pivot
        /// needs p·κ ≳ 1/(20 (n + p^1.5) ε) (Cholesky succeeds below that level: Higham 2002, Thm 10.7, from memory, plus the
        /// rounding of forming the Gram matrix from n rows).
        /// </summary>
        public static void AssertLegitimateCholeskyRefusal(BatchCase c, ReferenceSolution r, BreakdownInfo bd, double limit)
        {
            double bound = c.P * r.Problem.Kappa;
            switch (bd.Kind)
            {
                case BreakdownKind.IllConditioned:
                    Assert.True(bd.ConditionEstimate > limit, $"IllConditioned reported with estimate {bd.ConditionEstimate:E3} within the limit {limit:E3}");
                    Assert.True(bound * (1.0 + 1e-6) >= limit, $"Cholesky refused as ill-conditioned (estimate {bd.ConditionEstimate:E3}) a problem with p*kappa = {bound:E3} below the limit {limit:E3}: {c}");
                    break;
                case BreakdownKind.NotPositiveDefinite:
                    double level = 1.0 / (20.0 * (c.N + Math.Pow(c.P, 1.5)) * ToleranceRule.Eps);
                    Assert.True(bound >= level, $"Cholesky reported a non-positive pivot ({bd}) for p*kappa = {bound:E3} < {level:E3}: {c}");
                    break;
                default:
                    Assert.Fail($"Cholesky failed with {bd.Kind} ({bd}) on {c}");
                    break;
            }
        }
    }
}
