using System;
using OnlineRidge.Internal;

namespace OnlineRidge
{
    /// <summary>Which covariance-windup remedy of MATH.md §2.4 a <see cref="WindupProtection"/> selects.</summary>
    public enum WindupProtectionKind
    {
        /// <summary>No protection: plain exponential forgetting (MATH.md §2.1). Batch-equivalent to regime D; winds up under poor excitation (§2.3).</summary>
        None = 0,

        /// <summary>Trace bound by variable forgetting (MATH.md §2.4b). Batch-equivalent with the recorded forgetting factors.</summary>
        TraceBound = 1,

        /// <summary>Exponential forgetting and resetting, EFRA (Salgado, Goodwin &amp; Middleton 1988; MATH.md §2.4c). Not batch-equivalent.</summary>
        ExponentialResetting = 2,

        /// <summary>Directional forgetting (Kulhavý 1987; Bittanti, Bolzern &amp; Campi 1990; MATH.md §2.4d). Not batch-equivalent.</summary>
        Directional = 3,
    }

    /// <summary>
    /// An immutable choice of covariance-windup remedy for <see cref="CovarianceFormEstimator"/> (MATH.md §2.3–2.4), set through
    /// <see cref="CovarianceFormSettings.Windup"/>. Create one with <see cref="None"/>, <see cref="TraceBound"/>, <see cref="ExponentialResetting"/>
    /// or <see cref="Directional"/>; each factory validates its own parameters (ArgumentOutOfRangeException naming the parameter and the value),
    /// and the estimator checks the conditions that also involve the forgetting factor or the initial covariance when it is constructed.
    /// </summary>
    /// <remarks>
    /// <para><b>Trade-offs.</b></para>
    /// <list type="table">
    /// <listheader><term>policy</term><description>bound on P; batch equivalence; cost per update</description></listheader>
    /// <item><term>None</term><description>none (P grows like β⁻ᵐ over m unexcited steps); regime D of MATH.md §1.1; ≈ 2·p² in one pass over P (in place, forgetting in a scalar)</description></item>
    /// <item><term>TraceBound</term><description>tr(P) ≤ c_max; exactly the §1.1 objective with the products of the recorded factors βⱼ
    /// (<see cref="CovarianceFormEstimator.LogForgettingProduct"/>); ≈ 2·p² + 2p, as None</description></item>
    /// <item><term>ExponentialResetting</term><description>σ_lo·I ⪯ P ⪯ σ_hi·I for every regressor sequence; none; ≈ p³/2 + 2·p² (the c·P² term is a
    /// matrix product, the only policy above O(p²))</description></item>
    /// <item><term>Directional</term><description>no uniform bound, but unexcited directions keep their information exactly; none (tested against its
    /// information-form recursion); ≈ 2.5·p² (double-buffered upper-triangle update, mirror and product)</description></item>
    /// </list>
    /// <para>Instances are immutable and thread-safe. Equality is by value.</para>
    /// </remarks>
    public sealed class WindupProtection : IEquatable<WindupProtection>
    {
        private WindupProtection(WindupProtectionKind kind, double traceLimit, double gain, double addition, double contraction, double directionalFactor, double deadZone)
        {
            Kind = kind;
            TraceLimit = traceLimit;
            ResettingGain = gain;
            ResettingAddition = addition;
            ResettingContraction = contraction;
            DirectionalFactor = directionalFactor;
            DeadZone = deadZone;
        }

        /// <summary>No protection: plain exponential forgetting with the settings' forgetting factor (the default).</summary>
        public static WindupProtection None { get; } = new(WindupProtectionKind.None, double.PositiveInfinity, double.NaN, double.NaN, double.NaN, double.NaN, double.NaN);

        /// <summary>The selected remedy.</summary>
        public WindupProtectionKind Kind { get; }

        /// <summary>c_max of the trace bound (+∞ for the other kinds).</summary>
        public double TraceLimit { get; }

        /// <summary>α of EFRA, in (0, 1) (NaN for the other kinds).</summary>
        public double ResettingGain { get; }

        /// <summary>b of EFRA, &gt; 0: the constant added to the diagonal of P each step (NaN for the other kinds).</summary>
        public double ResettingAddition { get; }

        /// <summary>c of EFRA, &gt; 0: the weight of the −c·P² contraction (NaN for the other kinds).</summary>
        public double ResettingContraction { get; }

        /// <summary>μ of directional forgetting, in (0, 1] (NaN for the other kinds).</summary>
        public double DirectionalFactor { get; }

        /// <summary>s_min ≥ 0 of directional forgetting's optional dead zone (NaN for the other kinds).</summary>
        public double DeadZone { get; }

        /// <summary>
        /// Trace bound by variable forgetting (MATH.md §2.4b): before each update the estimator uses βₙ = min(1, max(β, tr(Pₙ₋₁)/c_max)) instead
        /// of β, so tr(P) never exceeds c_max (given tr(P₀) ≤ c_max, which the estimator checks).
        /// </summary>
        /// <param name="traceLimit">c_max, a finite number &gt; 0. A useful value is a few times tr(P) in normal operation, e.g. p times the
        /// largest parameter variance (in units of the noise variance) you are prepared to accept.</param>
        /// <returns>The policy.</returns>
        /// <exception cref="ArgumentOutOfRangeException"><paramref name="traceLimit"/> is not a finite number &gt; 0.</exception>
        /// <remarks>
        /// Keeps batch equivalence: θₙ minimizes Σᵢ wᵢ·(Π_{j=i+1..n} βⱼ)(yᵢ − xᵢᵀθ)² + (Π_{j=1..n} βⱼ)·(θ − θ₀)ᵀΓ₀(θ − θ₀); the estimator exposes
        /// Σⱼ ln βⱼ (<see cref="CovarianceFormEstimator.LogForgettingProduct"/>) and the last βₙ. Gram-class accuracy with κ_path (MATH.md §10).
        /// The clamp at 1 only matters when rounding puts tr(P) a few ulps above c_max. Cost: p additions for the trace per update.
        /// </remarks>
        public static WindupProtection TraceBound(double traceLimit)
        {
            if (!(traceLimit > 0.0) || double.IsInfinity(traceLimit))
            {
                Guard.ThrowOutOfRange(nameof(traceLimit), traceLimit, "the trace limit must be a finite number > 0");
            }

            return new WindupProtection(WindupProtectionKind.TraceBound, traceLimit, double.NaN, double.NaN, double.NaN, double.NaN, double.NaN);
        }

        /// <summary>
        /// Exponential forgetting and resetting, EFRA (Salgado, Goodwin &amp; Middleton 1988; MATH.md §2.4c), with the settings' forgetting factor β:
        /// θ ← θ + α·P·x·e/(1 + xᵀPx), P ← P/β − α·P·x·xᵀP/(1 + xᵀPx) + b·I − c·P².
        /// </summary>
        /// <param name="gain">α in (0, 1): the fraction of the least-squares correction applied.</param>
        /// <param name="addition">b, a finite number &gt; 0 (keeps P away from 0).</param>
        /// <param name="contraction">c, a finite number &gt; 0 (keeps P bounded).</param>
        /// <returns>The policy.</returns>
        /// <exception cref="ArgumentOutOfRangeException">A parameter outside its range, or NaN.</exception>
        /// <remarks>
        /// The estimator requires 0 &lt; β &lt; 1 and the invariant-bound condition η² + 4bc ≤ (1 − α)², η = (1 − β)/β, and starts from
        /// P₀ = σ_hi·I (<see cref="Bounds"/>); then σ_lo·I ⪯ Pₙ ⪯ σ_hi·I for every regressor sequence (MATH.md §2.4c, derived there). A sample
        /// weight w enters as √w·x and √w·y (MATH.md §0). Not batch-equivalent: no fixed sample weights reproduce it; the estimator reports
        /// <see cref="CovarianceFormEstimator.MinimumCost"/> as NaN. Typical values: β = 0.95, α = 0.5, b = c = 0.005 give [0.0112, 10.6].
        /// </remarks>
        public static WindupProtection ExponentialResetting(double gain, double addition, double contraction)
        {
            if (!(gain > 0.0 && gain < 1.0))
            {
                Guard.ThrowOutOfRange(nameof(gain), gain, "the EFRA gain must lie in (0, 1)");
            }

            if (!(addition > 0.0) || double.IsInfinity(addition))
            {
                Guard.ThrowOutOfRange(nameof(addition), addition, "the EFRA addition must be a finite number > 0");
            }

            if (!(contraction > 0.0) || double.IsInfinity(contraction))
            {
                Guard.ThrowOutOfRange(nameof(contraction), contraction, "the EFRA contraction must be a finite number > 0");
            }

            return new WindupProtection(WindupProtectionKind.ExponentialResetting, double.PositiveInfinity, gain, addition, contraction, double.NaN, double.NaN);
        }

        /// <summary>
        /// Directional forgetting (Kulhavý 1987; Bittanti, Bolzern &amp; Campi 1990 form; MATH.md §2.4d): add the sample, then forget the fraction
        /// 1 − μ of the information carried along x, leaving θ and every direction orthogonal to x untouched.
        /// </summary>
        /// <param name="directionalFactor">μ in (0, 1]; μ = 1 is plain RLS without forgetting. For a regressor repeated in one direction the
        /// information along it converges to μ·w/(1 − μ).</param>
        /// <param name="deadZone">s_min ≥ 0 (default 0, the published method): forgetting is skipped when w·xᵀPx &lt; s_min, so tiny noise-only
        /// regressors do not erode information. A dead zone &gt; 0 departs from the published method.</param>
        /// <returns>The policy.</returns>
        /// <exception cref="ArgumentOutOfRangeException">A parameter outside its range, or NaN.</exception>
        /// <remarks>
        /// Replaces exponential forgetting: the estimator requires the settings' forgetting factor to be 1. Update: v = P·x, s = xᵀv,
        /// θ ← θ + w·v·e/(1 + w·s); if s &gt; 0 and w·s ≥ s_min, ζ = μ·w − (1 − μ)/s and P ← P − [ζ/(μ(1 + w·s))]·v·vᵀ; otherwise
        /// P ← P − [w/(1 + w·s)]·v·vᵀ. Information form: Hₙ = H⁺ − [(1 − μ)/(xᵀH⁺⁻¹x)]·x·xᵀ, H⁺ = Hₙ₋₁ + w·x·xᵀ. Not batch-equivalent
        /// (data-dependent, matrix-valued forgetting); <see cref="CovarianceFormEstimator.MinimumCost"/> is NaN.
        /// </remarks>
        public static WindupProtection Directional(double directionalFactor, double deadZone = 0.0)
        {
            if (!(directionalFactor > 0.0 && directionalFactor <= 1.0))
            {
                Guard.ThrowOutOfRange(nameof(directionalFactor), directionalFactor, "the directional factor must lie in (0, 1]");
            }

            Guard.NonNegativeFinite(deadZone, nameof(deadZone));
            return new WindupProtection(WindupProtectionKind.Directional, double.PositiveInfinity, double.NaN, double.NaN, double.NaN, directionalFactor, deadZone);
        }

        /// <summary>
        /// The invariant covariance bounds [σ_lo, σ_hi] of EFRA for forgetting factor β (MATH.md §2.4c):
        /// σ_hi = (η + √(η² + 4bc))/(2c), σ_lo = (η − α + √((α − η)² + 4bc))/(2c), η = (1 − β)/β. For the other kinds [0, +∞) for None and
        /// Directional, [0, c_max] for TraceBound (every eigenvalue is at most the trace). O(1).
        /// </summary>
        /// <param name="forgettingFactor">β in (0, 1].</param>
        /// <returns>(Lower, Upper).</returns>
        /// <exception cref="ArgumentOutOfRangeException"><paramref name="forgettingFactor"/> outside (0, 1].</exception>
        public (double Lower, double Upper) Bounds(double forgettingFactor)
        {
            Guard.ForgettingFactor(forgettingFactor, nameof(forgettingFactor));
            if (Kind != WindupProtectionKind.ExponentialResetting)
            {
                return (0.0, TraceLimit);
            }

            double eta = (1.0 - forgettingFactor) / forgettingFactor;
            double bc4 = 4.0 * ResettingAddition * ResettingContraction;
            double twoC = 2.0 * ResettingContraction;
            double upper = (eta + Math.Sqrt((eta * eta) + bc4)) / twoC;
            double am = ResettingGain - eta;
            double lower = (-am + Math.Sqrt((am * am) + bc4)) / twoC;
            return (lower, upper);
        }

        /// <inheritdoc/>
        public bool Equals(WindupProtection? other) =>
            other is not null && Kind == other.Kind && TraceLimit.Equals(other.TraceLimit) && ResettingGain.Equals(other.ResettingGain)
            && ResettingAddition.Equals(other.ResettingAddition) && ResettingContraction.Equals(other.ResettingContraction)
            && DirectionalFactor.Equals(other.DirectionalFactor) && DeadZone.Equals(other.DeadZone);

        /// <inheritdoc/>
        public override bool Equals(object? obj) => Equals(obj as WindupProtection);

        /// <inheritdoc/>
        public override int GetHashCode() =>
            ((int)Kind * 397) ^ TraceLimit.GetHashCode() ^ (ResettingGain.GetHashCode() * 7) ^ (ResettingAddition.GetHashCode() * 13)
            ^ (ResettingContraction.GetHashCode() * 17) ^ (DirectionalFactor.GetHashCode() * 23) ^ (DeadZone.GetHashCode() * 29);

        /// <inheritdoc/>
        public override string ToString() => Kind switch
        {
            WindupProtectionKind.TraceBound => FormattableString.Invariant($"TraceBound(c_max = {TraceLimit:R})"),
            WindupProtectionKind.ExponentialResetting => FormattableString.Invariant($"ExponentialResetting(α = {ResettingGain:R}, b = {ResettingAddition:R}, c = {ResettingContraction:R})"),
            WindupProtectionKind.Directional => FormattableString.Invariant($"Directional(μ = {DirectionalFactor:R}, s_min = {DeadZone:R})"),
            _ => "None",
        };
    }
}
