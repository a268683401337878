using System;
using System.Diagnostics.CodeAnalysis;
using System.IO;
using System.Runtime.CompilerServices;
using OnlineRidge.Internal;
using OnlineRidge.Persistence;

namespace OnlineRidge
{
    /// <summary>
    /// Recursive regularized least squares in square-root information form (SRIF, QR-RLS; Bierman 1977, Haykin 2002): the state is the
    /// upper-triangular factor of the weighted data, updated by Givens rotations, and the penalty, prior, intercept and standardization are
    /// applied when the parameters are read. Minimizes exactly the objective of <see cref="SquareRootSettings"/> (that of
    /// <see cref="BatchRidge"/> with forgetting factor β̃ = fl(√β)²) at every time.
    /// </summary>
    /// <remarks>
    /// <para><b>State</b> (MATH.md §3.1, §4.3): the (c × c) upper triangle T with non-negative diagonal of the weighted augmented data
    /// A^½[1, X, y] (c = p + 2, with an intercept) or A^½[X, y] (c = p + 1, without), so that TᵀT = [1 X y]ᵀA[1 X y]; its last diagonal entry is
    /// ρ, the root of the residual sum of squares outside the span of the regressors. Also the weight sum W = Σ β̃ⁿ⁻ⁱwᵢ and the discounted
    /// count N = Σ β̃ⁿ⁻ⁱ over samples of positive weight. The state holds data only; nothing of the penalty is in it, so any penalty can be
    /// solved for at any time (<see cref="SolveWithPenalty"/>) and the constant penalty (regime C) is exact for every β.</para>
    /// <para><b>Update</b> (MATH.md §3.2): T ← rotations of [q·T; √w·(1, xᵀ, y)] back to triangular form, q = fl(√β) computed once;
    /// about 2c² multiply-adds and c square roots, no allocation, no division by a quantity that can vanish. A sample of weight 0 only
    /// forgets (T ← q·T). The c rotations form a serial chain (each waits for a square root and a division), which bounds the cost at small
    /// p; the update path is compiled fully optimized from its first call on .NET, so a real-time loop does not start on unoptimized code.</para>
    /// <para><b>Solve</b> (MATH.md §3.3, §4.4, §4.5), on the first read after an update: with the data block (R₂₂, z₂) (or (R, z) without
    /// intercept), scales D and the total penalty μ = λ + δ·β̃ⁿ, QR-factor [[R₂₂D⁻¹, z₂ − R₂₂θ₀], [√μ·I, 0]] by Givens rotations and
    /// back-substitute; θ = θ₀ + D⁻¹φ, b₀ = (z₁ − r₁₂ᵀθ)/r₁₁. O(p³) multiply-adds plus a 30-step condition estimate (O(p²) each); the result
    /// is cached, so further reads cost O(p) and allocate nothing. The minimal objective is the by-product ρ² + t² (§3.3).</para>
    /// <para><b>Accuracy</b> (MATH.md §3.4, §10): orthogonal updates are backward stable; the error of θ behaves like ε·(κ + κ²η) with
    /// κ = cond of the weighted design (not its square), η the relative residual, as for the batch QR solver. Forgetting is exact for
    /// β̃ = q², which differs from β by about ε·β: over a memory of 1/(1 − β) samples that is a systematic relative weight error of at most
    /// about ε/(1 − β) (MATH.md §3.2).</para>
    /// <para><b>β &lt; 1 without excitation</b>: the information in an unexcited direction decays like β̃ᵏ; the state itself cannot wind
    /// up or lose definiteness (it only shrinks). With a positive <see cref="SquareRootSettings.Penalty"/> the solution stays bounded and the
    /// unexcited coefficients settle at the prior (the penalty does not decay): this is the recommended setting with β &lt; 1 — with
    /// <see cref="SquareRootSettings.Standardize"/> off. With standardization the penalty on column j is λσⱼ², and the spread σⱼ of an
    /// unexcited column decays with its information, so the penalty decays too: the coefficient keeps its old value while the information
    /// lasts and is then dominated by rounding (observed: p = 2, β = 0.9, λ = 1, after 8000 unexcited samples θ₂ ≈ 10²⁷⁹, finite). With penalty 0
    /// the unexcited coefficient carries an error of order ε‖y‖ divided by the information left, which grows like β̃^(−k/2): after long
    /// unexcited stretches it is meaningless although finite. The rank test works in column-equilibrated coordinates (as the batch solver's),
    /// so it reports <see cref="BreakdownKind.RankDeficient"/> only for a singular scaled system, not for this loss of accuracy.</para>
    /// <para><b>Failures</b>: caller mistakes (wrong length, NaN or ∞ in x, y or a weight, negative weight) throw
    /// <see cref="ArgumentException"/> naming the parameter before any state changes; with <see cref="SquareRootSettings.InvalidSamples"/> =
    /// <see cref="InvalidSamplePolicy.SkipAndCount"/> a sample with NaN or ∞ in x or y or a bad weight is instead skipped and counted in
    /// <see cref="SkippedSampleCount"/> (a wrong length still throws). Data-dependent breakdown throws
    /// <see cref="RidgeBreakdownException"/> and leaves the state unchanged; <see cref="TryUpdate"/> and <see cref="TrySolve"/> report it
    /// instead: an update whose weighted sum of squares would exceed 10³⁰⁰ (so that the factor could overflow) is rejected
    /// (<see cref="BreakdownKind.NonFinite"/>); a solve with a numerically singular system (condition estimate ≥ 1/(10(p + 1)ε)), no weighted
    /// data while an intercept or standardization needs it, or a non-finite result reports <see cref="BreakdownKind.RankDeficient"/> or
    /// <see cref="BreakdownKind.NonFinite"/>.</para>
    /// <para><b>Persistence</b>: <see cref="WriteSnapshot"/> and <see cref="ReadSnapshot"/> save and restore the complete state (settings,
    /// counts, factor) bit for bit, so that a restarted process continues with exactly the results it would have had.</para>
    /// <para><b>Thread-safety</b>: none; even reads may solve and write the cache. Use one thread, or synchronize. <b>Reproducibility</b>:
    /// the same inputs on the same runtime and hardware give the same bits; the net10.0 build uses SIMD kernels whose last bits may differ
    /// from the portable build.</para>
    /// </remarks>
#if NET
    // Update is inlined into the caller's loop with its struct locals (breakdown reports); without this the JIT zeroes them every update.
    [SkipLocalsInit]
#endif
    public sealed class SquareRootEstimator : IRecursiveEstimator
    {
        private const double Eps = 2.220446049250313e-16;
        private const double ConstantLevel = 1e3 * Eps;
        private const double SumOfSquaresLimit = 1e300;
        private const string SnapshotKind = "SquareRootEstimator";
        private const int SnapshotVersion = 1;

        private readonly int p;
        private readonly int c;
        private readonly int offset;
        private readonly double q;
        private readonly double qq;
        private readonly double rankTolerance;
        private readonly bool skipInvalid;
        private readonly SquareRootSettings settings;
        private readonly double[] prior;
        private readonly double[] triangle;
        private readonly double[] updateRow;

        // Solve scratch, allocated once.
        private readonly double[] solveTriangle;
        private readonly double[] solveRow;
        private readonly double[] scales;
        private readonly int[] active;
        private readonly double[] conditionWork;
        private readonly double[] cachedTheta;

        private double weightSum;
        private double discountedCount;
        private double sumOfSquares;
        private long count;
        private long skipped;

        private bool cacheValid;
        private double cachedIntercept;
        private double cachedObjective;
        private double cachedRss;
        private double cachedCondition;

        /// <summary>Creates an estimator for <paramref name="parameterCount"/> regressors with empty (data-free) state.</summary>
        /// <param name="parameterCount">Number of regressors p ≥ 1 (without the intercept).</param>
        /// <param name="settings">Forgetting, penalties, prior, intercept and standardization; null for <see cref="SquareRootSettings.Default"/>.</param>
        /// <remarks>Allocates O(p²) once; every later call except <see cref="Merge"/> of an estimator is allocation-free.</remarks>
        /// <exception cref="ArgumentOutOfRangeException"><paramref name="parameterCount"/> &lt; 1 or too large for the triangle to fit in memory.</exception>
        /// <exception cref="ArgumentException">The prior's length is not <paramref name="parameterCount"/>.</exception>
        public SquareRootEstimator(int parameterCount, SquareRootSettings? settings = null)
        {
            if (parameterCount < 1 || parameterCount > 20000)
            {
                Guard.ThrowOutOfRange(nameof(parameterCount), parameterCount, "must lie in [1, 20000]");
            }

            settings ??= SquareRootSettings.Default;
            if (settings.Prior is { } pr && pr.Count != parameterCount)
            {
                Guard.ThrowArgument(nameof(settings), FormattableString.Invariant($"settings.Prior has length {pr.Count}; expected {parameterCount} (one per regressor)."));
            }

            this.settings = settings;
            p = parameterCount;
            offset = settings.FitIntercept ? 1 : 0;
            c = p + offset + 1;
            q = Math.Sqrt(settings.ForgettingFactor);
            qq = q * q;
            rankTolerance = 10.0 * (p + 1) * Eps;
            skipInvalid = settings.InvalidSamples == InvalidSamplePolicy.SkipAndCount;
            prior = new double[p];
            if (settings.Prior is { } values)
            {
                for (int j = 0; j < p; j++)
                {
                    prior[j] = values[j];
                }
            }

            triangle = new double[c * c];
            updateRow = new double[c];
            solveTriangle = new double[(p + 1) * (p + 1)];
            solveRow = new double[p + 1];
            scales = new double[p];
            active = new int[p];
            conditionWork = new double[Triangular.ConditionWorkLength(p)];
            cachedTheta = new double[p];
        }

        /// <inheritdoc/>
        public int ParameterCount => p;

        /// <inheritdoc/>
        public long SampleCount => count;

        /// <inheritdoc/>
        public long SkippedSampleCount => skipped;

        /// <summary>The settings the estimator was built with.</summary>
        public SquareRootSettings Settings => settings;

        /// <summary>
        /// The forgetting factor the state really applies, β̃ = q², q = fl(√β) (MATH.md §3.2); use it (not β) to build a batch reference.
        /// </summary>
        public double EffectiveForgettingFactor => qq;

        /// <summary>Weighted count W = Σ β̃ⁿ⁻ⁱwᵢ (equals r₁₁² of the factor with an intercept). O(1).</summary>
        public double WeightSum => weightSum;

        /// <summary>Discounted count N = Σ β̃ⁿ⁻ⁱ over samples of positive weight (n without forgetting; used by GCV, MATH.md §7.1). O(1).</summary>
        public double DiscountedCount => discountedCount;

        /// <summary>Order c of the factor: p + 2 with an intercept (columns 1, x₁..x_p, y), p + 1 without (columns x₁..x_p, y).</summary>
        public int FactorOrder => c;

        /// <summary>Current intercept b₀ (0 without intercept). Solves first if an update came since the last solve (see the type remarks).</summary>
        /// <exception cref="RidgeBreakdownException">The solve broke down; the state is unchanged.</exception>
        public double Intercept
        {
            get
            {
                EnsureSolved();
                return cachedIntercept;
            }
        }

        /// <summary>
        /// Minimal value of the objective at the configured penalties, J* = ρ² + t² (MATH.md §3.3: the residual outside the regressors plus
        /// that of the penalized solve). Solves first if needed. Relative accuracy about ε·(Y² + 2√(J*·λ_max)·‖θ‖)/J* (MATH.md §10 tol_J).
        /// </summary>
        /// <exception cref="RidgeBreakdownException">The solve broke down.</exception>
        public double ObjectiveValue
        {
            get
            {
                EnsureSolved();
                return cachedObjective;
            }
        }

        /// <summary>
        /// Weighted residual sum of squares Σ β̃ⁿ⁻ⁱwᵢ(yᵢ − b₀ − xᵢᵀθ)² at the current solution, computed from the factor as
        /// ρ² + ‖R₂₂θ − z₂‖² (no cancellation between large sums). Solves first if needed.
        /// </summary>
        /// <exception cref="RidgeBreakdownException">The solve broke down.</exception>
        public double ResidualSumOfSquares
        {
            get
            {
                EnsureSolved();
                return cachedRss;
            }
        }

        /// <summary>
        /// Condition estimate (2-norm, a Lanczos lower bound: the exact ratio to about 1e-9 up to 24 columns, within a few percent above) of the penalized, scaled triangular system of the last solve at the
        /// configured penalty, √cond(R₂₂ᵀR₂₂ + μD²) in scaled coordinates; expect to lose about log₁₀ of it in digits. Solves first if needed.
        /// </summary>
        /// <exception cref="RidgeBreakdownException">The solve broke down.</exception>
        public double ConditionEstimate
        {
            get
            {
                EnsureSolved();
                return cachedCondition;
            }
        }

        /// <summary>Output mean m_y = z₁/r₁₁ (MATH.md §4.3); NaN before any weighted sample. O(1).</summary>
        /// <exception cref="InvalidOperationException">The estimator has no intercept column (the means are not part of its state).</exception>
        public double OutputMean
        {
            get
            {
                RequireIntercept();
                double r11 = triangle[0];
                return r11 > 0.0 ? triangle[c - 1] / r11 : double.NaN;
            }
        }

        /// <inheritdoc/>
        /// <remarks>Cost 2c² multiply-adds and c square roots; allocates nothing. See <see cref="TryUpdate"/> for the checks.</remarks>
        /// <exception cref="ArgumentException">Wrong length, or (policy <see cref="InvalidSamplePolicy.Throw"/>) a non-finite entry; nothing changes.</exception>
        /// <exception cref="RidgeBreakdownException">The sample would make the factor overflow (nothing changes).</exception>
#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
#endif
        public void Update(ReadOnlySpan<double> x, double y) => Update(x, y, 1.0);

        /// <inheritdoc/>
        /// <remarks>Cost 2c² multiply-adds and c square roots (a zero weight only scales: c²/2); allocates nothing.</remarks>
        /// <exception cref="ArgumentException">Wrong length, or (policy <see cref="InvalidSamplePolicy.Throw"/>) a non-finite entry or a
        /// negative or non-finite weight; nothing changes. Under <see cref="InvalidSamplePolicy.SkipAndCount"/> the latter are skipped and
        /// counted instead.</exception>
        /// <exception cref="RidgeBreakdownException">The sample would make the factor overflow (nothing changes).</exception>
#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
#endif
        public void Update(ReadOnlySpan<double> x, double y, double weight)
        {
            if (!TryUpdate(x, y, weight, out BreakdownInfo breakdown))
            {
                Guard.ThrowBreakdown(breakdown);
            }
        }

        /// <summary>
        /// Adds one sample (MATH.md §3.2): forgets by q = fl(√β) and rotates √w·(1, xᵀ, y) into the factor. Reports instead of throwing when
        /// the weighted sum of squares of the state would exceed 10³⁰⁰ (entries could overflow): the sample is then rejected, nothing changes.
        /// Under <see cref="InvalidSamplePolicy.SkipAndCount"/> a sample with a non-finite entry or a negative or non-finite weight is skipped:
        /// only <see cref="SkippedSampleCount"/> changes (no forgetting step, <see cref="SampleCount"/> unchanged) and the call returns true.
        /// </summary>
        /// <param name="x">Regressor vector of length p.</param>
        /// <param name="y">Output.</param>
        /// <param name="weight">Precision weight, finite and ≥ 0; 0 only forgets.</param>
        /// <param name="breakdown"><see cref="BreakdownInfo.None"/>, or <see cref="BreakdownKind.NonFinite"/> with index -1.</param>
        /// <returns>True when the sample was added (or skipped by the policy); false when it was rejected as a breakdown.</returns>
        /// <remarks>Cost 2c² multiply-adds, c square roots; allocates nothing (also when skipping). Not thread-safe.</remarks>
        /// <exception cref="ArgumentException">Wrong length (always), or under <see cref="InvalidSamplePolicy.Throw"/> a non-finite entry or a
        /// negative or non-finite weight (caller mistakes throw, they are not reported as a status; nothing changes).</exception>
#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization | MethodImplOptions.AggressiveInlining)]
#endif
        public bool TryUpdate(ReadOnlySpan<double> x, double y, double weight, out BreakdownInfo breakdown)
        {
            Guard.Length(x.Length, p, nameof(x));

            // One pass: the sum of squares of the row (needed for the overflow guard) also validates it, since a NaN or ∞ anywhere makes
            // it non-finite. Only when it is not finite, or the weight is unusual, do the entry-by-entry checks run (in the order that
            // decides which exception or skip applies); they then see finite entries whose squares overflowed, which the guard rejects.
            double s = 1.0 + (y * y);
            for (int j = 0; j < x.Length; j++)
            {
                s += x[j] * x[j];
            }

            if (!(s <= double.MaxValue && weight >= 0.0 && weight <= double.MaxValue))
            {
                if (skipInvalid && !Guard.IsUsableSample(x, y, weight))
                {
                    skipped++;
                    breakdown = BreakdownInfo.None;
                    return true;
                }

                Guard.AllFinite(x, nameof(x));
                if (!Guard.IsFinite(y))
                {
                    Guard.ThrowOutOfRange(nameof(y), y, "the output must be a finite number");
                }

                Guard.Weight(weight, nameof(weight));
            }

            double added = weight > 0.0 ? weight * s : 0.0;
            double total = (qq * sumOfSquares) + added;
            if (!(total <= SumOfSquaresLimit))
            {
                breakdown = new BreakdownInfo(BreakdownKind.NonFinite, -1, total, double.NaN);
                return false;
            }

            Span<double> t = triangle;
            if (weight > 0.0)
            {
                // √1 = 1 exactly: the common unit weight skips a square root that would head the rotation chain.
                double sw = weight == 1.0 ? 1.0 : Math.Sqrt(weight);
                Span<double> u = updateRow;
                if (offset == 1)
                {
                    u[0] = sw;
                }

                Span<double> ux = u.Slice(offset, x.Length);
                for (int j = 0; j < x.Length; j++)
                {
                    ux[j] = sw * x[j];
                }

                u[c - 1] = sw * y;
                GivensKernels.RotateIn(t, c, q, u);
                discountedCount = (qq * discountedCount) + 1.0;
            }
            else
            {
                if (q != 1.0)
                {
                    GivensKernels.ScaleTriangle(t, c, q);
                }

                discountedCount *= qq;
            }

            weightSum = (qq * weightSum) + weight;
            sumOfSquares = total;
            count++;
            cacheValid = false;
            breakdown = BreakdownInfo.None;
            return true;
        }

        /// <inheritdoc/>
        /// <remarks>O(p) once solved (the first read after an update solves, O(p³)); allocates nothing.</remarks>
        /// <exception cref="ArgumentException">Wrong length or a non-finite entry.</exception>
        /// <exception cref="RidgeBreakdownException">The solve broke down; the state is unchanged.</exception>
        public double Predict(ReadOnlySpan<double> x)
        {
            Guard.Length(x.Length, p, nameof(x));
            Guard.AllFinite(x, nameof(x));
            EnsureSolved();
            double s = cachedIntercept;
            for (int j = 0; j < p; j++)
            {
                s += cachedTheta[j] * x[j];
            }

            return s;
        }

        /// <inheritdoc/>
        /// <remarks>Coefficients at the configured penalties (MATH.md §3.3, §4.4–4.5). O(p) once solved (the first read after an update
        /// solves, O(p³)); allocates nothing. Excluded (constant) columns get 0.</remarks>
        /// <exception cref="ArgumentException">The buffer is shorter than p.</exception>
        /// <exception cref="RidgeBreakdownException">The solve broke down; the state is unchanged.</exception>
        public void CopyParametersTo(Span<double> destination)
        {
            if (destination.Length < p)
            {
                Guard.ThrowLength(nameof(destination), destination.Length, p);
            }

            EnsureSolved();
            cachedTheta.AsSpan().CopyTo(destination);
        }

        /// <summary>
        /// Solves at the configured penalties and caches the result (coefficients, intercept, objective, residual sum of squares, condition),
        /// reporting a breakdown instead of throwing. O(p³) when an update came since the last solve, else O(1); allocates nothing.
        /// </summary>
        /// <param name="breakdown">What broke down: <see cref="BreakdownKind.RankDeficient"/> (numerically singular system, or no weighted data
        /// while an intercept or standardization needs it; <see cref="BreakdownInfo.PivotIndex"/> is the regressor column, -1 for the intercept)
        /// or <see cref="BreakdownKind.NonFinite"/>.</param>
        /// <returns>True when a solution is available.</returns>
        public bool TrySolve(out BreakdownInfo breakdown)
        {
            if (cacheValid)
            {
                breakdown = BreakdownInfo.None;
                return true;
            }

            if (!TrySolveCore(settings.Penalty, cachedTheta, out double b0, out double objective, out double rss, out double cond, out breakdown))
            {
                return false;
            }

            cachedIntercept = b0;
            cachedObjective = objective;
            cachedRss = rss;
            cachedCondition = cond;
            cacheValid = true;
            return true;
        }

        /// <summary>
        /// Solves for a caller-given constant penalty λ (in place of <see cref="SquareRootSettings.Penalty"/>; the decaying prior term, if any,
        /// still applies) without touching the cached solution; MATH.md §3.3 with §4.4–4.5. Cost O(p³); allocates nothing.
        /// </summary>
        /// <param name="penalty">λ ≥ 0.</param>
        /// <param name="coefficients">Receives θ (length ≥ p).</param>
        /// <returns>The intercept b₀ (0 without intercept).</returns>
        /// <exception cref="ArgumentException">Negative or non-finite penalty, or a short buffer.</exception>
        /// <exception cref="RidgeBreakdownException">The solve broke down (see <see cref="TrySolve"/>).</exception>
        public double SolveWithPenalty(double penalty, Span<double> coefficients)
        {
            if (!TrySolveWithPenalty(penalty, coefficients, out double intercept, out BreakdownInfo breakdown))
            {
                Guard.ThrowBreakdown(breakdown);
            }

            return intercept;
        }

        /// <summary>As <see cref="SolveWithPenalty"/>, reporting a breakdown instead of throwing (the buffer is then left unspecified).</summary>
        /// <param name="penalty">λ ≥ 0.</param>
        /// <param name="coefficients">Receives θ (length ≥ p).</param>
        /// <param name="intercept">Receives b₀.</param>
        /// <param name="breakdown">What broke down (see <see cref="TrySolve"/>).</param>
        /// <returns>True on success.</returns>
        /// <exception cref="ArgumentException">Negative or non-finite penalty, or a short buffer (caller mistakes always throw).</exception>
        public bool TrySolveWithPenalty(double penalty, Span<double> coefficients, out double intercept, out BreakdownInfo breakdown)
        {
            Guard.NonNegativeFinite(penalty, nameof(penalty));
            if (coefficients.Length < p)
            {
                Guard.ThrowLength(nameof(coefficients), coefficients.Length, p);
            }

            if (cacheValid && penalty.Equals(settings.Penalty))
            {
                cachedTheta.AsSpan().CopyTo(coefficients);
                intercept = cachedIntercept;
                breakdown = BreakdownInfo.None;
                return true;
            }

            return TrySolveCore(penalty, coefficients, out intercept, out _, out _, out _, out breakdown);
        }

        /// <summary>
        /// Copies the factor T (c × c, row-major, zeros below the diagonal; columns 1, x, y or x, y; see <see cref="FactorOrder"/>) into
        /// <paramref name="destination"/>. TᵀT is the weighted Gram matrix of the augmented data (MATH.md §3.1, §4.3). O(c²), no allocation.
        /// </summary>
        /// <param name="destination">Buffer of length ≥ c².</param>
        /// <exception cref="ArgumentException">The buffer is too short.</exception>
        public void CopyFactorTo(Span<double> destination)
        {
            if (destination.Length < c * c)
            {
                Guard.ThrowLength(nameof(destination), destination.Length, c * c);
            }

            triangle.AsSpan().CopyTo(destination);
        }

        /// <summary>Writes the weighted means m_x = r₁₂/r₁₁ of the regressors (MATH.md §4.3); NaN before any weighted sample. O(p), no allocation.</summary>
        /// <param name="destination">Buffer of length ≥ p.</param>
        /// <exception cref="ArgumentException">The buffer is too short.</exception>
        /// <exception cref="InvalidOperationException">The estimator has no intercept column.</exception>
        public void CopyMeansTo(Span<double> destination)
        {
            RequireIntercept();
            if (destination.Length < p)
            {
                Guard.ThrowLength(nameof(destination), destination.Length, p);
            }

            double r11 = triangle[0];
            for (int j = 0; j < p; j++)
            {
                destination[j] = r11 > 0.0 ? triangle[j + 1] / r11 : double.NaN;
            }
        }

        /// <summary>
        /// Writes the column scales of standardization: the weighted population standard deviations σⱼ = ‖R₂₂[:, j]‖/r₁₁ with an intercept,
        /// the root mean squares ‖R[:, j]‖/√W without (MATH.md §4.3, §4.5); NaN before any weighted sample. Computed whether or not
        /// <see cref="SquareRootSettings.Standardize"/> is set. O(p²), no allocation.
        /// </summary>
        /// <param name="destination">Buffer of length ≥ p.</param>
        /// <exception cref="ArgumentException">The buffer is too short.</exception>
        public void CopyScalesTo(Span<double> destination)
        {
            if (destination.Length < p)
            {
                Guard.ThrowLength(nameof(destination), destination.Length, p);
            }

            double denominator = offset == 1 ? triangle[0] : Math.Sqrt(weightSum);
            for (int j = 0; j < p; j++)
            {
                destination[j] = denominator > 0.0 ? ColumnNorm(j) / denominator : double.NaN;
            }
        }

        /// <summary>
        /// Whether column <paramref name="column"/> is excluded from the solve as constant under the policy of
        /// <see cref="SquareRootSettings.Standardize"/> (always false without standardization). O(p), no allocation.
        /// </summary>
        /// <param name="column">Zero-based regressor index.</param>
        /// <returns>True when excluded (its coefficient is 0).</returns>
        /// <exception cref="ArgumentOutOfRangeException">The index is outside [0, p).</exception>
        public bool IsExcluded(int column)
        {
            if ((uint)column >= (uint)p)
            {
                Guard.ThrowOutOfRange(nameof(column), column, "column index out of range");
            }

            if (!settings.Standardize)
            {
                return false;
            }

            double norm = ColumnNorm(column);
            if (offset == 0)
            {
                return norm == 0.0;
            }

            double r11 = triangle[0];
            if (!(r11 > 0.0))
            {
                return false;
            }

            double sigma = norm / r11;
            double mean = triangle[column + 1] / r11;
            return IsConstant(mean, sigma);
        }

        /// <summary>
        /// Merges a state that continues this one (MATH.md §3.5): this estimator covers the earlier samples, <paramref name="later"/> the
        /// k_B = later.<see cref="SampleCount"/> samples that follow, fed to a fresh estimator with the same settings. The result (in this
        /// estimator) is the state one estimator would have after all samples in order: T ← triangle of [q^(k_B)·T; T_B], W ← β̃^(k_B)W + W_B,
        /// N likewise, and the sample and skipped-sample counts add. Cost O(c³) (c rows rotated in); allocates nothing; <paramref name="later"/>
        /// is not changed. The invalid-sample policies may differ (they are not part of the objective).
        /// </summary>
        /// <param name="later">The later state; same parameter count and same settings (objective) as this one, and not this instance.</param>
        /// <remarks>Equal to sequential feeding up to rounding (orthogonal class of MATH.md §10); q^(k_B) is computed by one power, so the
        /// forgetting of the earlier samples matches the sequential q-scalings to a few ulps. The penalties are applied at solve time, so the
        /// decaying prior decays over k_A + k_B steps, as in one estimator.</remarks>
        /// <exception cref="ArgumentNullException"><paramref name="later"/> is null.</exception>
        /// <exception cref="ArgumentException">Same instance, different parameter count or different settings (nothing changes).</exception>
        /// <exception cref="RidgeBreakdownException">The merged sum of squares would exceed 10³⁰⁰ (nothing changes).</exception>
        public void Merge(SquareRootEstimator later)
        {
            if (!TryMerge(later, out BreakdownInfo breakdown))
            {
                Guard.ThrowBreakdown(breakdown);
            }
        }

        /// <summary>As <see cref="Merge"/>, reporting a breakdown (<see cref="BreakdownKind.NonFinite"/>: the merged state could overflow) instead of throwing.</summary>
        /// <param name="later">The later state.</param>
        /// <param name="breakdown">What broke down, or <see cref="BreakdownInfo.None"/>.</param>
        /// <returns>True when merged; false leaves this estimator unchanged.</returns>
        /// <exception cref="ArgumentNullException"><paramref name="later"/> is null.</exception>
        /// <exception cref="ArgumentException">Same instance, different parameter count or different settings.</exception>
        public bool TryMerge(SquareRootEstimator later, out BreakdownInfo breakdown)
        {
            Guard.NotNull(later, nameof(later));
            if (ReferenceEquals(later, this))
            {
                Guard.ThrowArgument(nameof(later), "An estimator cannot be merged with itself; merge a separate estimator that continues this one.");
            }

            if (later.p != p || !later.settings.SameObjective(settings))
            {
                Guard.ThrowArgument(nameof(later), "The later estimator must have the same parameter count and the same settings (forgetting, penalties, prior, intercept, standardization).");
            }

            double s = q == 1.0 ? 1.0 : Math.Pow(q, later.count);
            double s2 = s * s;
            double total = (s2 * sumOfSquares) + later.sumOfSquares;
            if (!(total <= SumOfSquaresLimit))
            {
                breakdown = new BreakdownInfo(BreakdownKind.NonFinite, -1, total, double.NaN);
                return false;
            }

            Span<double> t = triangle;
            if (s != 1.0)
            {
                GivensKernels.ScaleTriangle(t, c, s);
            }

            Span<double> u = updateRow;
            for (int i = 0; i < c; i++)
            {
                later.triangle.AsSpan(i * c, c).CopyTo(u);
                GivensKernels.ScaleAndRotateIn(t, c, 1.0, u, i);
            }

            weightSum = (s2 * weightSum) + later.weightSum;
            discountedCount = (s2 * discountedCount) + later.discountedCount;
            sumOfSquares = total;
            count += later.count;
            skipped += later.skipped;
            cacheValid = false;
            breakdown = BreakdownInfo.None;
            return true;
        }

        /// <summary>Forgets all data: back to the state after construction (settings kept; both counts 0). O(p²), no allocation.</summary>
        public void Reset()
        {
            Array.Clear(triangle, 0, triangle.Length);
            weightSum = 0.0;
            discountedCount = 0.0;
            sumOfSquares = 0.0;
            count = 0;
            skipped = 0;
            cacheValid = false;
        }

        /// <summary>
        /// Writes the complete state — settings (forgetting factor, both penalties, prior, intercept, standardization, invalid-sample policy),
        /// p, <see cref="SampleCount"/>, <see cref="SkippedSampleCount"/>, <see cref="WeightSum"/>, <see cref="DiscountedCount"/>, the overflow
        /// guard's sum of squares and the factor T — as a versioned, checksummed snapshot (kind "SquareRootEstimator", layout version 1).
        /// </summary>
        /// <param name="destination">Writable stream; the snapshot is written at its current position and the stream is left open.</param>
        /// <param name="encoding">Compact binary (default) or indented JSON with the same entries (settings by name, doubles in shortest
        /// round-trip form).</param>
        /// <remarks>
        /// <see cref="ReadSnapshot"/> of the result gives an estimator whose every later result is bit-identical to this one's (the cached
        /// solution is not stored: it is a deterministic function of the state and is recomputed on the first read). Does not change the
        /// estimator and does not solve. Cost O(c²) time, O(c²) allocation (about 8c² bytes binary, about 25c² JSON). Not thread-safe with
        /// respect to a concurrent update.
        /// </remarks>
        /// <exception cref="ArgumentNullException"><paramref name="destination"/> is null.</exception>
        /// <exception cref="ArgumentException">The stream is not writable, or <paramref name="encoding"/> is undefined.</exception>
        /// <exception cref="IOException">The stream failed.</exception>
        public void WriteSnapshot(Stream destination, SnapshotEncoding encoding = SnapshotEncoding.Binary)
        {
            var record = new StateRecord(SnapshotKind, SnapshotVersion)
                .Add("parameterCount", (long)p)
                .Add("forgettingFactor", settings.ForgettingFactor)
                .Add("penalty", settings.Penalty)
                .Add("decayingPriorWeight", settings.DecayingPriorWeight)
                .Add("prior", SnapshotSupport.PriorEntry(settings.Prior))
                .Add("fitIntercept", settings.FitIntercept)
                .Add("standardize", settings.Standardize)
                .Add("invalidSamples", SnapshotSupport.PolicyName(settings.InvalidSamples))
                .Add("sampleCount", count)
                .Add("skippedSampleCount", skipped)
                .Add("weightSum", weightSum)
                .Add("discountedCount", discountedCount)
                .Add("sumOfSquares", sumOfSquares)
                .Add("factor", triangle);
            SnapshotSupport.Write(record, destination, encoding);
        }

        /// <summary>
        /// Restores an estimator from a snapshot of <see cref="WriteSnapshot"/> in either encoding (detected from the content), read from the
        /// current position of <paramref name="source"/> to its end.
        /// </summary>
        /// <param name="source">Readable stream holding exactly one snapshot.</param>
        /// <returns>A new estimator in exactly the saved state (settings, counts, factor): its results are bit-identical to those the saved
        /// estimator would have given.</returns>
        /// <remarks>
        /// Validates everything before building the estimator: the checksum, the kind and layout version, every setting (with the ranges of
        /// <see cref="SquareRootSettings"/>), p, the lengths of the prior and the factor, a finite upper-triangular factor with non-negative
        /// diagonal, finite non-negative counts, and that the stored sum of squares bounds the factor (so the overflow guard still holds).
        /// Cost O(c²) time and allocation. Thread-safe (it touches no shared state).
        /// </remarks>
        /// <exception cref="ArgumentNullException"><paramref name="source"/> is null.</exception>
        /// <exception cref="ArgumentException">The stream is not readable.</exception>
        /// <exception cref="SnapshotFormatException">Not a snapshot, corrupt or truncated, another kind or an unsupported version, or content
        /// that fails validation; nothing is returned.</exception>
        /// <exception cref="IOException">The stream failed.</exception>
        public static SquareRootEstimator ReadSnapshot(Stream source)
        {
            StateRecord r = SnapshotSupport.Read(source, SnapshotKind, SnapshotVersion);
            int p = SnapshotSupport.ParameterCount(r, "parameterCount", 20000);
            double[]? prior = SnapshotSupport.Prior(r, "prior", p);
            SquareRootSettings settings = SnapshotSupport.Settings(() => new SquareRootSettings
            {
                ForgettingFactor = r.GetDouble("forgettingFactor"),
                Penalty = r.GetDouble("penalty"),
                DecayingPriorWeight = r.GetDouble("decayingPriorWeight"),
                Prior = prior,
                FitIntercept = r.GetBoolean("fitIntercept"),
                Standardize = r.GetBoolean("standardize"),
                InvalidSamples = SnapshotSupport.Policy(r, "invalidSamples"),
            });

            long count = SnapshotSupport.Count(r, "sampleCount");
            long skipped = SnapshotSupport.Count(r, "skippedSampleCount");
            double weightSum = SnapshotSupport.NonNegative(r, "weightSum");
            double discounted = SnapshotSupport.NonNegative(r, "discountedCount");
            double sumOfSquares = SnapshotSupport.NonNegative(r, "sumOfSquares");
            if (sumOfSquares > SumOfSquaresLimit)
            {
                throw SnapshotSupport.Invalid("snapshot entry 'sumOfSquares' = {0:R} exceeds the overflow limit {1:R}", sumOfSquares, SumOfSquaresLimit);
            }

            int c = p + (settings.FitIntercept ? 2 : 1);
            double[] factor = SnapshotSupport.FiniteArray(r, "factor", c * c);
            double frobenius = 0.0;
            for (int i = 0; i < c; i++)
            {
                for (int j = 0; j < c; j++)
                {
                    double v = factor[(i * c) + j];
                    if ((j < i && v != 0.0) || (j == i && v < 0.0))
                    {
                        throw SnapshotSupport.Invalid("snapshot entry 'factor'[{0}, {1}] = {2:R}: the factor must be upper triangular with a non-negative diagonal", i, j, v);
                    }

                    frobenius += v * v;
                }
            }

            // Orthogonal rotations keep ‖T‖²_F equal to the tracked sum of squares up to rounding.
            if (!(frobenius <= (sumOfSquares * (1.0 + 1e-6)) + 1e-300))
            {
                throw SnapshotSupport.Invalid("the factor (squared norm {0:R}) is inconsistent with 'sumOfSquares' = {1:R}", frobenius, sumOfSquares);
            }

            var est = new SquareRootEstimator(p, settings);
            factor.AsSpan().CopyTo(est.triangle);
            est.count = count;
            est.skipped = skipped;
            est.weightSum = weightSum;
            est.discountedCount = discounted;
            est.sumOfSquares = sumOfSquares;
            return est;
        }

        private void EnsureSolved()
        {
            if (!TrySolve(out BreakdownInfo breakdown))
            {
                Guard.ThrowBreakdown(breakdown);
            }
        }

        private void RequireIntercept()
        {
            if (offset == 0)
            {
                ThrowNoIntercept();
            }
        }

        [DoesNotReturn]
        private static void ThrowNoIntercept() =>
            throw new InvalidOperationException("The weighted means are part of the state only when the estimator fits an intercept (SquareRootSettings.FitIntercept).");

        private static bool IsConstant(double mean, double sigma) => sigma <= ConstantLevel * Math.Sqrt((mean * mean) + (sigma * sigma));

        /// <summary>‖R_d[:, j]‖ of the data block (rows offset..offset + j of column offset + j), scaled against overflow.</summary>
        private double ColumnNorm(int j)
        {
            int col = j + offset;
            double big = 0.0;
            for (int i = offset; i <= col; i++)
            {
                big = Math.Max(big, Math.Abs(triangle[(i * c) + col]));
            }

            if (big == 0.0)
            {
                return 0.0;
            }

            double sum = 0.0;
            for (int i = offset; i <= col; i++)
            {
                double v = triangle[(i * c) + col] / big;
                sum += v * v;
            }

            return big * Math.Sqrt(sum);
        }

        /// <summary>
        /// The solve of MATH.md §3.3 with §4.4–4.5 in scaled coordinates φ = D(θ − θ₀) over the active columns. Writes only scratch and
        /// <paramref name="theta"/>; the state is read only.
        /// </summary>
        private bool TrySolveCore(double penalty, Span<double> theta, out double intercept, out double objective, out double rss, out double cond, out BreakdownInfo breakdown)
        {
            intercept = 0.0;
            objective = double.NaN;
            rss = double.NaN;
            cond = double.NaN;
            double mu = penalty;
            if (settings.DecayingPriorWeight > 0.0)
            {
                mu += settings.DecayingPriorWeight * (q == 1.0 ? 1.0 : Math.Pow(q, 2.0 * count));
            }

            double r11 = offset == 1 ? triangle[0] : 0.0;
            bool noData = offset == 1 ? !(r11 > 0.0) : !(weightSum > 0.0);
            if (noData && (offset == 1 || settings.Standardize))
            {
                breakdown = new BreakdownInfo(BreakdownKind.RankDeficient, -1, 0.0, double.PositiveInfinity);
                return false;
            }

            // Active columns and their solver scales.
            int na = 0;
            double denominator = offset == 1 ? r11 : Math.Sqrt(weightSum);
            for (int j = 0; j < p; j++)
            {
                double norm = ColumnNorm(j);
                double scale;
                if (settings.Standardize)
                {
                    double sigma = norm / denominator;
                    bool constant = offset == 1 ? IsConstant(triangle[j + 1] / r11, sigma) : norm == 0.0;
                    if (constant)
                    {
                        continue;
                    }

                    scale = sigma;
                }
                else if (mu > 0.0)
                {
                    scale = 1.0;
                }
                else
                {
                    // No penalty: equilibrate the columns so that the rank test does not depend on their units (the solution does not).
                    scale = norm > 0.0 ? norm : 1.0;
                }

                active[na] = j;
                scales[na] = scale;
                na++;
            }

            int m = na + 1;
            Span<double> st = solveTriangle.AsSpan(0, m * m);
            st.Clear();
            Span<double> row = solveRow.AsSpan(0, m);
            int yCol = c - 1;

            // Data rows [R_d[i, active]·D⁻¹, z_d[i] − R_d[i, :]·θ₀] (excluded columns carry θ = 0).
            for (int i = 0; i < p; i++)
            {
                int tr = (i + offset) * c;
                double target = triangle[tr + yCol];
                for (int k = 0; k < na; k++)
                {
                    int col = active[k] + offset;
                    double v = triangle[tr + col];
                    row[k] = v / scales[k];
                    target -= v * prior[active[k]];
                }

                row[na] = target;
                GivensKernels.ScaleAndRotateIn(st, m, 1.0, row, 0);
            }

            // Penalty rows √μ·e_k (target 0 in φ coordinates).
            if (mu > 0.0)
            {
                double sm = Math.Sqrt(mu);
                for (int k = 0; k < na; k++)
                {
                    row.Clear();
                    row[k] = sm;
                    GivensKernels.ScaleAndRotateIn(st, m, 1.0, row, k);
                }
            }

            if (na > 0)
            {
                cond = Triangular.ConditionEstimate(st, na, m, conditionWork);
                if (!(cond * rankTolerance < 1.0))
                {
                    int worst = 0;
                    double smallest = double.PositiveInfinity;
                    for (int k = 0; k < na; k++)
                    {
                        double d = st[(k * m) + k];
                        if (d < smallest)
                        {
                            smallest = d;
                            worst = k;
                        }
                    }

                    breakdown = new BreakdownInfo(BreakdownKind.RankDeficient, active[worst], smallest, cond);
                    return false;
                }
            }
            else
            {
                cond = 1.0;
            }

            // φ = R̄⁻¹ z̄ (in the last column, then back-substituted in place), θ = θ₀ + D⁻¹φ.
            for (int k = 0; k < na; k++)
            {
                row[k] = st[(k * m) + na];
            }

            Triangular.SolveUpper(st, na, m, row);
            theta.Slice(0, p).Clear();
            for (int k = 0; k < na; k++)
            {
                int j = active[k];
                theta[j] = prior[j] + (row[k] / scales[k]);
            }

            for (int j = 0; j < p; j++)
            {
                if (!Guard.IsFinite(theta[j]))
                {
                    breakdown = new BreakdownInfo(BreakdownKind.NonFinite, j, theta[j], cond);
                    return false;
                }
            }

            if (offset == 1)
            {
                double s = triangle[yCol];
                for (int j = 0; j < p; j++)
                {
                    s -= triangle[j + 1] * theta[j];
                }

                intercept = s / r11;
                if (!Guard.IsFinite(intercept))
                {
                    breakdown = new BreakdownInfo(BreakdownKind.NonFinite, -1, intercept, cond);
                    return false;
                }
            }

            double rho = triangle[(yCol * c) + yCol];
            double tail = st[(na * m) + na];
            objective = (rho * rho) + (tail * tail);

            // RSS = ρ² + ‖R_d θ − z_d‖² (the intercept row is solved exactly).
            double sum = rho * rho;
            for (int i = 0; i < p; i++)
            {
                int tr = (i + offset) * c;
                double r = -triangle[tr + yCol];
                for (int j = i; j < p; j++)
                {
                    r += triangle[tr + j + offset] * theta[j];
                }

                sum += r * r;
            }

            rss = sum;
            breakdown = BreakdownInfo.None;
            return true;
        }
    }
}
