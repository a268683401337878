using System;
using System.Collections.Generic;
using OnlineRidge.Internal;

namespace OnlineRidge
{
    /// <summary>
    /// Immutable settings of a <see cref="SquareRootEstimator"/>: forgetting factor, constant penalty, decaying prior weight, prior,
    /// intercept and standardization. Every property is validated when it is set; an invalid value throws
    /// <see cref="ArgumentOutOfRangeException"/> (or <see cref="ArgumentException"/>) naming the property and the value.
    /// </summary>
    /// <remarks>
    /// <para>At time n the estimator minimizes (MATH.md §1.1, §4.4, §4.5)
    /// <c>Σᵢ β̃ⁿ⁻ⁱ wᵢ (yᵢ − b₀ − xᵢᵀθ)² + (λ + δ·β̃ⁿ) (θ − θ₀)ᵀ D² (θ − θ₀)</c>,
    /// where β̃ = q², q = fl(√β) is the forgetting the square-root state really applies (MATH.md §3.2), λ is <see cref="Penalty"/>
    /// (regime C: constant penalty), δ is <see cref="DecayingPriorWeight"/> (regime D: a prior observed at time 0 and forgotten with the
    /// data), θ₀ is <see cref="Prior"/>, b₀ is present only with <see cref="FitIntercept"/> and is never penalized, and D is the diagonal of
    /// weighted population standard deviations (with an intercept) or root mean squares (without) when <see cref="Standardize"/>, else I.
    /// This is exactly the objective of <see cref="BatchRidge"/> with <see cref="RidgeSettings.ForgettingFactor"/> = β̃ and
    /// <see cref="RidgeSettings.Penalty"/> = λ + δ·β̃ⁿ.</para>
    /// <para>Defaults: no forgetting, no penalty, no decaying prior, prior zero, an intercept, standardization on (the penalty then treats
    /// columns of different units alike). Instances are immutable and thread-safe; validation costs O(p) once.</para>
    /// </remarks>
    public sealed class SquareRootSettings
    {
        private readonly double forgettingFactor = 1.0;
        private readonly double penalty;
        private readonly double decayingPriorWeight;
        private readonly double[]? prior;
        private readonly InvalidSamplePolicy invalidSamples = InvalidSamplePolicy.Throw;

        /// <summary>The default settings (ordinary recursive least squares with an intercept and standardization, no forgetting).</summary>
        public static SquareRootSettings Default { get; } = new();

        /// <summary>
        /// Forgetting factor β in (0, 1] (default 1): a sample of age k carries the extra weight β̃ᵏ, β̃ = fl(√β)² (MATH.md §3.2;
        /// |β̃ − β| ≤ about ε·β). The effective memory is about 1/(1 − β) samples (common practice, a rule of thumb; MATH.md §9).
        /// </summary>
        /// <exception cref="ArgumentOutOfRangeException">Outside (0, 1] or NaN.</exception>
        public double ForgettingFactor
        {
            get => forgettingFactor;
            init
            {
                Guard.ForgettingFactor(value, nameof(ForgettingFactor));
                forgettingFactor = value;
            }
        }

        /// <summary>
        /// Constant penalty λ ≥ 0 (default 0; regime C of MATH.md §1.1): λ(θ − θ₀)ᵀD²(θ − θ₀) is added at solve time (MATH.md §3.3), so
        /// it never decays and bounds the covariance even with β &lt; 1 and no excitation. Absolute, not divided by the weight sum.
        /// </summary>
        /// <exception cref="ArgumentOutOfRangeException">NaN, infinite or negative.</exception>
        public double Penalty
        {
            get => penalty;
            init
            {
                Guard.NonNegativeFinite(value, nameof(Penalty));
                penalty = value;
            }
        }

        /// <summary>
        /// Initial weight δ ≥ 0 of a prior that decays with the data (default 0; regime D of MATH.md §1.1, the classic recursive form):
        /// the term δ·β̃ⁿ(θ − θ₀)ᵀD²(θ − θ₀) is added at solve time (MATH.md §3.3), so after about 10/(1 − β) samples it has no effect.
        /// </summary>
        /// <exception cref="ArgumentOutOfRangeException">NaN, infinite or negative.</exception>
        public double DecayingPriorWeight
        {
            get => decayingPriorWeight;
            init
            {
                Guard.NonNegativeFinite(value, nameof(DecayingPriorWeight));
                decayingPriorWeight = value;
            }
        }

        /// <summary>
        /// Prior θ₀ (raw units), the target of both penalty terms; null (default) means zero. Its length must equal the number of regressors
        /// of the estimator (checked by the estimator's constructor).
        /// </summary>
        /// <exception cref="ArgumentException">An entry is NaN or infinite.</exception>
        public IReadOnlyList<double>? Prior
        {
            get => prior;
            init => prior = Guard.FiniteCopy(value, nameof(Prior));
        }

        /// <summary>Whether to fit an unpenalized intercept b₀ (default true). The state then carries the column of ones (MATH.md §4.3).</summary>
        public bool FitIntercept { get; init; } = true;

        /// <summary>
        /// Whether the penalty acts on standardized coefficients (default true): D = diag(σⱼ), σⱼ the weighted population standard
        /// deviation of column j (with an intercept, σⱼ = ‖R₂₂[:, j]‖/r₁₁, MATH.md §4.3) or its root mean square ‖R[:, j]‖/√W (without).
        /// With an intercept a column with σⱼ ≤ 10³·ε·√(mⱼ² + σⱼ²) is constant and excluded (coefficient 0; MATH.md §4.5 policy); without
        /// one, a column that is exactly zero is excluded. No effect on the solution when both penalties are zero and the design has full rank.
        /// With β &lt; 1 the scales follow the recent data: the penalty λσⱼ² of a column that stops varying decays with its information, so it
        /// does not protect that coefficient; when excitation may be lost, turn standardization off and give the penalty in raw units
        /// (see the remarks of <see cref="SquareRootEstimator"/>).
        /// </summary>
        public bool Standardize { get; init; } = true;

        /// <summary>
        /// What an update does with an unusable sample (NaN or ∞ in x or y, a negative, NaN or infinite weight): throw (default,
        /// <see cref="InvalidSamplePolicy.Throw"/>) or skip it and count it in <see cref="SquareRootEstimator.SkippedSampleCount"/>
        /// (<see cref="InvalidSamplePolicy.SkipAndCount"/>, for streams with sensor dropouts). A regressor vector of the wrong length always
        /// throws. Not part of the objective: estimators with different policies can be merged.
        /// </summary>
        /// <exception cref="ArgumentOutOfRangeException">Not a defined <see cref="InvalidSamplePolicy"/> value.</exception>
        public InvalidSamplePolicy InvalidSamples
        {
            get => invalidSamples;
            init
            {
                Guard.Policy(value, nameof(InvalidSamples));
                invalidSamples = value;
            }
        }

        /// <summary>True when <paramref name="other"/> defines the same objective (all properties equal, prior compared entry by entry).</summary>
        internal bool SameObjective(SquareRootSettings other)
        {
            if (!forgettingFactor.Equals(other.forgettingFactor) || !penalty.Equals(other.penalty)
                || !decayingPriorWeight.Equals(other.decayingPriorWeight) || FitIntercept != other.FitIntercept || Standardize != other.Standardize)
            {
                return false;
            }

            ReadOnlySpan<double> a = prior;
            ReadOnlySpan<double> b = other.prior;
            int n = Math.Max(a.Length, b.Length);
            for (int i = 0; i < n; i++)
            {
                double ai = i < a.Length ? a[i] : 0.0;
                double bi = i < b.Length ? b[i] : 0.0;
                if (!ai.Equals(bi))
                {
                    return false;
                }
            }

            return true;
        }
    }
}
