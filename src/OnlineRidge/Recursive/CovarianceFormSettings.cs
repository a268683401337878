using System;
using System.Collections.Generic;
using OnlineRidge.Internal;

namespace OnlineRidge
{
    /// <summary>How <see cref="CovarianceFormEstimator"/> updates its covariance matrix P (MATH.md §2.2).</summary>
    public enum CovarianceUpdate
    {
        /// <summary>
        /// Symmetric form (MATH.md §2.2 item 1): P ← (P − (w/d)·v·vᵀ)/β on the upper triangle from the computed v = P·x, so P is exactly symmetric.
        /// About 1.5·p² multiply-adds per update. The default: cheapest, and as accurate as the alternative for well-conditioned data.
        /// </summary>
        Symmetric = 0,

        /// <summary>
        /// Joseph-like form (MATH.md §2.2 item 2, Bucy &amp; Joseph 1968): P ← (P − k·vᵀ − v·kᵀ + (d/w)·k·kᵀ)/β, equal in exact arithmetic but
        /// first-order insensitive to rounding errors in the gain k. About 2.5·p² multiply-adds per update. Neither form is backward stable;
        /// for ill-conditioned data use a square-root or information form.
        /// </summary>
        JosephLike = 1,
    }

    /// <summary>
    /// Immutable settings of <see cref="CovarianceFormEstimator"/>: forgetting factor β, prior θ₀ and its weight δ (initial information Γ₀ = δ·I,
    /// initial covariance P₀ = δ⁻¹·I), the covariance update form and the handling of unusable samples. Every property is validated when it is set; an invalid value throws
    /// <see cref="ArgumentException"/> naming the property and the value.
    /// </summary>
    /// <remarks>
    /// The estimator minimizes the regime-D objective of MATH.md §1.1: Σᵢ βⁿ⁻ⁱwᵢ(yᵢ − xᵢᵀθ)² + βⁿ·δ·‖θ − θ₀‖² — the prior is treated as data
    /// observed before the first sample and is forgotten with the data. Instances are immutable and thread-safe.
    /// </remarks>
    public sealed class CovarianceFormSettings
    {
        private readonly double forgettingFactor = 1.0;
        private readonly double priorWeight = DefaultPriorWeight;
        private readonly double[]? prior;
        private readonly CovarianceUpdate update = CovarianceUpdate.Symmetric;
        private readonly InvalidSamplePolicy invalidSamples = InvalidSamplePolicy.Throw;
        private readonly WindupProtection windup = WindupProtection.None;

        /// <summary>
        /// Default of <see cref="PriorWeight"/>: 10⁻⁴ (P₀ = 10⁴·I). For regressors of order one this is the weight of a small fraction of one
        /// sample, so the estimate is data-dominated after about p samples, while the condition number met early on (which governs the accuracy
        /// of this form for the whole run, MATH.md §2.2 item 3 and §10) stays near 10⁴ rather than the 10⁹ of the often-quoted P₀ = 10⁹·I.
        /// </summary>
        public const double DefaultPriorWeight = 1e-4;

        /// <summary>The default settings: no forgetting, prior θ₀ = 0 with weight <see cref="DefaultPriorWeight"/>, symmetric update.</summary>
        public static CovarianceFormSettings Default { get; } = new();

        /// <summary>
        /// Forgetting factor β in (0, 1] (default 1): at each update the old information is multiplied by β before the sample is added.
        /// Effective memory about 1/(1 − β) samples (a rule of thumb, MATH.md §9). With β &lt; 1 and poor excitation P grows geometrically
        /// (covariance windup, MATH.md §2.3).
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
        /// Weight δ &gt; 0 of the prior (default <see cref="DefaultPriorWeight"/>): the initial information is Γ₀ = δ·I and P₀ = δ⁻¹·I.
        /// Small δ means a weak prior but a large condition number of the first Hessians, which limits the accuracy of this form (MATH.md §10, κ_path).
        /// Ignored when the estimator is constructed with an explicit initial covariance.
        /// </summary>
        /// <exception cref="ArgumentOutOfRangeException">Not a finite number &gt; 0.</exception>
        public double PriorWeight
        {
            get => priorWeight;
            init
            {
                if (!(value > 0.0) || double.IsInfinity(value))
                {
                    Guard.ThrowOutOfRange(nameof(PriorWeight), value, "must be a finite number > 0");
                }

                priorWeight = value;
            }
        }

        /// <summary>Prior θ₀ (the initial parameters), one entry per regressor; null (default) means zero.</summary>
        /// <exception cref="ArgumentException">An entry is NaN or infinite.</exception>
        public IReadOnlyList<double>? Prior
        {
            get => prior;
            init => prior = Guard.FiniteCopy(value, nameof(Prior));
        }

        /// <summary>The covariance update form (default <see cref="CovarianceUpdate.Symmetric"/>).</summary>
        /// <exception cref="ArgumentOutOfRangeException">Not a member of the enumeration.</exception>
        public CovarianceUpdate Update
        {
            get => update;
            init
            {
                if (value is not (CovarianceUpdate.Symmetric or CovarianceUpdate.JosephLike))
                {
                    Guard.ThrowOutOfRange(nameof(Update), (double)value, "not a CovarianceUpdate member");
                }

                update = value;
            }
        }

        /// <summary>
        /// What an update does with an unusable sample (NaN or ∞ in x or y, a negative, NaN or infinite weight): throw (default,
        /// <see cref="InvalidSamplePolicy.Throw"/>) or skip it and count it in <see cref="CovarianceFormEstimator.SkippedSampleCount"/>
        /// (<see cref="InvalidSamplePolicy.SkipAndCount"/>, for streams with sensor dropouts). A regressor vector of the wrong length always throws.
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

        /// <summary>
        /// The covariance-windup remedy (default <see cref="WindupProtection.None"/>, plain exponential forgetting; MATH.md §2.3–2.4). Only
        /// <see cref="WindupProtectionKind.None"/> and <see cref="WindupProtectionKind.TraceBound"/> keep a batch objective; see
        /// <see cref="WindupProtection"/> for the trade-offs. Conditions that involve <see cref="ForgettingFactor"/> or the initial covariance are
        /// checked by the estimator's constructor.
        /// </summary>
        /// <exception cref="ArgumentNullException">Null.</exception>
        public WindupProtection Windup
        {
            get => windup;
            init
            {
                Guard.NotNull(value, nameof(Windup));
                windup = value;
            }
        }
    }
}
