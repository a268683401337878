using System;
using System.Collections.Generic;
using MathNet.Numerics.Distributions;
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
        private readonly double[] unitCovariance; // (p + ic)², θ then b₀, per unit noise variance

        internal RidgeFit(
            double[] coefficients,
            double intercept,
            bool hasIntercept,
            double[] unitCovariance,
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
            this.unitCovariance = unitCovariance;
            ResidualSumOfSquares = residualSumOfSquares;
            ResidualDegreesOfFreedom = residualDegreesOfFreedom;
            ResidualVariance = residualDegreesOfFreedom > 0 ? residualSumOfSquares / residualDegreesOfFreedom : double.NaN;
            ResidualStandardDeviation = Math.Sqrt(ResidualVariance);
            InterceptStandardError = double.NaN;
            if (residualDegreesOfFreedom > 0)
            {
                int p = coefficients.Length;
                int m = p + (hasIntercept ? 1 : 0);
                standardErrors = new double[p];
                for (int j = 0; j < p; j++)
                {
                    standardErrors[j] = Math.Sqrt(ResidualVariance * Math.Max(0.0, unitCovariance[(j * m) + j]));
                }

                if (hasIntercept)
                {
                    InterceptStandardError = Math.Sqrt(ResidualVariance * Math.Max(0.0, unitCovariance[(p * m) + p]));
                }
            }
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
        /// Standard errors of the coefficients, σ̂·√diag(C) with C the covariance of <see cref="RidgeSettings.Covariance"/> (MATH.md §6.3–6.5:
        /// H⁻¹G₂H⁻¹, which is (XᵀWX)⁻¹ for ordinary least squares without forgetting). Null when the residual degrees of freedom are not
        /// positive. Excluded columns hold 0. With a penalty these describe the variance only: ridge estimates are biased toward the prior, and
        /// the bias (not estimated) is not included.
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

        /// <summary>Residual variance σ̂² = RSS/ν, an unbiased estimate of σ² for ordinary least squares (MATH.md §6.4); NaN when ν ≤ 0.</summary>
        public double ResidualVariance { get; }

        /// <summary>Residual standard deviation σ̂ = √(RSS/ν); NaN when ν ≤ 0.</summary>
        public double ResidualStandardDeviation { get; }

        /// <summary>Coefficient of determination 1 − RSS/TSS: centered TSS with an intercept, uncentered (Σ wᵢyᵢ²) without, as NIST StRD defines it.</summary>
        public double RSquared { get; }

        /// <summary>Effective (model) degrees of freedom df(λ) = tr(S_λ) = Σ sⱼ²/(sⱼ² + λ), plus 1 for the intercept (MATH.md §6.4); equals the rank when λ = 0.</summary>
        public double EffectiveDegreesOfFreedom { get; }

        /// <summary>
        /// Estimate of the 2-norm condition number of the weighted (centered, and scaled if standardized) design stacked with the penalty rows,
        /// i.e. √cond(XᵀWX + λD²) in the solver's coordinates. Exact (from singular values) for the SVD solver; otherwise a Lanczos
        /// estimate on the triangular factor (a lower bound; the exact ratio to about 1e-9 for up to 24 coefficients, within a few percent above). Expect to lose about log₁₀ of it in digits with QR/SVD and twice that with Cholesky.
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

        /// <summary>
        /// Copies the estimated parameter covariance σ̂²·C into <paramref name="destination"/>, row-major, ordered θ₁..θ_p then the intercept
        /// (so (p + 1)² values with an intercept, p² without). O(p²), no allocation. NaN entries when ν ≤ 0.
        /// </summary>
        /// <param name="destination">Buffer of length ≥ (p + 1)² with an intercept, p² without.</param>
        /// <exception cref="ArgumentException">The buffer is too short.</exception>
        public void CopyCovarianceTo(Span<double> destination)
        {
            if (destination.Length < unitCovariance.Length)
            {
                Guard.ThrowLength(nameof(destination), destination.Length, unitCovariance.Length);
            }

            for (int k = 0; k < unitCovariance.Length; k++)
            {
                destination[k] = ResidualVariance * unitCovariance[k];
            }
        }

        /// <summary>
        /// Confidence interval of coefficient <paramref name="column"/>: θⱼ ± t₍₁₊ₗₑᵥₑₗ₎/₂,ν · seⱼ (Student's t with ν residual degrees of freedom,
        /// MathNet.Numerics). Exact coverage for ordinary least squares with normal noise; approximate with forgetting; with a penalty the
        /// interval is centred on a biased estimate and covers less than its level when the penalty shrinks real effects. O(1).
        /// </summary>
        /// <param name="column">Zero-based regressor index.</param>
        /// <param name="level">Confidence level in (0, 1); default 0.95.</param>
        /// <returns>The interval (NaN bounds when ν ≤ 0).</returns>
        /// <exception cref="ArgumentOutOfRangeException">Column out of range or level outside (0, 1).</exception>
        public Interval CoefficientInterval(int column, double level = 0.95)
        {
            if ((uint)column >= (uint)coefficients.Length)
            {
                Guard.ThrowOutOfRange(nameof(column), column, "regressor index out of range");
            }

            double se = standardErrors is null ? double.NaN : standardErrors[column];
            return MakeInterval(coefficients[column], se, level);
        }

        /// <summary>Confidence interval of the intercept (see <see cref="CoefficientInterval"/>). O(1).</summary>
        /// <param name="level">Confidence level in (0, 1).</param>
        /// <returns>The interval.</returns>
        /// <exception cref="InvalidOperationException">The fit has no intercept.</exception>
        /// <exception cref="ArgumentOutOfRangeException">Level outside (0, 1).</exception>
        public Interval InterceptInterval(double level = 0.95)
        {
            if (!HasIntercept)
            {
                throw new InvalidOperationException("The fit has no intercept.");
            }

            return MakeInterval(Intercept, InterceptStandardError, level);
        }

        /// <summary>
        /// Prediction interval for a new observation at <paramref name="x"/> with weight <paramref name="weight"/>:
        /// ŷ ± t·σ̂·√(1/w + uᵀCu), u = (x, 1) (MATH.md §6.5). The standard error of the mean prediction alone is √(uᵀCu)·σ̂
        /// (<see cref="PredictionStandardError"/>). O(p²), no allocation.
        /// </summary>
        /// <param name="x">Regressor vector of length p.</param>
        /// <param name="level">Confidence level in (0, 1).</param>
        /// <param name="weight">Precision weight of the new observation (&gt; 0); 1 for a sample like an average training sample of weight 1.</param>
        /// <returns>The interval; its <see cref="Interval.StandardError"/> is that of the prediction error.</returns>
        /// <exception cref="ArgumentException">Wrong length, non-finite x, weight not positive, or level outside (0, 1).</exception>
        public Interval PredictionInterval(ReadOnlySpan<double> x, double level = 0.95, double weight = 1.0)
        {
            if (!(weight > 0.0) || double.IsInfinity(weight))
            {
                Guard.ThrowOutOfRange(nameof(weight), weight, "a prediction weight must be a finite number > 0");
            }

            double yHat = Predict(x);
            double q = Quadratic(x);
            return MakeInterval(yHat, Math.Sqrt(ResidualVariance * ((1.0 / weight) + q)), level);
        }

        /// <summary>Standard error σ̂·√(uᵀCu) of the predicted mean b₀ + xᵀθ at <paramref name="x"/> (MATH.md §6.5). O(p²), no allocation.</summary>
        /// <param name="x">Regressor vector of length p.</param>
        /// <returns>The standard error (NaN when ν ≤ 0).</returns>
        /// <exception cref="ArgumentException">Wrong length or non-finite x.</exception>
        public double PredictionStandardError(ReadOnlySpan<double> x)
        {
            Guard.Length(x.Length, coefficients.Length, nameof(x));
            Guard.AllFinite(x, nameof(x));
            return Math.Sqrt(ResidualVariance * Quadratic(x));
        }

        private double Quadratic(ReadOnlySpan<double> x)
        {
            int p = coefficients.Length;
            int m = p + (HasIntercept ? 1 : 0);
            double q = 0.0;
            for (int r = 0; r < m; r++)
            {
                double ur = r < p ? x[r] : 1.0;
                double s = 0.0;
                for (int c = 0; c < m; c++)
                {
                    s += unitCovariance[(r * m) + c] * (c < p ? x[c] : 1.0);
                }

                q += ur * s;
            }

            return Math.Max(0.0, q);
        }

        private Interval MakeInterval(double estimate, double se, double level)
        {
            if (!(level > 0.0 && level < 1.0))
            {
                Guard.ThrowOutOfRange(nameof(level), level, "a confidence level must lie in (0, 1)");
            }

            if (!(ResidualDegreesOfFreedom > 0) || double.IsNaN(se))
            {
                return new Interval(estimate, se, double.NaN, double.NaN, level);
            }

            double t = StudentT.InvCDF(0.0, 1.0, ResidualDegreesOfFreedom, 0.5 + (level / 2.0));
            return new Interval(estimate, se, estimate - (t * se), estimate + (t * se), level);
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
