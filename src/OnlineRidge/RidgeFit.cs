using System;
using System.Collections.Generic;
using OnlineRidge.Internal;

namespace OnlineRidge
{
    /// <summary>
    /// The immutable result of a regularized least-squares fit: coefficients in raw units, intercept, residual statistics,
    /// effective degrees of freedom, condition estimate and the solver that ran.
    /// </summary>
    /// <remarks>All statistics refer to the weighted objective of <see cref="RidgeSettings"/> (weights βⁿ⁻ⁱwᵢ). Thread-safe; holds O(p) memory.</remarks>
    public sealed class RidgeFit
    {
        private readonly double[] coefficients;
        private readonly double[]? standardErrors;

        internal RidgeFit(
            double[] coefficients,
            double intercept,
            bool hasIntercept,
            double[]? standardErrors,
            double interceptStandardError,
            double residualSumOfSquares,
            double residualDegreesOfFreedom,
            double rSquared,
            double effectiveDegreesOfFreedom,
            double conditionEstimate,
            RidgeSolver solverUsed,
            int rank,
            int[] excludedColumns,
            int sampleCount,
            double weightSum,
            double discountedCount,
            double penalty,
            double objectiveValue)
        {
            this.coefficients = coefficients;
            Intercept = intercept;
            HasIntercept = hasIntercept;
            this.standardErrors = standardErrors;
            InterceptStandardError = interceptStandardError;
            ResidualSumOfSquares = residualSumOfSquares;
            ResidualDegreesOfFreedom = residualDegreesOfFreedom;
            ResidualStandardDeviation = residualDegreesOfFreedom > 0 ? Math.Sqrt(residualSumOfSquares / residualDegreesOfFreedom) : double.NaN;
            RSquared = rSquared;
            EffectiveDegreesOfFreedom = effectiveDegreesOfFreedom;
            ConditionEstimate = conditionEstimate;
            SolverUsed = solverUsed;
            Rank = rank;
            ExcludedColumns = excludedColumns;
            SampleCount = sampleCount;
            WeightSum = weightSum;
            DiscountedCount = discountedCount;
            Penalty = penalty;
            ObjectiveValue = objectiveValue;
        }

        /// <summary>The coefficients θ in raw units, one per regressor column (excluded columns hold 0).</summary>
        public IReadOnlyList<double> Coefficients => coefficients;

        /// <summary>The intercept b₀ in raw units; 0 when the fit has no intercept.</summary>
        public double Intercept { get; }

        /// <summary>Whether an intercept was fitted.</summary>
        public bool HasIntercept { get; }

        /// <summary>
        /// Standard errors of the coefficients (MATH.md §6.3–6.5: σ̂·√diag(H⁻¹ G₂ H⁻¹), which is σ̂·√diag((XᵀWX)⁻¹) without forgetting),
        /// or null when the penalty is positive (ridge estimates are biased; see the uncertainty tools for that case) or the residual
        /// degrees of freedom are not positive. Excluded columns hold 0.
        /// </summary>
        public IReadOnlyList<double>? StandardErrors => standardErrors;

        /// <summary>Standard error of the intercept, or NaN when <see cref="StandardErrors"/> is null or there is no intercept.</summary>
        public double InterceptStandardError { get; }

        /// <summary>Weighted residual sum of squares Σ βⁿ⁻ⁱwᵢ (yᵢ − b₀ − xᵢᵀθ)², computed from the residuals (not from sufficient statistics).</summary>
        public double ResidualSumOfSquares { get; }

        /// <summary>
        /// Residual degrees of freedom ν (MATH.md §6.4): n − p − 1 for ordinary least squares with intercept and unit weights,
        /// N − tr(2S − S²) for ridge, the forgetting-aware count with β &lt; 1. Only samples of positive weight count in n.
        /// </summary>
        public double ResidualDegreesOfFreedom { get; }

        /// <summary>Residual standard deviation σ̂ = √(RSS/ν); NaN when ν ≤ 0.</summary>
        public double ResidualStandardDeviation { get; }

        /// <summary>Coefficient of determination 1 − RSS/TSS: centered TSS with an intercept, uncentered (Σ wᵢyᵢ²) without, as NIST StRD defines it.</summary>
        public double RSquared { get; }

        /// <summary>Effective (model) degrees of freedom df(λ) = tr(S_λ) = Σ sⱼ²/(sⱼ² + λ), plus 1 for the intercept (MATH.md §6.4); equals the rank when λ = 0.</summary>
        public double EffectiveDegreesOfFreedom { get; }

        /// <summary>
        /// Estimate of the 2-norm condition number of the weighted (centered, and scaled if standardized) design stacked with the penalty rows,
        /// i.e. √cond(XᵀWX + λD²) in the solver's coordinates. Exact (from singular values) for the SVD solver; a power-iteration estimate
        /// (a lower bound, usually within a few percent) otherwise. Expect to lose about log₁₀ of it in digits with QR/SVD and twice that with Cholesky.
        /// </summary>
        public double ConditionEstimate { get; }

        /// <summary>Which solver computed this result (never <see cref="RidgeSolver.Auto"/>).</summary>
        public RidgeSolver SolverUsed { get; }

        /// <summary>Numerical rank of the (penalized) problem used by the solver, excluding the intercept.</summary>
        public int Rank { get; }

        /// <summary>Columns excluded as constant by standardization (ascending); empty when none.</summary>
        public IReadOnlyList<int> ExcludedColumns { get; }

        /// <summary>Number of rows given, including rows of zero weight.</summary>
        public int SampleCount { get; }

        /// <summary>Sum of effective weights W = Σ βⁿ⁻ⁱwᵢ.</summary>
        public double WeightSum { get; }

        /// <summary>Discounted count N = Σ βⁿ⁻ⁱ over rows of positive weight (n without forgetting).</summary>
        public double DiscountedCount { get; }

        /// <summary>The penalty λ used.</summary>
        public double Penalty { get; }

        /// <summary>Minimum value of the objective: weighted RSS plus the penalty term λ‖D(θ − θ₀)‖².</summary>
        public double ObjectiveValue { get; }

        /// <summary>Number of regressor columns.</summary>
        public int ParameterCount => coefficients.Length;

        /// <summary>Predicts b₀ + xᵀθ. O(p), no allocation.</summary>
        /// <param name="x">Regressor vector of length <see cref="ParameterCount"/>.</param>
        /// <returns>The prediction.</returns>
        /// <exception cref="ArgumentException">Wrong length or a non-finite entry.</exception>
        public double Predict(ReadOnlySpan<double> x)
        {
            Guard.Length(x.Length, coefficients.Length, nameof(x));
            Guard.AllFinite(x, nameof(x));
            double s = Intercept;
            for (int j = 0; j < coefficients.Length; j++)
            {
                s += coefficients[j] * x[j];
            }

            return s;
        }

        /// <summary>Copies the coefficients into <paramref name="destination"/>. O(p), no allocation.</summary>
        /// <param name="destination">Buffer of length at least <see cref="ParameterCount"/>.</param>
        /// <exception cref="ArgumentException">The buffer is too short.</exception>
        public void CopyCoefficientsTo(Span<double> destination)
        {
            if (destination.Length < coefficients.Length)
            {
                Guard.ThrowLength(nameof(destination), destination.Length, coefficients.Length);
            }

            coefficients.AsSpan().CopyTo(destination);
        }
    }
}
