using System;
using System.Collections.Generic;
using System.IO;
using System.Runtime.CompilerServices;
#if NET
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
#endif
using MathNet.Numerics.LinearAlgebra;
using OnlineRidge.Internal;
using OnlineRidge.Persistence;
using OnlineRidge.Standardization;

namespace OnlineRidge
{
    /// <summary>
    /// Recursive regularized least squares in information (sufficient-statistics) form (MATH.md §5): accumulates the forgotten, weighted
    /// Gram statistics of (x, y) — centered co-moments and means when there is an intercept (MATH.md §4.1) — and solves the ridge problem
    /// exactly at any time, for any penalty, by Cholesky (<see cref="Solve"/>), or for a whole set of penalties from one eigendecomposition
    /// (<see cref="SolvePenaltyPath"/>).
    /// </summary>
    /// <remarks>
    /// <para><b>Objective.</b> A solve after n updates returns exactly (in exact arithmetic) what <see cref="BatchRidge"/> returns for the same
    /// samples and the same <see cref="RidgeSettings"/>: it minimizes Σᵢ βⁿ⁻ⁱwᵢ(yᵢ − b₀ − xᵢᵀθ)² + λ(θ − θ₀)ᵀD²(θ − θ₀), with b₀ unpenalized
    /// (when <see cref="RidgeSettings.FitIntercept"/>), D = I without standardization, and with it D = diag(σⱼ), σⱼ the weighted population
    /// standard deviation of column j (with an intercept) or its root mean square (without), computed from the same weighted data.
    /// With an intercept θ̂ = (M_xx + λD²)⁻¹(M_xy + λD²θ₀) (equal to θ₀ + (M_xx + λD²)⁻¹(M_xy − M_xxθ₀)) and b̂₀ = m_y − m_xᵀθ̂
    /// (MATH.md §4.4–4.5); without, θ̂ = (G + λD²)⁻¹(b + λD²θ₀) (MATH.md §5.2); both solved by Cholesky in the coordinates γ = Dθ.
    /// The penalty is regime C (constant, <see cref="PenaltyRegime.Constant"/>) or regime D (decaying like the data, λ·βⁿ,
    /// <see cref="PenaltyRegime.Decaying"/>); βⁿ is computed from the update count n when solving (MATH.md §9: it underflows to 0 for
    /// n &gt; 708/(−ln β), where the decayed penalty is negligible anyway), never accumulated step by step. With standardization and an intercept, a column whose standard
    /// deviation is at rounding level (σⱼ ≤ 10³·ε·√(mⱼ² + σⱼ²)) is excluded (coefficient 0), as in <see cref="RidgeSettings.Standardize"/>;
    /// without an intercept a column that is exactly zero is excluded.</para>
    /// <para><b>Cost.</b> Update: (p+1)(p+2)/2 + O(p·v) multiply-adds (v = hardware vector length, 1 in the portable build), whole vectors
    /// only, plus one division (two more with an intercept); twice that with the optional squared-forgetting Gram; no allocation. The
    /// forgetting costs nothing per entry: each statistic is held as s·G̃ with the scalar s = βⁿ, an update adds (w/s)·uuᵀ to G̃ and
    /// multiplies s by β, and about every 2³²-fold decay of s (every ≈ 22 000 updates at β = 0.999) G̃ is rescaled by an exact power of two
    /// (O(p²), no rounding). A zero-weight update is O(p). The update path is compiled fully optimized on first use (no slower warm-up
    /// phase). Solve: p³/6 + O(p²), no allocation; penalty path: O(p³) + O(p²) per penalty,
    /// allocating. Storage about (p+1)·⌈p+1⌉ᵥ + p² doubles (rows padded to whole vectors). The solution behind <see cref="CopyParametersTo"/>, <see cref="Intercept"/> and <see cref="Predict"/> is computed on first use after an update and cached.</para>
    /// <para><b>Accuracy.</b> Limited by the squared condition: cond(G) = cond(X_w)², so the relative error of θ̂ is of order ε·cond(H)
    /// (MATH.md §5.4) — twice the digits a square-root form loses. Centering (the intercept case) removes the damage a large mean would do.
    /// Holding the forgetting in the scalar s costs one extra rounding per entry read (s·G̃ᵢⱼ); its renormalizations by powers of two cost none.
    /// A solve whose condition estimate of H exceeds <see cref="RidgeSettings.CholeskyConditionLimit"/> is refused
    /// (<see cref="BreakdownKind.IllConditioned"/>). <see cref="RidgeSettings.RefinementSteps"/> does not apply (no data rows are retained).</para>
    /// <para><b>Failures.</b> Invalid input throws <see cref="ArgumentException"/> naming the parameter before any change. A solve that breaks down
    /// (H not numerically positive definite, ill-conditioned beyond the limit, no sample of positive weight yet — reported as
    /// <see cref="BreakdownKind.RankDeficient"/> — or an overflow) throws <see cref="RidgeBreakdownException"/> or returns false from
    /// <see cref="TrySolve"/>; an update that would overflow does the same. Nothing changes on failure.</para>
    /// <para><b>Dropouts.</b> With the constructor's <c>invalidSamples</c> = <see cref="InvalidSamplePolicy.SkipAndCount"/> a sample with NaN or
    /// ∞ in x or y or a negative, NaN or infinite weight is skipped (state untouched) and counted in <see cref="SkippedSampleCount"/> instead of
    /// throwing; a wrong length still throws. (A constructor parameter, not a <see cref="RidgeSettings"/> property: batch fits have no
    /// stream to skip in.)</para>
    /// <para><b>Persistence.</b> <see cref="WriteSnapshot"/> and <see cref="ReadSnapshot"/> save and restore the complete state (settings,
    /// regime, counts, statistics) bit for bit.</para>
    /// <para><b>Threads and reproducibility.</b> Not thread-safe, also not for concurrent reads (reads may fill the cache). Same inputs, runtime and
    /// hardware give the same bits; the last bits may differ between the net10.0 and netstandard2.0 builds.</para>
    /// </remarks>
#if NET
    // Update is inlined into the caller's loop with its struct locals (breakdown reports); without this the JIT zeroes them every update.
    [SkipLocalsInit]
#endif
    public sealed class InformationFormEstimator : IRecursiveEstimator
    {
        private const double ConstantLevel = 1e3 * 2.220446049250313e-16;

        /// <summary><see cref="BreakdownInfo.None"/>, read once (the hot update path then copies a field instead of calling the property).</summary>
        private static readonly BreakdownInfo Success = BreakdownInfo.None;


        private readonly int p;
        private readonly double beta;
        private readonly bool intercept;
        private readonly bool standardize;
        private readonly double penalty;
        private readonly double conditionLimit;
        private readonly PenaltyRegime regime;
        private readonly RidgeSettings settings;
        private readonly double[] prior;
        private readonly InvalidSamplePolicy invalidSamples;
        private long skipped;
        private const string SnapshotKind = "InformationFormEstimator";

        /// <summary>Layout 2 adds the scales of the stored statistics (G = s·G̃); layout 1 (every scale 1) is still read.</summary>
        private const int SnapshotVersion = 2;

        // State: with an intercept the centered moments of u = (x, y); without, the Gram of u = (x, y) (G, b, c) and W. Each symmetric
        // statistic is held as s·G̃ (ScaledGram): its overflow guard's trace is kept there, in true units.
        private readonly StreamingMoments? moments;
        private readonly ScaledGram? gram;

        // W = Σ βⁿ⁻ⁱwᵢ (no intercept) and the discounted count N side by side, so that the short paths update both with one vector step.
        private ForgottenSums sums;

        // Optional squared-forgetting Gram G₂ (MATH.md §6.2) of the regressor as the model sees it: (1, x) with an intercept, x without.
        private readonly ScaledGram? squaredGram;

        // x padded with zeros to the Gram's row length (the head of u = (x, y), without an intercept);
        // the head of the model regressor (1, x) or x, padded likewise (only with G₂). 64-byte aligned from uStart and modelStart.
        private readonly double[] u;
        private readonly int uStart;
        private readonly int headStride;

        /// <summary>Below this p (and when p is a whole number of vectors) the kernel reads x in place: the copy would cost more than the split loads.</summary>
        private const int DirectHeadLimit = 32;

        /// <summary>No intercept, no G₂ and x read in place: <see cref="TryUpdate"/> may take its short path.</summary>
        private readonly bool leanPath;

        /// <summary>The short path with p = 4 held in one register (ScaledGram.TryAddFour, vector build only).</summary>
        private readonly bool leanFourEligible;

        /// <summary>
        /// double.MaxValue·2⁻³² (exact): with the scale s ≥ 2⁻³² (<see cref="ScaledGram.MinScale"/>) a weight up to this has w/s ≤ double.MaxValue,
        /// so the p = 4 step need not test the coefficient for overflow; a constant weight (as in Update(x, y)) makes the test free.
        /// </summary>
        private const double FourColumnWeightLimit = double.MaxValue * ScaledGram.MinScale;

        /// <summary>4 while the register path is on, else −1 (no span has that length): one comparison with x.Length both selects the path and checks the length.</summary>
        private int fourColumnLength;
        private readonly double[]? model;
        private readonly int modelStart;
        private readonly double[] hessian;
        private readonly double[] rhs;
        private readonly double[] scale;
        private readonly int[] active;
        private readonly double[] conditionWork;
        private readonly double[] solution;
        private double solutionIntercept;
        private bool solutionValid;

        /// <summary>
        /// Whether updates may take the four-column register path (p = 4, no intercept, no G₂, the vector build). Tests switch it off to
        /// compare it with the general path bit for bit; setting it true where the path does not apply leaves it off.
        /// </summary>
        internal bool FourColumnPathEnabled
        {
            get => fourColumnLength == 4;
            set => fourColumnLength = value && leanFourEligible ? 4 : -1;
        }

        /// <summary>Creates an empty estimator.</summary>
        /// <param name="parameterCount">Number of regressors p ≥ 1 (without the intercept).</param>
        /// <param name="settings">Penalty (the default for reads), forgetting factor, intercept, standardization, prior, solver and Cholesky
        /// condition limit, with the meaning they have for <see cref="BatchRidge"/>; null for <see cref="RidgeSettings.Default"/>. The solver must be
        /// <see cref="RidgeSolver.Auto"/> or <see cref="RidgeSolver.Cholesky"/> (both mean Cholesky here: there are no rows for QR or SVD).</param>
        /// <param name="regime">How the penalty ages for <see cref="CopyParametersTo"/>, <see cref="Intercept"/> and <see cref="Predict"/> (default: constant).</param>
        /// <param name="trackSquaredForgettingGram">Also accumulate G₂ = Σ β²⁽ⁿ⁻ⁱ⁾wᵢ x̃ᵢx̃ᵢᵀ (x̃ = (1, x) with an intercept) for parameter
        /// uncertainty (MATH.md §6.2–6.3); doubles the update cost.</param>
        /// <param name="invalidSamples">What an update does with a sample holding NaN or ∞ in x or y or a negative, NaN or infinite weight:
        /// throw (default) or skip it and count it in <see cref="SkippedSampleCount"/> (for streams with sensor dropouts).</param>
        /// <exception cref="ArgumentException">p below 1, a prior of the wrong length, a solver other than Auto or Cholesky, or an undefined
        /// regime or policy.</exception>
        public InformationFormEstimator(int parameterCount, RidgeSettings? settings = null, PenaltyRegime regime = PenaltyRegime.Constant, bool trackSquaredForgettingGram = false,
            InvalidSamplePolicy invalidSamples = InvalidSamplePolicy.Throw)
        {
            if (parameterCount < 1)
            {
                Guard.ThrowOutOfRange(nameof(parameterCount), parameterCount, "must be >= 1");
            }

            settings ??= RidgeSettings.Default;
            if (settings.Solver is not (RidgeSolver.Auto or RidgeSolver.Cholesky))
            {
                Guard.ThrowArgument(nameof(settings), "settings.Solver must be Auto or Cholesky for the information form (it keeps no data rows for QR or SVD).");
            }

            if (regime is not (PenaltyRegime.Constant or PenaltyRegime.Decaying))
            {
                Guard.ThrowOutOfRange(nameof(regime), (double)regime, "not a PenaltyRegime member");
            }

            Guard.Policy(invalidSamples, nameof(invalidSamples));
            this.invalidSamples = invalidSamples;

            IReadOnlyList<double>? priorList = settings.Prior;
            if (priorList is not null && priorList.Count != parameterCount)
            {
                Guard.ThrowArgument(nameof(settings), FormattableString.Invariant($"settings.Prior has length {priorList.Count}; expected {parameterCount} (one per regressor)."));
            }

            p = parameterCount;
            this.settings = settings;
            this.regime = regime;
            beta = settings.ForgettingFactor;
            intercept = settings.FitIntercept;
            standardize = settings.Standardize;
            penalty = settings.Penalty;
            conditionLimit = settings.CholeskyConditionLimit;
            prior = new double[p];
            if (priorList is not null)
            {
                for (int j = 0; j < p; j++)
                {
                    prior[j] = priorList[j];
                }
            }

            if (intercept)
            {
                moments = new StreamingMoments(p + 1, beta);
            }
            else
            {
                gram = new ScaledGram(p + 1, beta);
            }

            if (trackSquaredForgettingGram)
            {
                squaredGram = new ScaledGram(ModelDimension, beta * beta);
                model = GramUpdateKernels.AllocateAligned(squaredGram.Stride, out modelStart);
                if (intercept)
                {
                    model[modelStart] = 1.0;
                }
            }

            headStride = GramUpdateKernels.Stride(p);
            leanPath = !intercept && squaredGram is null && headStride == p && p < DirectHeadLimit;
#if NET
            leanFourEligible = leanPath && gram!.HasFourColumnHead;
#else
            leanFourEligible = false;
#endif
            fourColumnLength = leanFourEligible ? 4 : -1;
            u = GramUpdateKernels.AllocateAligned(headStride, out uStart);
            hessian = new double[p * p];
            rhs = new double[p];
            scale = new double[p];
            active = new int[p];
            conditionWork = new double[Triangular.ConditionWorkLength(p)];
            solution = new double[p];
        }

        /// <inheritdoc/>
        public int ParameterCount => p;

        /// <inheritdoc/>
        public long SampleCount { get; private set; }

        /// <inheritdoc/>
        public long SkippedSampleCount => skipped;

        /// <summary>What an update does with an unusable sample (the constructor's <c>invalidSamples</c>).</summary>
        public InvalidSamplePolicy InvalidSamples => invalidSamples;

        /// <summary>The settings given at construction.</summary>
        public RidgeSettings Settings => settings;

        /// <summary>The penalty regime of the cached solution (<see cref="CopyParametersTo"/>, <see cref="Intercept"/>, <see cref="Predict"/>).</summary>
        public PenaltyRegime Regime => regime;

        /// <summary>Total effective weight W = Σ βⁿ⁻ⁱwᵢ. O(1).</summary>
        public double WeightSum => intercept ? moments!.WeightSum : sums.Weight;

        /// <summary>Discounted count N = Σ βⁿ⁻ⁱ over the updates of positive weight (as <see cref="RidgeFit.DiscountedCount"/>; MATH.md §5.1, §9). O(1).</summary>
        public double DiscountedCount { get => sums.Count; private set => sums.Count = value; }

        /// <summary>Whether the squared-forgetting Gram G₂ is accumulated.</summary>
        public bool TracksSquaredForgettingGram => squaredGram is not null;

        /// <summary>The intercept b̂₀ of the cached solution (0 without an intercept). Solves on first use after an update (O(p³)).</summary>
        /// <exception cref="RidgeBreakdownException">The current state cannot be solved (see the type remarks).</exception>
        public double Intercept
        {
            get
            {
                EnsureSolved();
                return solutionIntercept;
            }
        }

        /// <inheritdoc/>
        /// <exception cref="ArgumentException">Wrong length, or a non-finite value under <see cref="InvalidSamplePolicy.Throw"/>.</exception>
        /// <exception cref="RidgeBreakdownException">The statistics would overflow; nothing changed.</exception>
        /// <remarks>O(p²), no allocation.</remarks>
#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
#endif
        public void Update(ReadOnlySpan<double> x, double y) => Update(x, y, 1.0);

        /// <inheritdoc/>
        /// <exception cref="ArgumentException">Wrong length, or under <see cref="InvalidSamplePolicy.Throw"/> a non-finite value or a negative or
        /// non-finite weight (under <see cref="InvalidSamplePolicy.SkipAndCount"/> those samples are skipped and counted).</exception>
        /// <exception cref="RidgeBreakdownException">The statistics would overflow; nothing changed.</exception>
        /// <remarks>O(p²), no allocation.</remarks>
#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
#endif
        public void Update(ReadOnlySpan<double> x, double y, double weight)
        {
#if NET
            if (x.Length == fourColumnLength)
            {
                // The common p = 4 step without going through TryUpdate's out-parameter (storing the success value cost close to a tenth
                // of this step); a sample it declines (nothing changed) goes straight to the general path. A wrong length goes on to the
                // length check below.
                if (TryFourColumnStep(x, y, weight))
                {
                    return;
                }

                UpdateGeneral(x, y, weight);
                return;
            }
#endif
            if (!TryUpdateWithoutRegisterPath(x, y, weight, out BreakdownInfo breakdown))
            {
                Guard.ThrowBreakdown(breakdown);
            }
        }

        /// <summary><see cref="TryUpdateGeneral"/>, throwing its breakdown: the p = 4 register step's hand-over in <see cref="Update(ReadOnlySpan{double}, double, double)"/>.</summary>
        [MethodImpl(MethodImplOptions.NoInlining)]
        private void UpdateGeneral(ReadOnlySpan<double> x, double y, double weight)
        {
            if (!TryUpdateGeneral(x, y, weight, out BreakdownInfo breakdown))
            {
                Guard.ThrowBreakdown(breakdown);
            }
        }

        /// <summary>As <see cref="Update(ReadOnlySpan{double}, double, double)"/>, but reports an overflow by returning false (nothing changed).</summary>
        /// <param name="x">Regressor vector of length p.</param>
        /// <param name="y">Output.</param>
        /// <param name="weight">Sample weight, finite and ≥ 0; 0 only forgets.</param>
        /// <param name="breakdown"><see cref="BreakdownKind.NonFinite"/> on overflow, otherwise <see cref="BreakdownInfo.None"/>.</param>
        /// <returns>True when the sample was accepted (or skipped under <see cref="InvalidSamplePolicy.SkipAndCount"/>: then only
        /// <see cref="SkippedSampleCount"/> changes).</returns>
        /// <exception cref="ArgumentException">Wrong length, or under <see cref="InvalidSamplePolicy.Throw"/> a non-finite value or a negative or
        /// non-finite weight.</exception>
        /// <remarks>O(p²), no allocation (also when skipping).</remarks>
#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization | MethodImplOptions.AggressiveInlining)]
#endif
        public bool TryUpdate(ReadOnlySpan<double> x, double y, double weight, out BreakdownInfo breakdown)
        {
#if NET
            if (x.Length == fourColumnLength)
            {
                if (TryFourColumnStep(x, y, weight))
                {
                    breakdown = BreakdownInfo.None;
                    return true;
                }

                return TryUpdateGeneral(x, y, weight, out breakdown);
            }
#endif
            return TryUpdateWithoutRegisterPath(x, y, weight, out breakdown);
        }

        /// <summary><see cref="TryUpdate"/> once the p = 4 register path is ruled out (it is off, or x has another length): the length check, the short path, the general path.</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private bool TryUpdateWithoutRegisterPath(ReadOnlySpan<double> x, double y, double weight, out BreakdownInfo breakdown)
        {
            Guard.Length(x.Length, p, nameof(x));
            if (leanPath)
            {
                // The common case in a few instructions (no intercept, no G₂, x read in place): a finite sample of positive finite weight whose
                // step needs no renormalization. It changes exactly what the general path below would change, with the same arithmetic;
                // anything else (a bad value, an overflow, weight 0, a renormalization) falls through to the general path, nothing changed.
                double leanNorm = GramUpdateKernels.SquaredNorm(x) + (y * y);
                if (leanNorm <= double.MaxValue && weight > 0.0 && weight <= double.MaxValue && gram!.TryAddCommon(weight, x, y, leanNorm))
                {
                    CountCommonStep(weight);
                    breakdown = BreakdownInfo.None;
                    return true;
                }
            }

            return TryUpdateGeneral(x, y, weight, out breakdown);
        }

#if NET
        /// <summary>
        /// The short path of <see cref="TryUpdateWithoutRegisterPath"/> for p = 4 (x of length 4, checked by the caller) with x in one register:
        /// the same sum of squares (<see cref="GramUpdateKernels.SumOfLanes(Vector256{double})"/>, the reduction of
        /// <see cref="GramUpdateKernels.SquaredNorm"/>) and the same step, so the same bits. True when it took the step; false when the sample is
        /// not the common case, and then nothing changed. The short path's test that ‖x‖² + y² is finite is not repeated here: a NaN or ∞
        /// there makes the new trace NaN or ∞, which <see cref="ScaledGram.TryAddFour"/> refuses, so the decisions are the same. Weights above
        /// <see cref="FourColumnWeightLimit"/> (≈ 4·10²⁹⁸) go to the general path, which gives the same result.
        /// </summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private bool TryFourColumnStep(ReadOnlySpan<double> x, double y, double weight)
        {
            Vector256<double> xv = Vector256.LoadUnsafe(ref MemoryMarshal.GetReference(x));
            double fourNorm = GramUpdateKernels.SumOfLanes(xv * xv) + (y * y);
            if (weight > 0.0 && weight <= FourColumnWeightLimit && gram!.TryAddFour(weight, xv, y, fourNorm))
            {
                CountCommonStep(weight);
                return true;
            }

            return false;
        }
#endif

        /// <summary>The bookkeeping of an accepted short-path step (positive weight, no intercept): weight sum, discounted count, sample count, cache.</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private void CountCommonStep(double weight)
        {
#if NET
            if (Vector128.IsHardwareAccelerated)
            {
                // (W, N) ← β·(W, N) + (w, 1): the same two multiplies and adds, lane by lane, as the scalar lines below.
                ref Vector128<double> pair = ref Unsafe.As<ForgottenSums, Vector128<double>>(ref sums);
                pair = (Vector128.Create(beta) * pair) + Vector128.Create(weight, 1.0);
            }
            else
#endif
            {
                sums.Weight = (beta * sums.Weight) + weight;
                DiscountedCount = (beta * DiscountedCount) + 1.0;
            }

            SampleCount++;
            solutionValid = false;
        }

        /// <summary>The whole of <see cref="TryUpdate"/>: every policy, the intercept and G₂ paths, overflow reports, renormalization.</summary>
        [MethodImpl(MethodImplOptions.NoInlining)]
        private bool TryUpdateGeneral(ReadOnlySpan<double> x, double y, double weight, out BreakdownInfo breakdown)
        {

            // ‖x‖² (and, without an intercept, the head the kernel reads: x itself when it is a few whole vectors, else its copy into the
            // aligned, zero-padded buffer, which keeps the O(p²) vector loads of the kernel from straddling cache lines). A finite ‖x‖² + y²
            // proves every entry finite, so the per-entry checks run only when it is not (a bad value, or a finite sample whose square
            // overflows: then the overflow guard below reports it).
            ReadOnlySpan<double> head = x;
            double normX;
            if (intercept || (headStride == p && p < DirectHeadLimit))
            {
                normX = GramUpdateKernels.SquaredNorm(x);
            }
            else
            {
                Span<double> padded = u.AsSpan(uStart, headStride);
                normX = GramUpdateKernels.CopyWithSquaredNorm(x, padded);
                head = padded;
            }

            double norm2 = normX + (y * y);
            if (!(norm2 <= double.MaxValue) || !(weight >= 0.0) || double.IsInfinity(weight))
            {
                if (SkipsOrThrows(x, y, weight))
                {
                    skipped++;
                    breakdown = Success;
                    return true;
                }
            }

            double newSquaredTrace = 0.0;
            if (squaredGram is not null)
            {
                newSquaredTrace = squaredGram.ProposedTrace(weight, normX + (intercept ? 1.0 : 0.0));
                if (!(newSquaredTrace < OverflowLevel))
                {
                    breakdown = new BreakdownInfo(BreakdownKind.NonFinite, -1, newSquaredTrace, double.NaN);
                    return false;
                }
            }

            if (intercept)
            {
                if (!moments!.TryUpdateValidated(x, y, weight, out breakdown))
                {
                    return false;
                }
            }
            else
            {
                double newTrace = gram!.ProposedTrace(weight, norm2);
                if (!(newTrace < OverflowLevel))
                {
                    breakdown = new BreakdownInfo(BreakdownKind.NonFinite, -1, newTrace, double.NaN);
                    return false;
                }

                gram.Add(weight, head, y, newTrace);
                sums.Weight = (beta * sums.Weight) + weight;
            }

            if (squaredGram is not null)
            {
                AddToSquaredGram(x, weight, newSquaredTrace);
            }

            DiscountedCount = (beta * DiscountedCount) + (weight > 0.0 ? 1.0 : 0.0);
            SampleCount++;
            solutionValid = false;
            breakdown = Success;
            return true;
        }

        /// <summary>
        /// The per-entry checks, run only when the fast test failed: true when the sample is to be skipped (SkipAndCount), otherwise throws
        /// for a bad value and returns false for a finite sample (whose squares overflowed: the overflow guard then reports it).
        /// </summary>
        [MethodImpl(MethodImplOptions.NoInlining)]
        private bool SkipsOrThrows(ReadOnlySpan<double> x, double y, double weight)
        {
            if (invalidSamples == InvalidSamplePolicy.SkipAndCount && !Guard.IsUsableSample(x, y, weight))
            {
                return true;
            }

            Guard.AllFinite(x, nameof(x));
            if (!Guard.IsFinite(y))
            {
                Guard.ThrowOutOfRange(nameof(y), y, "must be a finite number");
            }

            Guard.Weight(weight, nameof(weight));
            return false;
        }

        /// <summary>G₂ ← β²G₂ + w·x̃x̃ᵀ over the padded model regressor (its leading 1 with an intercept and its zero padding are set once).</summary>
        [MethodImpl(MethodImplOptions.NoInlining)]
        private void AddToSquaredGram(ReadOnlySpan<double> x, double weight, double newSquaredTrace)
        {
            Span<double> regressor = model.AsSpan(modelStart, squaredGram!.Stride);
            x.Slice(0, p - 1).CopyTo(regressor.Slice(intercept ? 1 : 0));
            squaredGram.Add(weight, regressor, x[p - 1], newSquaredTrace);
        }

        /// <summary>
        /// Solves the ridge problem of the current state for penalty <paramref name="penaltyValue"/> (λ, absolute, in the metric D of the settings)
        /// in regime <paramref name="penaltyRegime"/>, writing θ̂ (raw units) into <paramref name="coefficients"/> and returning b̂₀. O(p³/6), no allocation.
        /// </summary>
        /// <param name="penaltyValue">Penalty λ ≥ 0.</param>
        /// <param name="penaltyRegime">Constant (regime C) or decaying with the data (regime D: λ·βⁿ).</param>
        /// <param name="coefficients">Buffer of length at least p.</param>
        /// <returns>The intercept b̂₀ (0 without an intercept).</returns>
        /// <exception cref="ArgumentException">λ negative or not finite, an unknown regime, or a short buffer.</exception>
        /// <exception cref="RidgeBreakdownException">The problem cannot be solved (see <see cref="TrySolve"/>).</exception>
        public double Solve(double penaltyValue, PenaltyRegime penaltyRegime, Span<double> coefficients)
        {
            if (!TrySolve(penaltyValue, penaltyRegime, coefficients, out double b0, out BreakdownInfo breakdown))
            {
                Guard.ThrowBreakdown(breakdown);
            }

            return b0;
        }

        /// <summary>As <see cref="Solve"/>, but reports a breakdown by returning false (the buffer contents are then unspecified).</summary>
        /// <param name="penaltyValue">Penalty λ ≥ 0.</param>
        /// <param name="penaltyRegime">Constant (regime C) or decaying with the data (regime D).</param>
        /// <param name="coefficients">Buffer of length at least p for θ̂.</param>
        /// <param name="interceptValue">b̂₀ (0 without an intercept; NaN on failure).</param>
        /// <param name="breakdown"><see cref="BreakdownKind.NotPositiveDefinite"/> (pivot index = regressor column),
        /// <see cref="BreakdownKind.IllConditioned"/> (condition estimate of H above the limit), <see cref="BreakdownKind.RankDeficient"/> (no sample of
        /// positive weight yet), <see cref="BreakdownKind.NonFinite"/>, or <see cref="BreakdownInfo.None"/>.</param>
        /// <returns>True on success.</returns>
        /// <exception cref="ArgumentException">λ negative or not finite, an unknown regime, or a short buffer.</exception>
        public bool TrySolve(double penaltyValue, PenaltyRegime penaltyRegime, Span<double> coefficients, out double interceptValue, out BreakdownInfo breakdown)
        {
            Guard.NonNegativeFinite(penaltyValue, nameof(penaltyValue));
            if (penaltyRegime is not (PenaltyRegime.Constant or PenaltyRegime.Decaying))
            {
                Guard.ThrowOutOfRange(nameof(penaltyRegime), (double)penaltyRegime, "not a PenaltyRegime member");
            }

            if (coefficients.Length < p)
            {
                Guard.ThrowLength(nameof(coefficients), coefficients.Length, p);
            }

            double lambda = penaltyRegime == PenaltyRegime.Decaying ? penaltyValue * StreamingMoments.Decay(beta, SampleCount) : penaltyValue;
            return SolveCore(lambda, coefficients, out interceptValue, out breakdown);
        }

        /// <summary>
        /// Solves for many penalties at once from one symmetric eigendecomposition of the scaled Gram matrix D⁻¹M_xxD⁻¹ = VΛVᵀ (MATH.md §5.2,
        /// the information-form analogue of the path of §1.4): for each λ, γ̂(λ) = V(Λ + λI)⁻¹Vᵀ(D⁻¹M_xy + λDθ₀), θ̂ = D⁻¹γ̂, b̂₀ = m_y − m_xᵀθ̂.
        /// With λ = 0, eigenvalues Λⱼ ≤ max(τ², 10·q·ε)·Λ₁ (τ = <see cref="RidgeSettings.RankTolerance"/>, default 0; q active columns) count as
        /// zero and their components are taken from the prior: the minimum-‖D(θ − θ₀)‖ solution, as the batch SVD solver gives (the Gram squares
        /// the singular values, so singular-value ratios below about √(10qε) ≈ 10⁻⁷ cannot be resolved here).
        /// </summary>
        /// <param name="penalties">The penalties λ ≥ 0 (absolute, in the metric D of the settings), any order.</param>
        /// <param name="penaltyRegime">Constant (regime C) or decaying (regime D: each λ is multiplied by βⁿ).</param>
        /// <param name="coefficients">Buffer of at least penalties.Length × p values: row r (p values) receives θ̂ for penalties[r].</param>
        /// <param name="intercepts">Buffer of at least penalties.Length values for b̂₀ (0 without an intercept).</param>
        /// <exception cref="ArgumentException">A penalty negative or not finite, an unknown regime, or a short buffer.</exception>
        /// <exception cref="RidgeBreakdownException">No sample of positive weight yet, or a non-finite result.</exception>
        /// <remarks>
        /// Cost: O(p³) for the eigendecomposition (MathNet.Numerics; allocates O(p²), not for the hot path) plus O(p²) per penalty. Accuracy as
        /// <see cref="Solve"/> (relative error of order ε·cond(H), MATH.md §5.4), and no breakdown for an indefinite Gram: every λ &gt; 0 gives an answer.
        /// </remarks>
        public void SolvePenaltyPath(ReadOnlySpan<double> penalties, PenaltyRegime penaltyRegime, Span<double> coefficients, Span<double> intercepts)
        {
            if (!TrySolvePenaltyPath(penalties, penaltyRegime, coefficients, intercepts, out BreakdownInfo breakdown))
            {
                Guard.ThrowBreakdown(breakdown);
            }
        }

        /// <summary>As <see cref="SolvePenaltyPath"/>, but reports a breakdown by returning false (buffer contents then unspecified).</summary>
        /// <param name="penalties">The penalties λ ≥ 0.</param>
        /// <param name="penaltyRegime">Constant (regime C) or decaying (regime D).</param>
        /// <param name="coefficients">Buffer of at least penalties.Length × p values.</param>
        /// <param name="intercepts">Buffer of at least penalties.Length values.</param>
        /// <param name="breakdown"><see cref="BreakdownKind.RankDeficient"/> (no sample of positive weight yet), <see cref="BreakdownKind.NonFinite"/>,
        /// or <see cref="BreakdownInfo.None"/>.</param>
        /// <returns>True on success.</returns>
        /// <exception cref="ArgumentException">A penalty negative or not finite, an unknown regime, or a short buffer.</exception>
        public bool TrySolvePenaltyPath(ReadOnlySpan<double> penalties, PenaltyRegime penaltyRegime, Span<double> coefficients, Span<double> intercepts, out BreakdownInfo breakdown)
        {
            for (int r = 0; r < penalties.Length; r++)
            {
                if (!(penalties[r] >= 0.0) || double.IsInfinity(penalties[r]))
                {
                    Guard.ThrowNonFinite(nameof(penalties), r, penalties[r]);
                }
            }

            if (penaltyRegime is not (PenaltyRegime.Constant or PenaltyRegime.Decaying))
            {
                Guard.ThrowOutOfRange(nameof(penaltyRegime), (double)penaltyRegime, "not a PenaltyRegime member");
            }

            if (coefficients.Length < penalties.Length * p)
            {
                Guard.ThrowLength(nameof(coefficients), coefficients.Length, penalties.Length * p);
            }

            if (intercepts.Length < penalties.Length)
            {
                Guard.ThrowLength(nameof(intercepts), intercepts.Length, penalties.Length);
            }

            double w = WeightSum;
            if (!(w > 0.0))
            {
                breakdown = new BreakdownInfo(BreakdownKind.RankDeficient, -1, double.NaN, double.NaN);
                return false;
            }

            ScaledGram m = intercept ? moments!.Comoments : gram!;
            ReadOnlySpan<double> means = intercept ? moments!.RawMeans : default;
            int q = SelectColumns(m, w, means);
            double decay = penaltyRegime == PenaltyRegime.Decaying ? StreamingMoments.Decay(beta, SampleCount) : 1.0;

            var h = Matrix<double>.Build.Dense(q, q);
            var c1 = Vector<double>.Build.Dense(q);
            var g0 = Vector<double>.Build.Dense(q);
            for (int k = 0; k < q; k++)
            {
                int a = active[k];
                for (int l = 0; l < q; l++)
                {
                    h[k, l] = m.Get(a, active[l]) / (scale[a] * scale[active[l]]);
                }

                c1[k] = m.Get(a, p) / scale[a];
                g0[k] = scale[a] * prior[a];
            }

            double[] eigenvalues = new double[q];
            Vector<double> vc = c1;
            Vector<double> vg = g0;
            Matrix<double>? v = null;
            if (q > 0)
            {
                var evd = h.Evd(Symmetricity.Symmetric);
                v = evd.EigenVectors;
                for (int k = 0; k < q; k++)
                {
                    eigenvalues[k] = evd.EigenValues[k].Real;
                }

                vc = v.TransposeThisAndMultiply(c1);
                vg = v.TransposeThisAndMultiply(g0);
            }

            double largest = 0.0;
            for (int k = 0; k < q; k++)
            {
                largest = Math.Max(largest, eigenvalues[k]);
            }

            double tau = settings.RankTolerance ?? 0.0;
            double cutoff = Math.Max(tau * tau, 10.0 * q * 2.220446049250313e-16) * largest;
            var z = Vector<double>.Build.Dense(q);
            for (int r = 0; r < penalties.Length; r++)
            {
                double lambda = penalties[r] * decay;
                for (int k = 0; k < q; k++)
                {
                    double ev = Math.Max(eigenvalues[k], 0.0);
                    z[k] = lambda == 0.0
                        ? (ev <= cutoff ? vg[k] : vc[k] / ev)
                        : (vc[k] + (lambda * vg[k])) / (ev + lambda);
                }

                Span<double> theta = coefficients.Slice(r * p, p);
                theta.Clear();
                if (q > 0)
                {
                    Vector<double> gamma = v! * z;
                    for (int k = 0; k < q; k++)
                    {
                        theta[active[k]] = gamma[k] / scale[active[k]];
                    }
                }

                double b0 = 0.0;
                if (intercept)
                {
                    b0 = means[p];
                    for (int j = 0; j < p; j++)
                    {
                        b0 -= means[j] * theta[j];
                    }
                }

                for (int j = 0; j < p; j++)
                {
                    if (!Guard.IsFinite(theta[j]))
                    {
                        breakdown = new BreakdownInfo(BreakdownKind.NonFinite, j, theta[j], double.NaN);
                        return false;
                    }
                }

                if (!Guard.IsFinite(b0))
                {
                    breakdown = new BreakdownInfo(BreakdownKind.NonFinite, -1, b0, double.NaN);
                    return false;
                }

                intercepts[r] = b0;
            }

            breakdown = BreakdownInfo.None;
            return true;
        }

        /// <summary>Writes θ̂ of the cached solution (settings penalty and <see cref="Regime"/>) into <paramref name="destination"/>; solves on first use after an update.</summary>
        /// <param name="destination">Buffer of length at least p.</param>
        /// <exception cref="ArgumentException">The buffer is too short.</exception>
        /// <exception cref="RidgeBreakdownException">The current state cannot be solved.</exception>
        /// <remarks>O(p) when cached, O(p³/6) otherwise; no allocation.</remarks>
        public void CopyParametersTo(Span<double> destination)
        {
            if (destination.Length < p)
            {
                Guard.ThrowLength(nameof(destination), destination.Length, p);
            }

            EnsureSolved();
            solution.AsSpan().CopyTo(destination);
        }

        /// <summary>Prediction b̂₀ + xᵀθ̂ of the cached solution. O(p) when cached, no allocation.</summary>
        /// <param name="x">Regressor vector of length p.</param>
        /// <returns>The prediction.</returns>
        /// <exception cref="ArgumentException">Wrong length or a non-finite entry.</exception>
        /// <exception cref="RidgeBreakdownException">The current state cannot be solved.</exception>
        public double Predict(ReadOnlySpan<double> x)
        {
            Guard.Length(x.Length, p, nameof(x));
            Guard.AllFinite(x, nameof(x));
            EnsureSolved();
            return solutionIntercept + CovarianceKernels.Dot(x, solution);
        }

        /// <summary>
        /// Writes the squared-forgetting Gram G₂ = Σ β²⁽ⁿ⁻ⁱ⁾wᵢ x̃ᵢx̃ᵢᵀ (x̃ = (1, x) with an intercept, so (p+1)² values; x without, p² values;
        /// row-major, exactly symmetric) into <paramref name="destination"/> (MATH.md §6.2). O(p²), no allocation.
        /// </summary>
        /// <param name="destination">Buffer of length at least d², d = p + 1 with an intercept, p without.</param>
        /// <exception cref="InvalidOperationException">The estimator was created without tracking G₂.</exception>
        /// <exception cref="ArgumentException">The buffer is too short.</exception>
        public void CopySquaredForgettingGramTo(Span<double> destination)
        {
            if (squaredGram is null)
            {
                throw new InvalidOperationException("The estimator was created with trackSquaredForgettingGram = false.");
            }

            int d = ModelDimension;
            if (destination.Length < d * d)
            {
                Guard.ThrowLength(nameof(destination), destination.Length, d * d);
            }

            squaredGram.Unpack(destination);
        }

        /// <summary>
        /// Merges <paramref name="later"/> into this estimator (MATH.md §5.3): this one holds the earlier samples, <paramref name="later"/> the
        /// k = later.SampleCount steps after them. G = β^k·G_A + G_B (likewise b, c, W, N; G₂ with β^(2k); Chan–Golub–LeVeque for the centered
        /// moments, MATH.md §4.2); the sample counts add, so the regime-D decay is β^(n_A + n_B). The result equals (to rounding) one estimator fed
        /// both streams in order. The prior and penalty of this estimator's settings apply; the skipped-sample counts add (the policies may
        /// differ). <paramref name="later"/> is not changed (it may be this object).
        /// O(p²), no allocation.
        /// </summary>
        /// <param name="later">Estimator of the later samples, with the same p, forgetting factor, intercept setting and G₂ tracking.</param>
        /// <exception cref="ArgumentNullException"><paramref name="later"/> is null.</exception>
        /// <exception cref="ArgumentException">The estimators are not compatible.</exception>
        /// <exception cref="RidgeBreakdownException">The merge would overflow; nothing changed.</exception>
        public void MergeFrom(InformationFormEstimator later)
        {
            if (!TryMergeFrom(later, out BreakdownInfo breakdown))
            {
                Guard.ThrowBreakdown(breakdown);
            }
        }

        /// <summary>As <see cref="MergeFrom"/>, but reports an overflow by returning false (nothing changed).</summary>
        /// <param name="later">Estimator of the later samples.</param>
        /// <param name="breakdown"><see cref="BreakdownKind.NonFinite"/> on overflow, otherwise <see cref="BreakdownInfo.None"/>.</param>
        /// <returns>True on success.</returns>
        /// <exception cref="ArgumentNullException"><paramref name="later"/> is null.</exception>
        /// <exception cref="ArgumentException">The estimators are not compatible.</exception>
        public bool TryMergeFrom(InformationFormEstimator later, out BreakdownInfo breakdown)
        {
            Guard.NotNull(later, nameof(later));
            if (later.p != p || later.beta != beta || later.intercept != intercept || (later.squaredGram is null) != (squaredGram is null))
            {
                Guard.ThrowArgument(nameof(later), "later must have the same number of regressors, forgetting factor, intercept setting and squared-forgetting tracking.");
            }

            double age = StreamingMoments.Decay(beta, later.SampleCount);
            long laterSkipped = later.skipped;
            double newSquaredTrace = 0.0;
            if (squaredGram is not null)
            {
                newSquaredTrace = (age * age * squaredGram.Trace) + later.squaredGram!.Trace;
                if (!(newSquaredTrace < OverflowLevel))
                {
                    breakdown = new BreakdownInfo(BreakdownKind.NonFinite, -1, newSquaredTrace, double.NaN);
                    return false;
                }
            }

            if (intercept)
            {
                if (!moments!.TryMergeFrom(later.moments!, out breakdown))
                {
                    return false;
                }
            }
            else
            {
                double newTrace = (age * gram!.Trace) + later.gram!.Trace;
                if (!(newTrace < OverflowLevel))
                {
                    breakdown = new BreakdownInfo(BreakdownKind.NonFinite, -1, newTrace, double.NaN);
                    return false;
                }

                gram.MergeFrom(age, later.gram, 0.0, default, newTrace);
                sums.Weight = (age * sums.Weight) + later.sums.Weight;
            }

            if (squaredGram is not null)
            {
                squaredGram.MergeFrom(age * age, later.squaredGram!, 0.0, default, newSquaredTrace);
            }

            DiscountedCount = (age * DiscountedCount) + later.DiscountedCount;
            SampleCount += later.SampleCount;
            skipped += laterSkipped;
            solutionValid = false;
            breakdown = BreakdownInfo.None;
            return true;
        }

        private const double OverflowLevel = ScaledGram.OverflowLevel;

        /// <summary>
        /// Writes the complete state — every <see cref="RidgeSettings"/> property (penalty, forgetting factor, intercept, standardization, prior,
        /// solver, rank tolerance, covariance model, refinement steps, Cholesky condition limit), the regime, the G₂ tracking flag, the
        /// invalid-sample policy, p, <see cref="SampleCount"/>, <see cref="SkippedSampleCount"/>, <see cref="DiscountedCount"/> and the
        /// statistics as stored (centered moments with an intercept, Gram of (x, y) and W without, G₂ when tracked: each symmetric statistic
        /// G = s·G̃ as the packed upper triangle of G̃ and the scale s; and the overflow guards' traces) — as a versioned, checksummed snapshot
        /// (kind "InformationFormEstimator", layout version 2; <see cref="ReadSnapshot"/> also reads layout 1, which stored G itself).
        /// </summary>
        /// <param name="destination">Writable stream; written at its position and left open.</param>
        /// <param name="encoding">Binary (default) or indented JSON with the same entries (settings by name).</param>
        /// <remarks><see cref="ReadSnapshot"/> of the result continues bit-identically (the cached solution is not stored; it is a deterministic
        /// function of the state and is recomputed on the first read). Does not change the estimator and does not solve. O(p²) time and
        /// allocation. Not thread-safe with respect to a concurrent update.</remarks>
        /// <exception cref="ArgumentNullException"><paramref name="destination"/> is null.</exception>
        /// <exception cref="ArgumentException">The stream is not writable, or <paramref name="encoding"/> is undefined.</exception>
        /// <exception cref="IOException">The stream failed.</exception>
        public void WriteSnapshot(Stream destination, SnapshotEncoding encoding = SnapshotEncoding.Binary)
        {
            var record = new StateRecord(SnapshotKind, SnapshotVersion)
                .Add("parameterCount", (long)p)
                .Add("penalty", settings.Penalty)
                .Add("forgettingFactor", settings.ForgettingFactor)
                .Add("fitIntercept", settings.FitIntercept)
                .Add("standardize", settings.Standardize)
                .Add("prior", SnapshotSupport.PriorEntry(settings.Prior))
                .Add("solver", settings.Solver.ToString())
                .Add("rankTolerance", settings.RankTolerance ?? double.NaN)
                .Add("covariance", settings.Covariance.ToString())
                .Add("refinementSteps", (long)settings.RefinementSteps)
                .Add("choleskyConditionLimit", settings.CholeskyConditionLimit)
                .Add("regime", regime.ToString())
                .Add("trackSquaredForgettingGram", squaredGram is not null)
                .Add("invalidSamples", SnapshotSupport.PolicyName(invalidSamples))
                .Add("sampleCount", SampleCount)
                .Add("skippedSampleCount", skipped)
                .Add("discountedCount", DiscountedCount);
            if (intercept)
            {
                moments!.AddStateTo(record, "moments.");
            }
            else
            {
                record.Add("weightSum", sums.Weight).Add("gramTrace", gram!.Trace).Add("gram", gram.PackedStored()).Add("gramScale", gram.Scale);
            }

            if (squaredGram is not null)
            {
                record.Add("squaredTrace", squaredGram.Trace).Add("squaredGram", squaredGram.PackedStored()).Add("squaredScale", squaredGram.Scale);
            }

            SnapshotSupport.Write(record, destination, encoding);
        }

        /// <summary>
        /// Restores an estimator from a snapshot of <see cref="WriteSnapshot"/> in either encoding (detected from the content), read from the
        /// current position of <paramref name="source"/> to its end.
        /// </summary>
        /// <param name="source">Readable stream holding exactly one snapshot.</param>
        /// <returns>A new estimator in exactly the saved state; its results are bit-identical to those the saved one would have given.</returns>
        /// <remarks>Validates before returning anything: checksum, kind, version, every setting (ranges of <see cref="RidgeSettings"/> and of
        /// the constructor), p, lengths, finite statistics with non-negative diagonals, traces that bound those diagonals (so the overflow
        /// guards still hold), non-negative counts. O(p²). Thread-safe.</remarks>
        /// <exception cref="ArgumentNullException"><paramref name="source"/> is null.</exception>
        /// <exception cref="ArgumentException">The stream is not readable.</exception>
        /// <exception cref="SnapshotFormatException">Not a valid snapshot of this kind; nothing is returned.</exception>
        /// <exception cref="IOException">The stream failed.</exception>
        public static InformationFormEstimator ReadSnapshot(Stream source)
        {
            StateRecord r = SnapshotSupport.Read(source, SnapshotKind, SnapshotVersion);
            int p = SnapshotSupport.ParameterCount(r, "parameterCount", 1 << 15);
            double[]? prior = SnapshotSupport.Prior(r, "prior", p);
            double rankTolerance = r.GetDouble("rankTolerance");
            RidgeSettings settings = SnapshotSupport.Settings(() => new RidgeSettings
            {
                Penalty = r.GetDouble("penalty"),
                ForgettingFactor = r.GetDouble("forgettingFactor"),
                FitIntercept = r.GetBoolean("fitIntercept"),
                Standardize = r.GetBoolean("standardize"),
                Prior = prior,
                Solver = SnapshotSupport.EnumMember<RidgeSolver>(r, "solver"),
                RankTolerance = double.IsNaN(rankTolerance) ? null : rankTolerance,
                Covariance = SnapshotSupport.EnumMember<CovarianceModel>(r, "covariance"),
                RefinementSteps = r.GetInt32("refinementSteps"),
                CholeskyConditionLimit = r.GetDouble("choleskyConditionLimit"),
            });
            PenaltyRegime regime = SnapshotSupport.EnumMember<PenaltyRegime>(r, "regime");
            bool track = r.GetBoolean("trackSquaredForgettingGram");
            InvalidSamplePolicy policy = SnapshotSupport.Policy(r, "invalidSamples");
            InformationFormEstimator est = SnapshotSupport.Settings(() => new InformationFormEstimator(p, settings, regime, track, policy));
            est.SampleCount = SnapshotSupport.Count(r, "sampleCount");
            est.skipped = SnapshotSupport.Count(r, "skippedSampleCount");
            est.DiscountedCount = SnapshotSupport.NonNegative(r, "discountedCount");
            if (est.intercept)
            {
                est.moments!.RestoreStateFrom(r, "moments.", r.KindVersion);
            }
            else
            {
                est.sums.Weight = SnapshotSupport.NonNegative(r, "weightSum");
                RestorePacked(r, "gram", "gramTrace", "gramScale", est.gram!);
            }

            if (track)
            {
                RestorePacked(r, "squaredGram", "squaredTrace", "squaredScale", est.squaredGram!);
            }

            return est;
        }

        /// <summary>
        /// Validates a stored symmetric statistic — packed G̃, its scale (layout 2; 1 in layout 1) and its tracked trace: finite, diagonal ≥ 0,
        /// trace bounding the diagonal of s·G̃ — and restores it into <paramref name="target"/>.
        /// </summary>
        private static void RestorePacked(StateRecord r, string name, string traceName, string scaleName, ScaledGram target)
        {
            int d = target.Order;
            double trace = SnapshotSupport.NonNegative(r, traceName);
            if (!(trace < OverflowLevel))
            {
                throw SnapshotSupport.Invalid("snapshot entry '{0}' = {1:R} exceeds the overflow limit", traceName, trace);
            }

            double[] packed = SnapshotSupport.FiniteArray(r, name, RecursiveKernels.PackedLength(d));
            double scale = 1.0;
            if (r.KindVersion >= 2)
            {
                scale = r.GetDouble(scaleName);
                if (!target.IsValidScale(scale))
                {
                    throw SnapshotSupport.Invalid("snapshot entry '{0}' = {1:R} is outside [2^-32, 1]", scaleName, scale);
                }
            }

            double diagonal = ScaledGram.PackedDiagonalSum(packed, d, scale, out int negative);
            if (negative >= 0)
            {
                throw SnapshotSupport.Invalid("snapshot entry '{0}' has the negative diagonal entry {1:R} at {2}", name, packed[RecursiveKernels.RowOffset(negative, d)], negative);
            }

            if (!(diagonal <= (trace * (1.0 + 1e-6)) + 1e-300))
            {
                throw SnapshotSupport.Invalid("snapshot entry '{0}' (trace {1:R}) is inconsistent with '{2}' = {3:R}", name, diagonal, traceName, trace);
            }

            target.Restore(packed, scale, trace);
        }

        private int ModelDimension => intercept ? p + 1 : p;

        private void EnsureSolved()
        {
            if (solutionValid)
            {
                return;
            }

            double lambda = regime == PenaltyRegime.Decaying ? penalty * StreamingMoments.Decay(beta, SampleCount) : penalty;
            if (!SolveCore(lambda, solution, out double b0, out BreakdownInfo breakdown))
            {
                Guard.ThrowBreakdown(breakdown);
            }

            solutionIntercept = b0;
            solutionValid = true;
        }

        /// <summary>Fills scale (D) and active (non-excluded columns) per the standardization rule; returns the number of active columns.</summary>
        private int SelectColumns(ScaledGram m, double w, ReadOnlySpan<double> means)
        {
            int q = 0;
            for (int j = 0; j < p; j++)
            {
                double s = 1.0;
                bool exclude = false;
                if (standardize)
                {
                    s = Math.Sqrt(m.Get(j, j) / w);
                    exclude = intercept
                        ? s <= ConstantLevel * Math.Sqrt((means[j] * means[j]) + (s * s))
                        : s == 0.0;
                }

                scale[j] = s;
                if (!exclude)
                {
                    active[q++] = j;
                }
            }

            return q;
        }

        /// <summary>The solve of MATH.md §4.4–4.5 / §5.2 in scaled coordinates γ = Dθ over the active columns.</summary>
        private bool SolveCore(double lambda, Span<double> theta, out double b0, out BreakdownInfo breakdown)
        {
            ScaledGram m = intercept ? moments!.Comoments : gram!;
            double w = WeightSum;
            b0 = double.NaN;
            if (!(w > 0.0))
            {
                breakdown = new BreakdownInfo(BreakdownKind.RankDeficient, -1, double.NaN, double.NaN);
                return false;
            }

            ReadOnlySpan<double> means = intercept ? moments!.RawMeans : default;
            int q = SelectColumns(m, w, means);

            // H = D⁻¹ M_xx D⁻¹ + λI (upper triangle), r = D⁻¹M_xy + λ·Dθ₀ over the active columns, then H·γ = r and θ = D⁻¹γ.
            // The prior enters only through λ·Dθ₀ (MATH.md §5.2 form H⁻¹(b + Γθ₀)); expanding about θ₀ instead, θ₀ + H⁻¹(M_xy − M_xxθ₀),
            // would cancel catastrophically when the prior is far from the solution and λ is small.
            for (int k = 0; k < q; k++)
            {
                int a = active[k];
                double sa = scale[a];
                int row = k * q;
                for (int l = k; l < q; l++)
                {
                    int c = active[l];
                    hessian[row + l] = m.Get(a, c) / (sa * scale[c]);
                }

                hessian[row + k] += lambda;
                rhs[k] = (m.Get(a, p) / sa) + (lambda * (sa * prior[a]));
            }

            if (!Triangular.CholeskyUpper(hessian, q, q, out int failIndex, out double failValue))
            {
                breakdown = new BreakdownInfo(BreakdownKind.NotPositiveDefinite, active[failIndex], failValue, double.NaN);
                return false;
            }

            double cond = Triangular.ConditionEstimate(hessian, q, q, conditionWork);
            double condH = cond * cond;
            if (!(condH <= conditionLimit))
            {
                breakdown = new BreakdownInfo(BreakdownKind.IllConditioned, -1, double.NaN, condH);
                return false;
            }

            Span<double> step = rhs.AsSpan(0, q);
            Triangular.SolveUpperTransposed(hessian, q, q, step);
            Triangular.SolveUpper(hessian, q, q, step);

            theta.Slice(0, p).Clear();
            for (int k = 0; k < q; k++)
            {
                int a = active[k];
                theta[a] = step[k] / scale[a];
            }

            double b = 0.0;
            if (intercept)
            {
                b = means[p];
                for (int j = 0; j < p; j++)
                {
                    b -= means[j] * theta[j];
                }
            }

            for (int j = 0; j < p; j++)
            {
                if (!Guard.IsFinite(theta[j]))
                {
                    breakdown = new BreakdownInfo(BreakdownKind.NonFinite, j, theta[j], condH);
                    return false;
                }
            }

            if (!Guard.IsFinite(b))
            {
                breakdown = new BreakdownInfo(BreakdownKind.NonFinite, -1, b, condH);
                return false;
            }

            b0 = b;
            breakdown = BreakdownInfo.None;
            return true;
        }

        /// <summary>W and N adjacent in memory (one 16-byte load and store in <see cref="CountCommonStep"/>).</summary>
        [System.Runtime.InteropServices.StructLayout(System.Runtime.InteropServices.LayoutKind.Sequential)]
        private struct ForgottenSums
        {
            /// <summary>W = Σ βⁿ⁻ⁱwᵢ (no intercept; with one the streaming moments keep it).</summary>
            public double Weight;

            /// <summary>N = Σ βⁿ⁻ⁱ over the updates of positive weight.</summary>
            public double Count;
        }
    }
}
