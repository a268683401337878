using System;
using System.Collections.Generic;
using OnlineRidge.Internal;

namespace OnlineRidge
{
    /// <summary>
    /// Immutable settings of a regularized least-squares fit: penalty, forgetting, prior, intercept, standardization and solver.
    /// Every property is validated when it is set; an invalid value throws <see cref="ArgumentException"/> naming the property and the value.
    /// </summary>
    /// <remarks>
    /// The objective (MATH.md §1, with §4 for intercept and standardization) is
    /// <c>Σᵢ βⁿ⁻ⁱ wᵢ (yᵢ − b₀ − xᵢᵀθ)² + λ (θ − θ₀)ᵀ D² (θ − θ₀)</c>, where <c>D = I</c> without standardization and
    /// <c>D = diag(σⱼ)</c> with it (σⱼ the weighted population standard deviation of column j, or its root mean square when there is no intercept).
    /// The intercept b₀ is never penalized. Defaults: penalty 0 (ordinary least squares), no forgetting, an intercept, standardization on
    /// (so that a penalty treats kilowatts and ratios alike and the solution does not depend on the units of any regressor), solver
    /// <see cref="RidgeSolver.Auto"/>. Instances are immutable and thread-safe.
    /// </remarks>
    public sealed class RidgeSettings
    {
        private readonly double penalty;
        private readonly double forgettingFactor = 1.0;
        private readonly double[]? prior;
        private readonly double? rankTolerance;
        private readonly double choleskyConditionLimit = DefaultCholeskyConditionLimit;
        private readonly RidgeSolver solver = RidgeSolver.Auto;
        private readonly int refinementSteps = 3;
        private readonly CovarianceModel covariance = CovarianceModel.Sandwich;
        private readonly int maxDegreeOfParallelism = 1;

        /// <summary>Default of <see cref="CholeskyConditionLimit"/>: 10¹⁰, so an accepted Cholesky solution keeps roughly 16 − 10 − log₁₀(10p) ≥ 4 digits.</summary>
        public const double DefaultCholeskyConditionLimit = 1e10;

        /// <summary>A copy with another penalty (all other settings equal).</summary>
        internal RidgeSettings WithPenalty(double newPenalty) => new()
        {
            Penalty = newPenalty,
            ForgettingFactor = ForgettingFactor,
            FitIntercept = FitIntercept,
            Standardize = Standardize,
            Prior = Prior,
            Solver = Solver,
            RankTolerance = RankTolerance,
            RefinementSteps = RefinementSteps,
            CholeskyConditionLimit = CholeskyConditionLimit,
            Covariance = Covariance,
            MaxDegreeOfParallelism = MaxDegreeOfParallelism,
        };

        /// <summary>The settings for ordinary least squares with an intercept (all defaults).</summary>
        public static RidgeSettings Default { get; } = new();

        /// <summary>
        /// Penalty λ ≥ 0 (absolute): added to the diagonal of the weighted Gram matrix of the (standardized, if <see cref="Standardize"/>) regressors.
        /// Zero gives ordinary (weighted) least squares. It is not divided by the number of samples: with more data the same λ shrinks less.
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
        /// Forgetting factor β in (0, 1]: sample i of n carries the extra weight βⁿ⁻ⁱ (the newest has age 0). One means no forgetting.
        /// The effective memory is about 1/(1 − β) samples (common practice, a rule of thumb; MATH.md §9).
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

        /// <summary>Whether to fit an unpenalized intercept b₀ (default true).</summary>
        public bool FitIntercept { get; init; } = true;

        /// <summary>
        /// Whether the penalty acts on standardized coefficients (default true): column j is measured in units of its weighted population
        /// standard deviation (with an intercept) or of its root mean square (without). Results are always reported in raw units.
        /// With an intercept, a column whose standard deviation is at rounding level (σⱼ ≤ 10³·ε·√(mⱼ² + σⱼ²)) is constant: it is
        /// excluded (coefficient 0) and listed in <see cref="RidgeFit.ExcludedColumns"/>. Has no effect on the solution when the penalty
        /// is zero and the design has full rank.
        /// </summary>
        public bool Standardize { get; init; } = true;

        /// <summary>
        /// Prior θ₀ (raw units), the shrinkage target of the penalty; null means zero. Its length must equal the number of regressors of the fit.
        /// </summary>
        /// <exception cref="ArgumentException">An entry is NaN or infinite.</exception>
        public IReadOnlyList<double>? Prior
        {
            get => prior;
            init => prior = Guard.FiniteCopy(value, nameof(Prior));
        }

        /// <summary>The solver (default <see cref="RidgeSolver.Auto"/>); see <see cref="RidgeSolver"/> for the trade-offs.</summary>
        /// <exception cref="ArgumentOutOfRangeException">Not a member of the enumeration.</exception>
        public RidgeSolver Solver
        {
            get => solver;
            init
            {
                if (value < RidgeSolver.Auto || value > RidgeSolver.Svd)
                {
                    Guard.ThrowOutOfRange(nameof(Solver), (double)value, "not a RidgeSolver member");
                }

                solver = value;
            }
        }

        /// <summary>
        /// Relative cutoff τ for the SVD solver with zero penalty: singular values s ≤ τ·s₁ are treated as zero and the minimum-norm solution
        /// (distance to the prior, in the standardized metric when <see cref="Standardize"/>) is returned. Null (default) means
        /// max(n, p)·ε (MATH.md §1.3). Also the rank test of the QR solver. Must lie in [0, 1).
        /// </summary>
        /// <exception cref="ArgumentOutOfRangeException">NaN or outside [0, 1).</exception>
        public double? RankTolerance
        {
            get => rankTolerance;
            init
            {
                if (value is double v && !(v >= 0.0 && v < 1.0))
                {
                    Guard.ThrowOutOfRange(nameof(RankTolerance), v, "must lie in [0, 1)");
                }

                rankTolerance = value;
            }
        }

        /// <summary>How the parameter covariance is computed (default <see cref="CovarianceModel.Sandwich"/>, exact; MATH.md §6.3).</summary>
        /// <exception cref="ArgumentOutOfRangeException">Not a member of the enumeration.</exception>
        public CovarianceModel Covariance
        {
            get => covariance;
            init
            {
                if (value < CovarianceModel.Sandwich || value > CovarianceModel.InverseHessian)
                {
                    Guard.ThrowOutOfRange(nameof(Covariance), (double)value, "not a CovarianceModel member");
                }

                covariance = value;
            }
        }

        /// <summary>
        /// Largest number of steps of iterative refinement with extra-precise residuals (Björck 1967; residuals and gradient accumulated in
        /// double-double arithmetic on the raw data) applied after any solver; default 3, 0 disables. Each step costs about 10·n·p flops and
        /// multiplies the error by about ε·cond(XᵀWX + λD²), so it recovers the digits lost to squaring the condition (Cholesky) and to large
        /// residuals (the κ²·η term of QR and SVD), up to the accuracy of the data themselves. Steps stop early once the correction no longer
        /// shrinks or falls below rounding level, and are skipped when the condition estimate of the Gram matrix plus penalty is at most 10³ (the
        /// solve is then already accurate to a few units of rounding). Must lie in [0, 10].
        /// </summary>
        /// <exception cref="ArgumentOutOfRangeException">Outside [0, 10].</exception>
        public int RefinementSteps
        {
            get => refinementSteps;
            init
            {
                if (value < 0 || value > 10)
                {
                    Guard.ThrowOutOfRange(nameof(RefinementSteps), value, "must lie in [0, 10]");
                }

                refinementSteps = value;
            }
        }

        /// <summary>
        /// Largest accepted condition estimate (2-norm) of the Gram matrix plus penalty for the <see cref="RidgeSolver.Cholesky"/> solver
        /// (default <see cref="DefaultCholeskyConditionLimit"/>). Beyond it the Cholesky solver reports <see cref="BreakdownKind.IllConditioned"/>
        /// instead of returning a solution whose digits it cannot vouch for. Must be at least 1.
        /// </summary>
        /// <exception cref="ArgumentOutOfRangeException">NaN or below 1.</exception>
        public double CholeskyConditionLimit
        {
            get => choleskyConditionLimit;
            init
            {
                if (!(value >= 1.0))
                {
                    Guard.ThrowOutOfRange(nameof(CholeskyConditionLimit), value, "must be >= 1");
                }

                choleskyConditionLimit = value;
            }
        }
    
        /// <summary>
        /// Largest number of threads a batch fit may use for its passes over the data (the Gram matrix of the Cholesky solver, the
        /// Householder factor of the QR and SVD solvers); default 1, the calling thread only. The rows are cut into fixed segments that are
        /// accumulated separately and merged in a fixed order, so the result has the same bits for every value of this property. With a
        /// value D &gt; 1 the calling thread copies D segments of weighted rows at a time into buffers (about D·8 MiB) and D threads of the
        /// thread pool reduce them; on two cores this makes the QR pass nearly twice as fast and the Gram pass about 1.5 times (the copy runs
        /// on one thread). Problems of a single segment (up to 1024–16384 rows, depending on the width) always run on the calling thread.
        /// Must be at least 1.
        /// </summary>
        /// <exception cref="ArgumentOutOfRangeException">Below 1.</exception>
        public int MaxDegreeOfParallelism
        {
            get => maxDegreeOfParallelism;
            init
            {
                if (value < 1)
                {
                    Guard.ThrowOutOfRange(nameof(MaxDegreeOfParallelism), value, "must be >= 1");
                }

                maxDegreeOfParallelism = value;
            }
        }
    }
}
