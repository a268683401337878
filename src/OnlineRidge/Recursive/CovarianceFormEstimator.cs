using System;
using System.Collections.Generic;
using System.IO;
#if NET
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;
#endif
using OnlineRidge.Internal;
using OnlineRidge.Persistence;

namespace OnlineRidge
{
    /// <summary>
    /// Classic recursive least squares in covariance form (MATH.md §2.1–2.2): keeps the parameters θₙ and the covariance Pₙ = Hₙ⁻¹ and updates
    /// both per sample, so θ is available after every sample at no extra cost.
    /// </summary>
    /// <remarks>
    /// <para><b>Objective.</b> After n updates θₙ is exactly (in exact arithmetic) the minimizer of the regime-D objective of MATH.md §1.1,
    /// Jₙ(θ) = Σᵢ βⁿ⁻ⁱwᵢ(yᵢ − xᵢᵀθ)² + βⁿ(θ − θ₀)ᵀΓ₀(θ − θ₀), with Γ₀ = δ·I (<see cref="CovarianceFormSettings.PriorWeight"/>) or Γ₀ = P₀⁻¹
    /// for an explicit initial covariance P₀; and Pₙ = (Σᵢ βⁿ⁻ⁱwᵢxᵢxᵢᵀ + βⁿΓ₀)⁻¹. The prior is forgotten with the data. The batch equivalent is
    /// <see cref="BatchRidge"/> with Penalty = βⁿ·δ, Prior = θ₀, Standardize = false, FitIntercept = false. For a constant (non-decaying) ridge
    /// penalty use <see cref="InformationFormEstimator"/>.</para>
    /// <para><b>Intercept.</b> This form has none (<see cref="Intercept"/> is 0): append a constant regressor 1 to x; the prior then covers its
    /// coefficient too (it is penalized by βⁿ·δ like the others, which is negligible once the data dominate).</para>
    /// <para><b>Algorithm</b> (per sample x, y, w): v = P·x, s = xᵀv, d = β + w·s, k = (w/d)·v, e = y − xᵀθ (a-priori error),
    /// θ ← θ + k·e, P ← (P − k·vᵀ)/β (or the Joseph-like form, <see cref="CovarianceUpdate"/>); minimal cost J*ₙ = β·J*ₙ₋₁ + β·w·e²/d.
    /// A zero-weight sample only forgets: θ unchanged, P ← P/β.</para>
    /// <para><b>Representation.</b> With the symmetric update and no windup protection or the trace bound, P is held as σ·P̃: a scalar σ and
    /// a dense matrix P̃ (both triangles, rows padded to whole vectors). Forgetting divides σ only (P ← P/β is σ ← σ/β, O(1)), and σ is folded
    /// back into P̃ by an exact power-of-two rescaling whenever it passes 2³², so neither over- nor underflows. The data term is the downdate
    /// P̃ ← P̃ − c·u·uᵀ with u = P̃x and c = w·σ/d, entry by entry fl(P̃ᵢⱼ − c·fl(uᵢuⱼ)), which keeps P̃ bitwise symmetric (fl(uᵢuⱼ) and fl(uⱼuᵢ) are the same number) with no square root; it is deferred and applied
    /// in the same pass over P̃ as the next update's product P̃·x, so each update reads and writes P̃ once. Readers see the applied values.
    /// The other update forms and policies keep σ = 1 and write a second buffer.</para>
    /// <para><b>Windup.</b> <see cref="CovarianceFormSettings.Windup"/> selects a remedy of MATH.md §2.4 (see <see cref="WindupProtection"/>):
    /// none (the regime-D objective above); a trace bound, which replaces β by βₙ = max(β, tr(Pₙ₋₁)/c_max) and keeps a batch objective with the
    /// recorded factors (<see cref="LogForgettingProduct"/>, <see cref="LastForgettingFactor"/>); EFRA (Salgado, Goodwin &amp; Middleton 1988),
    /// which keeps σ_lo·I ⪯ P ⪯ σ_hi·I (<see cref="CovarianceLowerBound"/>, <see cref="CovarianceUpperBound"/>) at about p³/2 extra
    /// multiply-adds; or directional forgetting (Kulhavý 1987; Bittanti, Bolzern &amp; Campi 1990), which forgets only along the current
    /// regressor. The last two minimize no batch objective (<see cref="MinimumCost"/> is NaN). The update form setting applies to none and the
    /// trace bound; EFRA and directional forgetting use their own symmetric updates. The guards below apply to every policy.</para>
    /// <para><b>Cost.</b> Symmetric update (no protection or the trace bound): 2·p·s multiply-adds per update (s = p rounded up to a multiple
    /// of 4 on the vectorized net10.0 build, s = p otherwise) in one pass over P̃, plus O(p); a zero-weight sample costs O(1); no allocation.
    /// Joseph-like: about 3·p² (its upper-triangle update, a mirror copy and the product); EFRA about p³/2 more. Storage p·s doubles (twice
    /// that for the double-buffered forms) plus O(p). Every check of an update is made before anything is written, so a failed update leaves
    /// the estimator untouched.</para>
    /// <para><b>Accuracy.</b> Not backward stable: the error behaves like ε·κ_path, κ_path = maxₖ cond(Hₖ) over the whole run (MATH.md §2.2
    /// item 3, §10) — largest at the start when δ is small. Prefer the square-root or information forms for ill-conditioned data. With β &lt; 1
    /// and poor excitation P grows geometrically (windup, MATH.md §2.3).</para>
    /// <para><b>Overflow ceiling.</b> An update that would make an entry of P reach 2¹⁰²⁰ ≈ 1.1·10³⁰⁷ (a bound proven from max|P̃| and the
    /// downdate, rescanned exactly before it refuses) is refused as <see cref="BreakdownKind.NonFinite"/>; a prior weight whose reciprocal
    /// reaches that ceiling is refused at construction.</para>
    /// <para><b>Failures.</b> Invalid input throws <see cref="ArgumentException"/> before any change; with
    /// <see cref="CovarianceFormSettings.InvalidSamples"/> = <see cref="InvalidSamplePolicy.SkipAndCount"/> a sample with NaN or ∞ in x or y
    /// or a bad weight is instead skipped and counted in <see cref="SkippedSampleCount"/> (a wrong length still throws). A data-dependent breakdown (s &lt; 0,
    /// d ≤ 0, a non-positive diagonal of the new P, or an overflow) throws <see cref="RidgeBreakdownException"/> with
    /// <see cref="BreakdownKind.LostDefiniteness"/> or <see cref="BreakdownKind.NonFinite"/> (or returns false from <see cref="TryUpdate"/>)
    /// and leaves the estimator exactly as it was; re-initialize or switch to a square-root form.</para>
    /// <para><b>Persistence.</b> <see cref="WriteSnapshot"/> and <see cref="ReadSnapshot"/> save and restore the complete state (settings,
    /// counts, θ, P, J*) bit for bit, so a restarted process continues with exactly the results it would have had.</para>
    /// <para><b>Threads and reproducibility.</b> Not thread-safe (one writer; readers must synchronize). The same inputs on the same runtime and
    /// hardware give the same bits; the last bits may differ between the net10.0 (vectorized) and netstandard2.0 builds.</para>
    /// </remarks>
#if NET
    // Update is inlined into the caller's loop with its struct locals (breakdown reports); without this the JIT zeroes them every update.
    [SkipLocalsInit]
#endif
    public sealed class CovarianceFormEstimator : IRecursiveEstimator
    {
        private readonly int p;
        private readonly double beta;
        private readonly CovarianceUpdate updateForm;
        private readonly CovarianceFormSettings settings;
        private readonly bool skipInvalid;
        private const string SnapshotKind = "CovarianceFormEstimator";
        private const int SnapshotVersion = 2;

        // Entries of P are refused from 2^1020 (about 1.12e307) on, a margin below the overflow threshold 2^1024 within which the bound
        // arithmetic below cannot itself overflow unnoticed.
        private static readonly double OverflowLimit = CovarianceKernels.ScaleB(1.0, 1020);

        // The scale σ is folded back into the stored matrix (an exact power-of-two rescaling) once it exceeds 2^32.
        private static readonly double RenormalizeAbove = CovarianceKernels.ScaleB(1.0, 32);

        // Outside [2⁻¹⁰⁰⁰, 2¹⁰⁰⁰] the squares of the projection are rescaled (RescaleProjection).
        private static readonly double SquareRangeHigh = CovarianceKernels.ScaleB(1.0, 1000);
        private static readonly double SquareRangeLow = CovarianceKernels.ScaleB(1.0, -1000);

        // 1 + 2⁻⁴⁸: covers the roundings of fl(uᵢuⱼ) and of c·max uⱼ² in the overflow bound.
        private const double BoundSlack = 1.0 + 3.552713678800501e-15;
        private readonly WindupProtectionKind windupKind;
        private readonly double logBeta;
        private readonly double traceLimit;
        private readonly double resettingGain;
        private readonly double resettingAddition;
        private readonly double resettingContraction;
        private readonly double directionalFactor;
        private readonly double deadZone;
        private double logForgettingProduct;
        private double lastForgettingFactor = double.NaN;
        private readonly double[] gain;

        // P = σ·P̃: P̃ dense row-major with row stride `stride` (both triangles, zero pad columns), σ = covarianceScale. The symmetric update
        // with no windup protection or the trace bound works in place on P̃ and keeps forgetting in σ (P ← P/β is σ ← σ/β); the other
        // policies keep σ = 1 and write into the second buffer, so that a failed update leaves P untouched in every policy.
        private readonly int stride;
        private readonly bool inPlace;

        // p = 4 on the vector path, in place, no windup protection: TryUpdate takes StepFour.
        private readonly bool fourColumnEligible;
        private bool fourColumnPath;
        private readonly int covarianceLength;

        // Both buffers start on a 64-byte boundary (pinned, net10.0 build): the fused pass's 256- and 512-bit loads and stores of P̃ then
        // never straddle a cache line (measured at p = 64 on one pinned core: 524 ns per update aligned, 683 ns at an offset of 24 bytes).
        private double[] covarianceStore;
        private int covarianceStart;
        private double[] covarianceNextStore;
        private int covarianceNextStart;
        private double covarianceScale = 1.0;

        /// <summary>P̃ (stride-padded rows, aligned).</summary>
        private Span<double> Covariance => covarianceStore.AsSpan(covarianceStart, covarianceLength);

        /// <summary>θ (stride long, zero pad).</summary>
        private Span<double> Theta => thetaPair.AsSpan(thetaAt, stride);

        /// <summary>Where an update writes its candidate θ'.</summary>
        private Span<double> ThetaNext => thetaPair.AsSpan(stride - thetaAt, stride);

        /// <summary>u of the pending downdate.</summary>
        private Span<double> Pending => vectorPair.AsSpan(pendingAt, stride);

        /// <summary>Scratch for the projection v = P̃·x of the update under way.</summary>
        private Span<double> V => vectorPair.AsSpan(stride - pendingAt, stride);

        /// <summary>The second buffer of the double-buffered policies (empty for the in-place update).</summary>
        private Span<double> CovarianceNext => covarianceNextStore.Length == 0 ? Span<double>.Empty : covarianceNextStore.AsSpan(covarianceNextStart, covarianceLength);

        // An upper bound on max |P̃ᵢⱼ| (exact after a rescan), which proves without a pass over P̃ that a downdate cannot overflow.
        private double covarianceBound;

        // The downdate P̃ ← P̃ − c·u·uᵀ (c = g·σ, u = P̃x) of the last accepted update is deferred and applied in the same pass as the next
        // update's product P̃·x (one pass over P̃ per update instead of two). While pending, P̃ stands for fl(P̃ − c·fl(uᵢuⱼ)) entry by entry;
        // readers compute those entries on the fly with the kernel's own arithmetic, so what they see is bit for bit the applied matrix.
        // u of the pending downdate and the scratch for the next u, in the two halves of one array: swapping them is a change of
        // offset, not of references (no write barrier on the update path).
        private readonly double[] vectorPair;
        private int pendingAt;
        private double pendingCoefficient;
        private bool hasPending;
        private readonly double[] paddedX;
        // θ and the candidate θ' of an update in the two halves of one array (accepting an update flips the offset).
        private readonly double[] thetaPair;
        private int thetaAt;
        private double minimumCost;
        private double lastError = double.NaN;

        /// <summary>
        /// Whether updates may take the four-column register path (p = 4, in place, no windup protection, the vector build). Tests switch it
        /// off to compare it with the general path bit for bit; setting it true where the path does not apply leaves it off.
        /// </summary>
        internal bool FourColumnPathEnabled
        {
            get => fourColumnPath;
            set => fourColumnPath = value && fourColumnEligible;
        }

        /// <summary>Creates the estimator with P₀ = δ⁻¹·I (δ = <see cref="CovarianceFormSettings.PriorWeight"/>) and θ₀ from the settings.</summary>
        /// <param name="parameterCount">Number of regressors p ≥ 1.</param>
        /// <param name="settings">Settings; null for <see cref="CovarianceFormSettings.Default"/>.</param>
        /// <exception cref="ArgumentException"><paramref name="parameterCount"/> below 1, or a prior whose length is not p.</exception>
        /// <remarks>Allocates all state (O(p²)); nothing is allocated afterwards.</remarks>
        public CovarianceFormEstimator(int parameterCount, CovarianceFormSettings? settings = null)
            : this(parameterCount, settings ?? CovarianceFormSettings.Default, ReadOnlySpan<double>.Empty, InitialState.FromPriorWeight)
        {
        }

        /// <summary>Creates the estimator with an explicit symmetric positive definite initial covariance P₀ (Γ₀ = P₀⁻¹); the prior weight of the settings is ignored.</summary>
        /// <param name="parameterCount">Number of regressors p ≥ 1.</param>
        /// <param name="settings">Settings (forgetting, prior θ₀, update form); null for the defaults.</param>
        /// <param name="initialCovariance">P₀, p×p row-major. Entries (i, j) and (j, i) must agree to 10⁻¹² of the largest diagonal entry; the upper triangle is used.</param>
        /// <exception cref="ArgumentException">Wrong length, a non-finite entry, not symmetric, or not positive definite (Cholesky fails).</exception>
        public CovarianceFormEstimator(int parameterCount, CovarianceFormSettings? settings, ReadOnlySpan<double> initialCovariance)
            : this(parameterCount, settings ?? CovarianceFormSettings.Default, initialCovariance, InitialState.Explicit)
        {
        }

        /// <summary>How the private constructor sets P: from δ, from an explicit P₀, or not at all (a snapshot overwrites the state).</summary>
        private enum InitialState
        {
            FromPriorWeight,
            Explicit,
            Restored,
        }

        private CovarianceFormEstimator(int parameterCount, CovarianceFormSettings settings, ReadOnlySpan<double> initialCovariance, InitialState initialState)
        {
            if (parameterCount < 1)
            {
                Guard.ThrowOutOfRange(nameof(parameterCount), parameterCount, "must be >= 1");
            }

            p = parameterCount;
            this.settings = settings;
            beta = settings.ForgettingFactor;
            updateForm = settings.Update;
            skipInvalid = settings.InvalidSamples == InvalidSamplePolicy.SkipAndCount;
            logBeta = Math.Log(beta);
            WindupProtection windup = settings.Windup;
            windupKind = windup.Kind;
            traceLimit = windup.TraceLimit;
            resettingGain = windup.ResettingGain;
            resettingAddition = windup.ResettingAddition;
            resettingContraction = windup.ResettingContraction;
            directionalFactor = windup.DirectionalFactor;
            deadZone = windup.DeadZone;
            (double lowerBound, double upperBound) = windup.Bounds(beta);
            CovarianceLowerBound = lowerBound;
            CovarianceUpperBound = upperBound;
            if (windupKind == WindupProtectionKind.ExponentialResetting)
            {
                if (!(beta < 1.0))
                {
                    Guard.ThrowArgument(nameof(settings), "settings.Windup = ExponentialResetting needs settings.ForgettingFactor < 1 (MATH.md §2.4c); it is 1.");
                }

                double eta = (1.0 - beta) / beta;
                double lhs = (eta * eta) + (4.0 * resettingAddition * resettingContraction);
                double rhs = (1.0 - resettingGain) * (1.0 - resettingGain);
                if (!(lhs <= rhs))
                {
                    Guard.ThrowArgument(nameof(settings), FormattableString.Invariant(
                        $"settings.Windup = {windup} with settings.ForgettingFactor = {beta:R} breaks the invariant-bound condition η² + 4bc ≤ (1 − α)² of MATH.md §2.4c: {lhs:R} > {rhs:R} (η = (1 − β)/β = {eta:R}); lower b or c, or raise β."));
                }
            }
            else if (windupKind == WindupProtectionKind.Directional && beta != 1.0)
            {
                Guard.ThrowArgument(nameof(settings), FormattableString.Invariant(
                    $"settings.Windup = Directional replaces exponential forgetting and needs settings.ForgettingFactor = 1; it is {beta:R}."));
            }

            IReadOnlyList<double>? prior = settings.Prior;
            if (prior is not null && prior.Count != p)
            {
                Guard.ThrowArgument(nameof(settings), FormattableString.Invariant($"settings.Prior has length {prior.Count}; expected {p} (one per regressor)."));
            }

            stride = CovarianceKernels.Stride(p);
            inPlace = updateForm == CovarianceUpdate.Symmetric && windupKind is WindupProtectionKind.None or WindupProtectionKind.TraceBound;
            fourColumnEligible = inPlace && windupKind == WindupProtectionKind.None && p == 4 && stride == 4 && CovarianceKernels.IsVectorized;
            fourColumnPath = fourColumnEligible;
            // At least four rows, so that the fixed-size path for p ≤ 4 can hold whole 4×4 blocks (rows p … 3 stay zero).
            covarianceLength = Math.Max(p, 4) * stride;
            covarianceStore = GramUpdateKernels.AllocateAligned(covarianceLength, out covarianceStart);
            covarianceNextStore = inPlace ? Array.Empty<double>() : GramUpdateKernels.AllocateAligned(covarianceLength, out covarianceNextStart);
            thetaPair = new double[2 * stride];
            vectorPair = new double[2 * stride];
            gain = new double[p];
            paddedX = new double[stride];
            if (prior is not null)
            {
                for (int j = 0; j < p; j++)
                {
                    thetaPair[j] = prior[j];
                }
            }

            if (initialState == InitialState.Explicit)
            {
                SetInitialCovariance(initialCovariance);
            }
            else if (initialState == InitialState.FromPriorWeight)
            {
                double p0 = windupKind == WindupProtectionKind.ExponentialResetting ? CovarianceUpperBound : 1.0 / settings.PriorWeight;
                if (!(p0 < OverflowLimit))
                {
                    Guard.ThrowArgument(nameof(settings), "settings.PriorWeight is so small that its reciprocal reaches 2^1020 (about 1.12e307), the largest covariance entry this form admits.");
                }

                for (int i = 0; i < p; i++)
                {
                    Covariance[(i * stride) + i] = p0;
                }
            }

            covarianceBound = CovarianceKernels.MaxAbs(Covariance, stride, p);
            if (initialState != InitialState.Restored && windupKind == WindupProtectionKind.TraceBound)
            {
                double trace = CovarianceTrace();
                if (!(trace <= traceLimit))
                {
                    string name = initialState == InitialState.Explicit ? "initialCovariance" : nameof(settings);
                    Guard.ThrowArgument(name, FormattableString.Invariant(
                        $"The trace bound needs tr(P₀) ≤ c_max (MATH.md §2.4b): tr(P₀) = {trace:R} > settings.Windup.TraceLimit = {traceLimit:R}; raise the limit or the prior weight."));
                }
            }
        }

        /// <summary>
        /// Σⱼ ln βⱼ over the accepted updates: the log of the product of the forgetting factors actually used (n·ln β without protection,
        /// the recorded variable factors under <see cref="WindupProtectionKind.TraceBound"/>, 0 under directional forgetting). O(1).
        /// </summary>
        /// <remarks>
        /// What a batch reference of the trace bound needs (MATH.md §2.4b): record this value Lᵢ after update i; at time n sample i has effective
        /// weight wᵢ·exp(Lₙ − Lᵢ) and the prior weight is exp(Lₙ)·Γ₀. Kept as a log because the product underflows on long runs (MATH.md §9).
        /// Accumulated in double precision, one rounding per update.
        /// </remarks>
        public double LogForgettingProduct => logForgettingProduct;

        /// <summary>The forgetting factor βₙ used by the last accepted update (NaN before the first). Equal to β unless the trace bound raised it. O(1).</summary>
        public double LastForgettingFactor => lastForgettingFactor;

        /// <summary>
        /// Lower bound on the eigenvalues of P that the windup policy guarantees: σ_lo for <see cref="WindupProtectionKind.ExponentialResetting"/>
        /// (MATH.md §2.4c), 0 otherwise. In floating point the bound holds up to rounding of relative order ε·cond(P). O(1).
        /// </summary>
        public double CovarianceLowerBound { get; }

        /// <summary>
        /// Upper bound on the eigenvalues of P that the windup policy guarantees: σ_hi for EFRA, c_max for the trace bound (an eigenvalue is
        /// at most the trace), +∞ for none and for directional forgetting (which bounds only the unexcited directions). Up to rounding. O(1).
        /// </summary>
        public double CovarianceUpperBound { get; }

        /// <inheritdoc/>
        public int ParameterCount => p;

        /// <inheritdoc/>
        public long SampleCount { get; private set; }

        /// <inheritdoc/>
        public long SkippedSampleCount { get; private set; }

        /// <summary>The settings the estimator was built with.</summary>
        public CovarianceFormSettings Settings => settings;

        /// <summary>The forgetting factor β of the settings.</summary>
        public double ForgettingFactor => beta;

        /// <summary>Always 0: this form has no separate intercept (append a constant regressor instead; see the type remarks).</summary>
        public double Intercept => 0.0;

        /// <summary>
        /// Minimal value J*ₙ = minθ Jₙ(θ) of the regime-D objective, by the recursion J*ₙ = β·J*ₙ₋₁ + β·w·e²/d, J*₀ = 0 (MATH.md §2.1).
        /// O(1). Accuracy: relative error of order ε·κ_path (MATH.md §10). Under the trace bound βₙ replaces β (the objective with the recorded
        /// factors); NaN under EFRA and directional forgetting, which minimize no objective.
        /// </summary>
        public double MinimumCost => windupKind is WindupProtectionKind.ExponentialResetting or WindupProtectionKind.Directional ? double.NaN : minimumCost;

        /// <summary>A-priori error e = y − xᵀθₙ₋₁ of the last accepted update (before θ was updated), NaN before the first update. The
        /// a-posteriori error is (β/d)·e (MATH.md §2.1).</summary>
        public double LastPriorError => lastError;

        /// <inheritdoc/>
        /// <exception cref="ArgumentException">Wrong length, or a non-finite value under <see cref="InvalidSamplePolicy.Throw"/>.</exception>
        /// <exception cref="RidgeBreakdownException">P lost positive definiteness or overflowed; the estimator is unchanged.</exception>
        /// <remarks>O(p²), no allocation. See the type remarks.</remarks>
        public void Update(ReadOnlySpan<double> x, double y) => Update(x, y, 1.0);

        /// <inheritdoc/>
        /// <exception cref="ArgumentException">Wrong length, or under <see cref="InvalidSamplePolicy.Throw"/> a non-finite value or a negative or
        /// non-finite weight (under <see cref="InvalidSamplePolicy.SkipAndCount"/> those samples are skipped and counted).</exception>
        /// <exception cref="RidgeBreakdownException">P lost positive definiteness or overflowed; the estimator is unchanged.</exception>
        /// <remarks>O(p²), no allocation. See the type remarks.</remarks>
#if NET
        [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.AggressiveOptimization)]
#endif
        public void Update(ReadOnlySpan<double> x, double y, double weight)
        {
            if (!TryUpdate(x, y, weight, out BreakdownInfo breakdown))
            {
                Guard.ThrowBreakdown(breakdown);
            }
        }

        /// <summary>As <see cref="Update(ReadOnlySpan{double}, double, double)"/>, but reports a data-dependent breakdown by returning false.</summary>
        /// <param name="x">Regressor vector of length p.</param>
        /// <param name="y">Output.</param>
        /// <param name="weight">Sample weight, finite and ≥ 0; 0 only forgets.</param>
        /// <param name="breakdown">What broke down (<see cref="BreakdownKind.LostDefiniteness"/> with the offending value, or
        /// <see cref="BreakdownKind.NonFinite"/>), or <see cref="BreakdownInfo.None"/>.</param>
        /// <returns>True when the sample was accepted (or skipped under <see cref="InvalidSamplePolicy.SkipAndCount"/>: then only
        /// <see cref="SkippedSampleCount"/> changes); false leaves the estimator exactly as it was.</returns>
        /// <exception cref="ArgumentException">Caller mistakes, as for Update (never reported through the return value).</exception>
        /// <remarks>O(p²), no allocation (also when skipping).</remarks>
#if NET
        [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.AggressiveOptimization | System.Runtime.CompilerServices.MethodImplOptions.AggressiveInlining)]
#endif
        public bool TryUpdate(ReadOnlySpan<double> x, double y, double weight, out BreakdownInfo breakdown)
        {
            Guard.Length(x.Length, p, nameof(x));
            if (skipInvalid && !Guard.IsUsableSample(x, y, weight))
            {
                SkippedSampleCount++;
                breakdown = BreakdownInfo.None;
                return true;
            }

            // x is checked by the a-priori error in Step (a non-finite entry always makes xᵀθ non-finite); a bad y or weight reports x first.
            if (!Guard.IsUsableOutputAndWeight(y, weight))
            {
                RejectSample(x, y, weight);
            }

#if NET
            if (fourColumnPath)
            {
                return StepFour(x, y, weight, out breakdown);
            }
#endif
            return Step(x, y, weight, out breakdown);
        }

#if NET
        /// <summary>
        /// The whole update for p = 4 on the vector path (in place, no windup protection): the arithmetic of <see cref="Step"/> and
        /// <see cref="InPlaceStep"/> at stride 4 — the same a-priori error as <see cref="CovarianceKernels.Dot"/>, the same projection as
        /// <see cref="CovarianceKernels.ProjectSmall"/>, the same θ', bound and new diagonal as <see cref="CovarianceKernels.GainStepFour"/> and
        /// <see cref="CovarianceKernels.SmallestDowndatedDiagonalFour"/>, so the same bits — held in four registers and written only once every
        /// check has passed. Anything out of the ordinary (weight 0, a non-finite a-priori error, a failed check, a rescaling of u) goes to the
        /// general path before anything has changed, which then does or refuses the update as it always has.
        /// </summary>
        [MethodImpl(MethodImplOptions.NoInlining | MethodImplOptions.AggressiveOptimization)]
        private bool StepFour(ReadOnlySpan<double> x, double y, double weight, out BreakdownInfo breakdown)
        {
            ref double xr = ref MemoryMarshal.GetReference(x);
            ref double tr = ref thetaPair[thetaAt];
            Vector256<double> xv = Vector256.LoadUnsafe(ref xr);
            Vector256<double> thetaV = Vector256.LoadUnsafe(ref tr);
            double e = y - CovarianceKernels.DotFour(xv, thetaV);
            if (weight == 0.0 || !Guard.IsFinite(e))
            {
                return Step(x, y, weight, out breakdown);
            }

            ref double ar = ref covarianceStore[covarianceStart];
            Vector256<double> r0 = Vector256.LoadUnsafe(ref ar);
            Vector256<double> r1 = Vector256.LoadUnsafe(ref ar, 4);
            Vector256<double> r2 = Vector256.LoadUnsafe(ref ar, 8);
            Vector256<double> r3 = Vector256.LoadUnsafe(ref ar, 12);
            if (hasPending)
            {
                CovarianceKernels.DowndateFour(ref r0, ref r1, ref r2, ref r3, Vector256.LoadUnsafe(ref vectorPair[pendingAt]), pendingCoefficient);
            }

            Vector256<double> uv = CovarianceKernels.MultiplyFour(r0, r1, r2, r3, xv);
            double sigma = covarianceScale;
            double s = sigma * GramUpdateKernels.SumOfLanes(xv * uv);
            double d = beta + (weight * s);
            double g = weight / d;
            double coefficient = g * sigma;
            Vector256<double> thetaNew = Fma.MultiplyAdd(Vector256.Create(coefficient * e), uv, thetaV);

            // max uⱼ² (NaN is caught by the finiteness test beside it, so the plain max instruction serves), the finiteness of u and θ'
            // (x − x is 0 for a finite x, NaN otherwise), and the new diagonal fl(P̃ᵢᵢ − c·fl(uᵢ²)) with the downdate's own FMA.
            Vector256<double> squares = uv * uv;
            double largestSquare = CovarianceKernels.LargestLane(squares);
            Vector256<double> finite = Vector256.Equals((uv - uv) + (thetaNew - thetaNew), Vector256<double>.Zero);
            Vector256<double> diagonal = Fma.MultiplyAdd(Vector256.Create(-coefficient), squares,
                Vector256.Create(r0.GetElement(0), r1.GetElement(1), r2.GetElement(2), r3.GetElement(3)));
            Vector256<double> positive = Vector256.GreaterThan(diagonal, Vector256<double>.Zero);
            double largest = coefficient * largestSquare * BoundSlack;
            double newCost = beta * (minimumCost + (g * e * e));
            double sigmaNext = sigma / beta;
            double bound = covarianceBound + largest;
            if (!(s >= 0.0) || !(d > 0.0) || double.IsInfinity(d)
                || (finite & positive).ExtractMostSignificantBits() != 0xF
                || !(largestSquare <= SquareRangeHigh && (largestSquare >= SquareRangeLow || largestSquare == 0.0))
                || !Guard.IsFinite(largest) || !Guard.IsFinite(newCost) || !(coefficient > 0.0)
                || !(bound * sigmaNext < OverflowLimit))
            {
                return InPlaceStep(x, weight, e, beta, logBeta, out breakdown);
            }

            r0.StoreUnsafe(ref ar);
            r1.StoreUnsafe(ref ar, 4);
            r2.StoreUnsafe(ref ar, 8);
            r3.StoreUnsafe(ref ar, 12);
            pendingAt = 4 - pendingAt;
            uv.StoreUnsafe(ref vectorPair[pendingAt]);
            pendingCoefficient = coefficient;
            hasPending = true;
            thetaNew.StoreUnsafe(ref tr);
            covarianceBound = bound;
            covarianceScale = sigmaNext;
            minimumCost = newCost;
            CommitInPlace(e, beta, logBeta);
            breakdown = BreakdownInfo.None;
            return true;
        }
#endif

        /// <summary>Throws for the first bad argument in the order x, y, weight (called when y or the weight is bad).</summary>
        [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.NoInlining)]
        private static void RejectSample(ReadOnlySpan<double> x, double y, double weight)
        {
            Guard.AllFinite(x, nameof(x));
            if (!Guard.IsFinite(y))
            {
                Guard.ThrowOutOfRange(nameof(y), y, "must be a finite number");
            }

            Guard.Weight(weight, nameof(weight));
        }

        /// <summary>The update proper, with y and the weight validated; x is checked here through the a-priori error (kept apart so that the checks and the skip path stay small).</summary>
#if NET
        [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.NoInlining | System.Runtime.CompilerServices.MethodImplOptions.AggressiveOptimization)]
#else
        [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.NoInlining)]
#endif
        private bool Step(ReadOnlySpan<double> x, double y, double weight, out BreakdownInfo breakdown)
        {
            double e = y - CovarianceKernels.Dot(x, Theta);
            if (!Guard.IsFinite(e))
            {
                // A non-finite entry of x makes one term of xᵀθ ±∞ or NaN, so it always lands here: it is the caller's mistake and is
                // reported as such, before anything has changed. Otherwise (finite x, an overflowing product) it is a breakdown.
                Guard.AllFinite(x, nameof(x));
                breakdown = new BreakdownInfo(BreakdownKind.NonFinite, -1, e, double.NaN);
                return false;
            }

            if (windupKind == WindupProtectionKind.ExponentialResetting)
            {
                return ResettingStep(x, weight, e, out breakdown);
            }

            if (windupKind == WindupProtectionKind.Directional)
            {
                return DirectionalStep(x, weight, e, out breakdown);
            }

            double factor = beta;
            double logFactor = logBeta;
            if (windupKind == WindupProtectionKind.TraceBound)
            {
                // MATH.md §2.4b: βₙ = max(β, tr(Pₙ₋₁)/c_max), clamped at 1 against a trace a few ulps above c_max.
                double raised = Math.Min(1.0, CovarianceTrace() / traceLimit);
                if (raised > factor)
                {
                    factor = raised;
                    logFactor = Math.Log(raised);
                }
            }

            if (inPlace)
            {
                return InPlaceStep(x, weight, e, factor, logFactor, out breakdown);
            }

            int code;
            int failIndex;
            double failValue;
            double newCost;
            if (weight == 0.0)
            {
                // Pure forgetting step: θ unchanged, P ← P/β, J* ← β J*.
                code = RecursiveKernels.CovarianceUpdate(Covariance, CovarianceNext, p, 0.0, V, factor, out failIndex, out failValue, stride);
                newCost = factor * minimumCost;
                Theta.Slice(0, p).CopyTo(ThetaNext);
            }
            else
            {
                x.CopyTo(paddedX);
                double s = CovarianceKernels.Multiply(Covariance, stride, p, paddedX, V);
                double d = factor + (weight * s);
                if (!(s >= 0.0) || !(d > 0.0) || double.IsInfinity(d))
                {
                    breakdown = ProjectionBreakdown(s, d);
                    return false;
                }

                double g = weight / d;
                Span<double> v = V, theta = Theta, thetaNext = ThetaNext;
                for (int j = 0; j < p; j++)
                {
                    double kj = g * v[j];
                    gain[j] = kj;
                    thetaNext[j] = theta[j] + (kj * e);
                }

                code = RecursiveKernels.JosephUpdate(Covariance, CovarianceNext, p, gain, V, d / weight, factor, out failIndex, out failValue, stride);
                newCost = factor * (minimumCost + (weight * e * e / d));
                if (code == 0 && !(AllFinite(ThetaNext) && Guard.IsFinite(newCost)))
                {
                    code = 1;
                    failIndex = -1;
                    failValue = double.NaN;
                }
            }

            if (code != 0)
            {
                breakdown = new BreakdownInfo(code == 1 ? BreakdownKind.NonFinite : BreakdownKind.LostDefiniteness, failIndex, failValue, double.NaN);
                return false;
            }

            minimumCost = newCost;
            CommitBuffered(e, factor, logFactor);
            breakdown = BreakdownInfo.None;
            return true;
        }

        private static BreakdownInfo ProjectionBreakdown(double s, double d) =>
            double.IsInfinity(s) || double.IsInfinity(d) || double.IsNaN(s)
                ? new BreakdownInfo(BreakdownKind.NonFinite, -1, s, double.NaN)
                : new BreakdownInfo(BreakdownKind.LostDefiniteness, -1, s < 0.0 ? s : d, double.NaN);

        /// <summary>
        /// The symmetric update (MATH.md §2.2 item 1) in the scaled representation P = σ·P̃: with u = P̃·x, s = σ·xᵀu, d = β + w·s and g = w/d,
        /// θ ← θ + (g·σ)·u·e, P̃ ← P̃ − (g·σ)·u·uᵀ, and σ ← σ/β — the same matrix (P − g·v·vᵀ)/β, v = P·x, without touching every
        /// entry a second time for the division by β. Every check (s ≥ 0, d &gt; 0, each new diagonal entry positive, no entry of P beyond
        /// 2^1020, finite θ and J*) is made before anything is written, so a refused update changes nothing.
        /// </summary>
#if NET
        [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.AggressiveOptimization)]
#endif
        private bool InPlaceStep(ReadOnlySpan<double> x, double weight, double e, double factor, double logFactor, out BreakdownInfo breakdown)
        {
            double sigma = covarianceScale;
            double sigmaNext = sigma / factor;
            if (weight == 0.0)
            {
                // Pure forgetting: P ← P/β is σ ← σ/β; θ unchanged; J* ← β·J*.
                if (!(covarianceBound * sigmaNext < OverflowLimit) && !RescanBound(0.0, sigmaNext))
                {
                    breakdown = new BreakdownInfo(BreakdownKind.NonFinite, -1, covarianceBound * sigmaNext, double.NaN);
                    return false;
                }

                covarianceScale = sigmaNext;
                minimumCost = factor * minimumCost;
                CommitInPlace(e, factor, logFactor);
                breakdown = BreakdownInfo.None;
                return true;
            }

            // Applying the deferred downdate changes the representation only, so a refusal below still leaves the estimator as it was.
            double projection;
            if (stride == 4 && CovarianceKernels.IsVectorized)
            {
                projection = CovarianceKernels.ProjectSmall(Covariance, p, hasPending, Pending, pendingCoefficient, x, V);
            }
            else
            {
                // The kernels read x with its zero pad (x itself when p is already a whole number of vectors).
                ReadOnlySpan<double> xs = x;
                if (p != stride)
                {
                    x.CopyTo(paddedX);
                    xs = paddedX;
                }

                projection = hasPending
                    ? CovarianceKernels.DowndateAndMultiply(Covariance, stride, p, Pending, pendingCoefficient, xs, V)
                    : CovarianceKernels.Multiply(Covariance, stride, p, xs, V);
            }

            hasPending = false;
            double s = sigma * projection;
            double d = factor + (weight * s);
            if (!(s >= 0.0) || !(d > 0.0) || double.IsInfinity(d))
            {
                breakdown = ProjectionBreakdown(s, d);
                return false;
            }

            double g = weight / d;
            double gs = g * sigma;
            // θ' = θ + (g·σ·e)·u and max uⱼ²; the pad entries of u are 0 (pad columns of P̃ are 0), so the pad of θ stays 0. The downdate
            // term c·fl(uᵢuⱼ), c = g·σ, is at most c·max uⱼ² up to one rounding, covered by the slack factor.
            // Above stride 4 the same pass tests the new diagonal for c = g·σ (a rescaling below changes c, and the test is then redone).
            bool diagonalPositive = false;
            double largestSquare = stride == 4
                ? CovarianceKernels.GainStepFour(V, gs * e, Theta, ThetaNext)
                : CovarianceKernels.GainStep(V, gs * e, Theta, ThetaNext, stride, Covariance, p, gs, out diagonalPositive);
            double coefficient = gs;
            if (!(largestSquare <= SquareRangeHigh && (largestSquare >= SquareRangeLow || largestSquare == 0.0)) && !double.IsNaN(largestSquare))
            {
                // uᵢuⱼ would over- or underflow although c·uᵢuⱼ need not (large or tiny P̃): scale u by 2⁻ᵏ and c by 2²ᵏ, exactly, so the
                // downdate's products are the same numbers scaled by powers of two.
                largestSquare = RescaleProjection(ref coefficient);
                diagonalPositive = false;
            }

            double largest = coefficient * largestSquare * BoundSlack;
            // w·e²/d = g·e²: no second division on the update path.
            double newCost = factor * (minimumCost + (g * e * e));
            if (!Guard.IsFinite(largest) || !Guard.IsFinite(newCost) || !(coefficient > 0.0))
            {
                breakdown = new BreakdownInfo(BreakdownKind.NonFinite, -1, double.NaN, double.NaN);
                return false;
            }

            // The new diagonal, computed exactly as the downdate will compute it (already known positive from the gain pass, or searched here).
            if (!diagonalPositive)
            {
                double diagonal = stride == 4
                    ? CovarianceKernels.SmallestDowndatedDiagonalFour(Covariance, p, V, coefficient, out int smallestAt)
                    : CovarianceKernels.SmallestDowndatedDiagonal(Covariance, stride, p, V, coefficient, out smallestAt);
                if (!(diagonal > 0.0))
                {
                    breakdown = new BreakdownInfo(BreakdownKind.LostDefiniteness, smallestAt, diagonal * sigmaNext, double.NaN);
                    return false;
                }
            }

            // |P̃ᵢⱼ − c·uᵢuⱼ| ≤ max|P̃| + c·max uᵢ²: when that bound (times σ) is below the limit, no entry can overflow.
            double bound = covarianceBound + largest;
            if (!(bound * sigmaNext < OverflowLimit))
            {
                if (!RescanBound(largest, sigmaNext))
                {
                    breakdown = new BreakdownInfo(BreakdownKind.NonFinite, -1, (covarianceBound + largest) * sigmaNext, double.NaN);
                    return false;
                }

                bound = covarianceBound + largest;
            }

            pendingAt = stride - pendingAt;
            pendingCoefficient = coefficient;
            hasPending = true;
            covarianceBound = bound;
            covarianceScale = sigmaNext;
            minimumCost = newCost;
            thetaAt = stride - thetaAt;
            CommitInPlace(e, factor, logFactor);
            breakdown = BreakdownInfo.None;
            return true;
        }

        /// <summary>
        /// Scales the projection u (in <c>v</c>) by 2⁻ᵏ, k the exponent of max|uᵢ|, and the downdate coefficient by 2²ᵏ — both exact — and
        /// returns the new max uᵢ² (in [1, 4)). O(p); runs only when max uᵢ² leaves [2⁻¹⁰⁰⁰, 2¹⁰⁰⁰].
        /// </summary>
        private double RescaleProjection(ref double coefficient)
        {
            Span<double> v = V;
            double largestAbs = 0.0;
            for (int j = 0; j < p; j++)
            {
                largestAbs = Math.Max(largestAbs, Math.Abs(v[j]));
            }

            int k = CovarianceKernels.Exponent(largestAbs);
            double f = CovarianceKernels.ScaleB(1.0, -k);
            double square = 0.0;
            for (int j = 0; j < p; j++)
            {
                v[j] *= f;
                square = Math.Max(square, v[j] * v[j]);
            }

            coefficient = CovarianceKernels.ScaleB(coefficient, 2 * k);
            return square;
        }

        /// <summary>Replaces the running bound by the exact max |P̃ᵢⱼ| (O(p²)); true when (max + <paramref name="addition"/>)·σ is within the limit.</summary>
        private bool RescanBound(double addition, double scale)
        {
            Flush();
            covarianceBound = CovarianceKernels.MaxAbs(Covariance, stride, p);
            return (covarianceBound + addition) * scale < OverflowLimit;
        }

        /// <summary>Applies a deferred downdate (a change of representation only). O(p²) when one is pending.</summary>
        private void Flush()
        {
            if (hasPending)
            {
                CovarianceKernels.RankOneDowndate(Covariance, stride, p, Pending, pendingCoefficient);
                hasPending = false;
            }
        }

        /// <summary>Entry (i, j) of P̃ with a deferred downdate applied, bit for bit as the kernel will apply it. O(1).</summary>
        private double ScaledEntry(int i, int j)
        {
            double value = Covariance[(i * stride) + j];
            return hasPending ? CovarianceKernels.MultiplyAdd(-pendingCoefficient, vectorPair[pendingAt + i] * vectorPair[pendingAt + j], value) : value;
        }

        /// <summary>tr(P) = Σᵢ fl(σ·P̃ᵢᵢ) in index order (as a reader of <see cref="CopyCovarianceTo"/> would sum it). O(p).</summary>
        private double CovarianceTrace()
        {
            double t = 0.0;
            for (int i = 0; i < p; i++)
            {
                t += covarianceScale * ScaledEntry(i, i);
            }

            return t;
        }

        /// <summary>Counts the accepted in-place update and folds σ into P̃ (an exact power-of-two rescaling) once it exceeds 2^32.</summary>
        private void CommitInPlace(double e, double factor, double logFactor)
        {
            if (covarianceScale > RenormalizeAbove)
            {
                Flush();
                int k = CovarianceKernels.Exponent(covarianceScale);
                CovarianceKernels.ScaleByPowerOfTwo(Covariance, stride, p, k);
                covarianceScale = CovarianceKernels.ScaleB(covarianceScale, -k);
                covarianceBound = CovarianceKernels.MaxAbs(Covariance, stride, p);
            }

            lastError = e;
            lastForgettingFactor = factor;
            logForgettingProduct += logFactor;
            SampleCount++;
        }

        private void CommitBuffered(double e, double factor, double logFactor)
        {
            CovarianceKernels.Mirror(CovarianceNext, stride, p);
            (covarianceStore, covarianceNextStore) = (covarianceNextStore, covarianceStore);
            (covarianceStart, covarianceNextStart) = (covarianceNextStart, covarianceStart);
            thetaAt = stride - thetaAt;
            lastError = e;
            lastForgettingFactor = factor;
            logForgettingProduct += logFactor;
            SampleCount++;
        }

        /// <summary>v = P·x and s = xᵀv with the guards of MATH.md §2.2 item 3 (s ≥ 0, finite); false with the breakdown otherwise.</summary>
        private bool Project(ReadOnlySpan<double> x, double weight, out double s, out BreakdownInfo breakdown)
        {
            x.CopyTo(paddedX);
            s = CovarianceKernels.Multiply(Covariance, stride, p, paddedX, V);
            double ws = weight * s;
            if (!(s >= 0.0) || double.IsInfinity(ws))
            {
                breakdown = double.IsNaN(s) || double.IsInfinity(ws)
                    ? new BreakdownInfo(BreakdownKind.NonFinite, -1, s, double.NaN)
                    : new BreakdownInfo(BreakdownKind.LostDefiniteness, -1, s, double.NaN);
                return false;
            }

            breakdown = BreakdownInfo.None;
            return true;
        }

        /// <summary>θₙ₋₁ + g·v·e into thetaNext; false when a value is not finite.</summary>
        private bool StepParameters(double g, double e)
        {
            Span<double> v = V, theta = Theta, thetaNext = ThetaNext;
            for (int j = 0; j < p; j++)
            {
                thetaNext[j] = theta[j] + (g * v[j] * e);
            }

            return AllFinite(thetaNext);
        }

        /// <summary>EFRA step (MATH.md §2.4c) with x, y scaled by √w (MATH.md §0).</summary>
        private bool ResettingStep(ReadOnlySpan<double> x, double weight, double e, out BreakdownInfo breakdown)
        {
            if (!Project(x, weight, out double s, out breakdown))
            {
                return false;
            }

            double g = resettingGain * weight / (1.0 + (weight * s));
            if (!StepParameters(g, e))
            {
                breakdown = new BreakdownInfo(BreakdownKind.NonFinite, -1, double.NaN, double.NaN);
                return false;
            }

            int code = RecursiveKernels.ResettingUpdate(Covariance, CovarianceNext, p, stride, g, V, beta, resettingAddition, resettingContraction, out int failIndex, out double failValue);
            if (code != 0)
            {
                breakdown = new BreakdownInfo(code == 1 ? BreakdownKind.NonFinite : BreakdownKind.LostDefiniteness, failIndex, failValue, double.NaN);
                return false;
            }

            CommitBuffered(e, beta, logBeta);
            return true;
        }

        /// <summary>Directional-forgetting step (MATH.md §2.4d), optional dead zone w·s &lt; s_min.</summary>
        private bool DirectionalStep(ReadOnlySpan<double> x, double weight, double e, out BreakdownInfo breakdown)
        {
            if (!Project(x, weight, out double s, out breakdown))
            {
                return false;
            }

            double onePlus = 1.0 + (weight * s);
            if (!StepParameters(weight / onePlus, e))
            {
                breakdown = new BreakdownInfo(BreakdownKind.NonFinite, -1, double.NaN, double.NaN);
                return false;
            }

            // ζ/(μ(1 + w·s)) with ζ = μ·w − (1 − μ)/s; without forgetting (s = 0 or dead zone) the plain β = 1 coefficient w/(1 + w·s).
            double mu = directionalFactor;
            double coefficient = s > 0.0 && weight * s >= deadZone
                ? ((mu * weight) - ((1.0 - mu) / s)) / (mu * onePlus)
                : weight / onePlus;
            int code = RecursiveKernels.CovarianceUpdate(Covariance, CovarianceNext, p, coefficient, V, 1.0, out int failIndex, out double failValue, stride);
            if (code != 0)
            {
                breakdown = new BreakdownInfo(code == 1 ? BreakdownKind.NonFinite : BreakdownKind.LostDefiniteness, failIndex, failValue, double.NaN);
                return false;
            }

            CommitBuffered(e, 1.0, 0.0);
            return true;
        }

        /// <summary>Current prediction xᵀθ. O(p), no allocation.</summary>
        /// <param name="x">Regressor vector of length p.</param>
        /// <returns>The prediction.</returns>
        /// <exception cref="ArgumentException">Wrong length or a non-finite entry.</exception>
        public double Predict(ReadOnlySpan<double> x)
        {
            Guard.Length(x.Length, p, nameof(x));
            Guard.AllFinite(x, nameof(x));
            return CovarianceKernels.Dot(x, Theta);
        }

        /// <summary>Writes θₙ (θ₀ before the first update) into <paramref name="destination"/>. O(p), no allocation.</summary>
        /// <param name="destination">Buffer of length at least p.</param>
        /// <exception cref="ArgumentException">The buffer is too short.</exception>
        public void CopyParametersTo(Span<double> destination)
        {
            if (destination.Length < p)
            {
                Guard.ThrowLength(nameof(destination), destination.Length, p);
            }

            Theta.Slice(0, p).CopyTo(destination);
        }

        /// <summary>
        /// Writes the covariance Pₙ = Hₙ⁻¹ (p×p row-major, exactly symmetric) into <paramref name="destination"/>. O(p²), no allocation.
        /// Pₙ is the inverse Hessian of the objective; it is a parameter covariance (times σ²) only for β = 1 (MATH.md §6.3).
        /// </summary>
        /// <param name="destination">Buffer of length at least p².</param>
        /// <exception cref="ArgumentException">The buffer is too short.</exception>
        public void CopyCovarianceTo(Span<double> destination)
        {
            if (destination.Length < p * p)
            {
                Guard.ThrowLength(nameof(destination), destination.Length, p * p);
            }

            double scale = covarianceScale;
            for (int i = 0; i < p; i++)
            {
                Span<double> target = destination.Slice(i * p, p);
                for (int j = 0; j < p; j++)
                {
                    target[j] = scale * ScaledEntry(i, j);
                }
            }
        }

        /// <summary>
        /// Writes the complete state — settings (forgetting factor, prior weight, prior, update form, invalid-sample policy, the windup policy
        /// and its parameters), p, <see cref="SampleCount"/>, <see cref="SkippedSampleCount"/>, θ, the packed upper triangle of P̃ and the scale
        /// σ (P = σ·P̃, see the type remarks), <see cref="MinimumCost"/>, <see cref="LastPriorError"/>, <see cref="LogForgettingProduct"/> and
        /// <see cref="LastForgettingFactor"/> — as a versioned, checksummed snapshot (kind "CovarianceFormEstimator", layout version 2; layout 1,
        /// which stored P itself and no scale, is still read).
        /// </summary>
        /// <param name="destination">Writable stream; written at its position and left open.</param>
        /// <param name="encoding">Binary (default) or indented JSON with the same entries (settings by name).</param>
        /// <remarks>
        /// <see cref="ReadSnapshot"/> of the result continues bit-identically (an explicit initial covariance given at construction is not
        /// stored: only the current P matters). Does not change the estimator. O(p²) time and allocation. Not thread-safe with respect to a
        /// concurrent update.
        /// </remarks>
        /// <exception cref="ArgumentNullException"><paramref name="destination"/> is null.</exception>
        /// <exception cref="ArgumentException">The stream is not writable, or <paramref name="encoding"/> is undefined.</exception>
        /// <exception cref="IOException">The stream failed.</exception>
        public void WriteSnapshot(Stream destination, SnapshotEncoding encoding = SnapshotEncoding.Binary)
        {
            var record = new StateRecord(SnapshotKind, SnapshotVersion)
                .Add("parameterCount", (long)p)
                .Add("forgettingFactor", settings.ForgettingFactor)
                .Add("priorWeight", settings.PriorWeight)
                .Add("prior", SnapshotSupport.PriorEntry(settings.Prior))
                .Add("update", settings.Update == CovarianceUpdate.JosephLike ? "JosephLike" : "Symmetric")
                .Add("invalidSamples", SnapshotSupport.PolicyName(settings.InvalidSamples))
                .Add("windup", settings.Windup.Kind.ToString())
                .Add("sampleCount", SampleCount)
                .Add("skippedSampleCount", SkippedSampleCount)
                .Add("theta", Theta.Slice(0, p))
                .Add("covariance", PackedScaledCovariance())
                .Add("covarianceScale", covarianceScale)
                .Add("minimumCost", minimumCost)
                .Add("lastPriorError", lastError)
                .Add("logForgettingProduct", logForgettingProduct)
                .Add("lastForgettingFactor", lastForgettingFactor);
            WindupProtection windup = settings.Windup;
            switch (windup.Kind)
            {
                case WindupProtectionKind.TraceBound:
                    record.Add("traceLimit", windup.TraceLimit);
                    break;
                case WindupProtectionKind.ExponentialResetting:
                    record.Add("resettingGain", windup.ResettingGain).Add("resettingAddition", windup.ResettingAddition).Add("resettingContraction", windup.ResettingContraction);
                    break;
                case WindupProtectionKind.Directional:
                    record.Add("directionalFactor", windup.DirectionalFactor).Add("deadZone", windup.DeadZone);
                    break;
            }

            SnapshotSupport.Write(record, destination, encoding);
        }

        /// <summary>
        /// Restores an estimator from a snapshot of <see cref="WriteSnapshot"/> in either encoding (detected from the content), read from the
        /// current position of <paramref name="source"/> to its end.
        /// </summary>
        /// <param name="source">Readable stream holding exactly one snapshot.</param>
        /// <returns>A new estimator in exactly the saved state; its results are bit-identical to those the saved one would have given.</returns>
        /// <remarks>
        /// Validates before building anything: checksum, kind, version, every setting (ranges of <see cref="CovarianceFormSettings"/>), p, the
        /// lengths, finite θ and P with a positive diagonal (what the update itself guarantees; full positive definiteness is not re-checked),
        /// a scale σ in [1, 2³²] (exactly 1 for the forms that do not use it) with every entry of P below the 2¹⁰²⁰ ceiling, a finite
        /// non-negative J*, and non-negative counts. A layout-1 snapshot restores with σ = 1. O(p²). Thread-safe.
        /// </remarks>
        /// <exception cref="ArgumentNullException"><paramref name="source"/> is null.</exception>
        /// <exception cref="ArgumentException">The stream is not readable.</exception>
        /// <exception cref="SnapshotFormatException">Not a valid snapshot of this kind; nothing is returned.</exception>
        /// <exception cref="IOException">The stream failed.</exception>
        public static CovarianceFormEstimator ReadSnapshot(Stream source)
        {
            StateRecord r = SnapshotSupport.Read(source, SnapshotKind, SnapshotVersion);
            int p = SnapshotSupport.ParameterCount(r, "parameterCount", 1 << 15);
            double[]? prior = SnapshotSupport.Prior(r, "prior", p);
            CovarianceUpdate update = r.GetString("update") switch
            {
                "Symmetric" => CovarianceUpdate.Symmetric,
                "JosephLike" => CovarianceUpdate.JosephLike,
                var other => throw SnapshotSupport.Invalid("snapshot entry 'update' = '{0}' is not a covariance update form", other),
            };
            CovarianceFormSettings settings = SnapshotSupport.Settings(() => new CovarianceFormSettings
            {
                ForgettingFactor = r.GetDouble("forgettingFactor"),
                PriorWeight = r.GetDouble("priorWeight"),
                Prior = prior,
                Update = update,
                InvalidSamples = SnapshotSupport.Policy(r, "invalidSamples"),
                Windup = SnapshotSupport.EnumMember<WindupProtectionKind>(r, "windup") switch
                {
                    WindupProtectionKind.TraceBound => WindupProtection.TraceBound(r.GetDouble("traceLimit")),
                    WindupProtectionKind.ExponentialResetting => WindupProtection.ExponentialResetting(r.GetDouble("resettingGain"), r.GetDouble("resettingAddition"), r.GetDouble("resettingContraction")),
                    WindupProtectionKind.Directional => WindupProtection.Directional(r.GetDouble("directionalFactor"), r.GetDouble("deadZone")),
                    _ => WindupProtection.None,
                },
            });
            long count = SnapshotSupport.Count(r, "sampleCount");
            long skippedCount = SnapshotSupport.Count(r, "skippedSampleCount");
            double[] theta = SnapshotSupport.FiniteArray(r, "theta", p);
            double[] covariance = SnapshotSupport.FiniteArray(r, "covariance", RecursiveKernels.PackedLength(p));
            double scale = r.KindVersion >= 2 ? r.GetDouble("covarianceScale") : 1.0;
            bool scaled = update == CovarianceUpdate.Symmetric && settings.Windup.Kind is WindupProtectionKind.None or WindupProtectionKind.TraceBound;
            if (!(scale >= 1.0 && scale <= RenormalizeAbove) || (!scaled && scale != 1.0))
            {
                throw SnapshotSupport.Invalid("snapshot entry 'covarianceScale' = {0:R} must lie in [1, 2^32] (exactly 1 for this update form and windup policy)", scale);
            }

            for (int i = 0; i < p; i++)
            {
                double v = covariance[RecursiveKernels.RowOffset(i, p)];
                if (!(v > 0.0))
                {
                    throw SnapshotSupport.Invalid("snapshot entry 'covariance' has the non-positive diagonal entry {0:R} at {1}", v, i);
                }
            }

            double cost = SnapshotSupport.NonNegative(r, "minimumCost");
            double error = r.GetDouble("lastPriorError");
            if (double.IsInfinity(error))
            {
                throw SnapshotSupport.Invalid("snapshot entry 'lastPriorError' = {0:R} must be finite (or NaN before the first update)", error);
            }

            double logProduct = r.GetDouble("logForgettingProduct");
            if (!(logProduct <= 0.0) || double.IsInfinity(logProduct))
            {
                throw SnapshotSupport.Invalid("snapshot entry 'logForgettingProduct' = {0:R} must be a finite number <= 0", logProduct);
            }

            double lastFactor = r.GetDouble("lastForgettingFactor");
            if (!(lastFactor > 0.0 && lastFactor <= 1.0) && !(double.IsNaN(lastFactor) && count == 0))
            {
                throw SnapshotSupport.Invalid("snapshot entry 'lastForgettingFactor' = {0:R} must lie in (0, 1] (or be NaN before the first update)", lastFactor);
            }

            var est = SnapshotSupport.Settings(() => new CovarianceFormEstimator(p, settings, ReadOnlySpan<double>.Empty, InitialState.Restored));
            est.logForgettingProduct = logProduct;
            est.lastForgettingFactor = lastFactor;
            theta.AsSpan().CopyTo(est.Theta);
            for (int i = 0; i < p; i++)
            {
                for (int j = i; j < p; j++)
                {
                    double value = covariance[RecursiveKernels.Index(i, j, p)];
                    est.Covariance[(i * est.stride) + j] = value;
                    est.Covariance[(j * est.stride) + i] = value;
                }
            }

            est.covarianceScale = scale;
            est.covarianceBound = CovarianceKernels.MaxAbs(est.Covariance, est.stride, p);
            if (!(est.covarianceBound * scale < OverflowLimit))
            {
                throw SnapshotSupport.Invalid("snapshot entry 'covariance' has an entry above 2^1020 (largest {0:R} times scale {1:R})", est.covarianceBound, scale);
            }

            est.minimumCost = cost;
            est.lastError = error;
            est.SampleCount = count;
            est.SkippedSampleCount = skippedCount;
            return est;
        }

        private void SetInitialCovariance(ReadOnlySpan<double> p0)
        {
            const string Name = "initialCovariance";
            Guard.Length(p0.Length, p * p, Name);
            Guard.AllFinite(p0, Name);
            double maxDiagonal = 0.0;
            for (int i = 0; i < p; i++)
            {
                maxDiagonal = Math.Max(maxDiagonal, p0[(i * p) + i]);
            }

            var work = new double[p * p];
            for (int i = 0; i < p; i++)
            {
                for (int j = i; j < p; j++)
                {
                    double upper = p0[(i * p) + j];
                    if (Math.Abs(upper - p0[(j * p) + i]) > 1e-12 * maxDiagonal)
                    {
                        Guard.ThrowArgument(Name, FormattableString.Invariant($"initialCovariance is not symmetric: entries ({i}, {j}) and ({j}, {i}) differ."));
                    }

                    work[(i * p) + j] = upper;
                    Covariance[(i * stride) + j] = upper;
                    Covariance[(j * stride) + i] = upper;
                }
            }

            if (!Triangular.CholeskyUpper(work, p, p, out int failIndex, out double failValue))
            {
                Guard.ThrowArgument(Name, FormattableString.Invariant($"initialCovariance is not positive definite: Cholesky pivot {failIndex} = {failValue:R}."));
            }
        }

        /// <summary>The packed upper triangle of P̃ (P = σ·P̃), as the snapshot stores it. O(p²), allocating.</summary>
        private double[] PackedScaledCovariance()
        {
            var packed = new double[RecursiveKernels.PackedLength(p)];
            int o = 0;
            for (int i = 0; i < p; i++)
            {
                for (int j = i; j < p; j++)
                {
                    packed[o++] = ScaledEntry(i, j);
                }
            }

            return packed;
        }

        private static bool AllFinite(ReadOnlySpan<double> values)
        {
            for (int i = 0; i < values.Length; i++)
            {
                if (!Guard.IsFinite(values[i]))
                {
                    return false;
                }
            }

            return true;
        }
    }
}
