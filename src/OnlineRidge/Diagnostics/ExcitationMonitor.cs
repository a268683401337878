using System;
using System.Collections.Generic;
using MathNet.Numerics.LinearAlgebra;
using OnlineRidge.Internal;

namespace OnlineRidge
{
    /// <summary>The verdict of an <see cref="ExcitationMonitor"/> on the recent regressors. Immutable; thread-safe.</summary>
    public sealed class ExcitationStatus
    {
        private readonly double[] weakestDirection;

        internal ExcitationStatus(bool sufficient, double weakestInformation, double reciprocalCondition, double[] weakestDirection, int constantColumn, double weightSum)
        {
            IsSufficient = sufficient;
            WeakestInformation = weakestInformation;
            ReciprocalCondition = reciprocalCondition;
            this.weakestDirection = weakestDirection;
            ConstantColumn = constantColumn;
            WeightSum = weightSum;
        }

        /// <summary>True when the weakest direction carries at least the monitor's threshold of information and no regressor is constant.</summary>
        public bool IsSufficient { get; }

        /// <summary>
        /// λ_min of the recent centered information in reference units, D⁻¹M_xxD⁻¹ (M_xx the forgetting-weighted co-moment of the regressors,
        /// D the reference scales): the number of samples of reference-sized, independent excitation the weakest direction has received
        /// within the memory. 0 when a regressor is constant.
        /// </summary>
        public double WeakestInformation { get; }

        /// <summary>Reciprocal condition s_min/s_max of the recent design in reference units (1 = perfectly balanced, 0 = a direction unexcited).</summary>
        public double ReciprocalCondition { get; }

        /// <summary>The unit direction (in reference units, one entry per regressor) that is least excited; large entries name the regressors involved.</summary>
        public IReadOnlyList<double> WeakestDirection => weakestDirection;

        /// <summary>Index of a regressor that has been constant over the memory (zero spread at rounding level), or -1.</summary>
        public int ConstantColumn { get; }

        /// <summary>The monitor's weight sum W (about 1/(1 − β) once the memory is full).</summary>
        public double WeightSum { get; }
    }

    /// <summary>
    /// Watches whether the recent regressors still excite every parameter direction — the situation in which a monitoring system should stop
    /// trusting a recursive estimate (MATH.md §2.3: without excitation in a direction, forgetting winds the covariance up and the estimate of
    /// that direction is noise). Keeps a forgetting-weighted square-root factor of [1, x] (Givens rotations, O(p²) per update, no allocation)
    /// and on demand computes the smallest eigenvalue of the recent centered information in reference units.
    /// </summary>
    /// <remarks>
    /// <para><b>Threshold.</b> <see cref="ExcitationStatus.IsSufficient"/> requires λ_min(D⁻¹M_xxD⁻¹) ≥ <c>minimumInformation</c>: the weakest
    /// direction must have received at least that many samples' worth of reference-sized excitation within the memory of about 1/(1 − β)
    /// samples. The default, 10, is a rule of thumb (common practice: ten independent samples per direction before trusting an estimate of it);
    /// it cannot exceed about 1/(1 − β) for any signal, so choose β and the threshold together.</para>
    /// <para><b>Reference scales.</b> Give the spread each regressor has in normal operation (for example its standard deviation over a
    /// commissioning run). Without them the monitor uses the recent spread itself, which makes it blind to a loss of amplitude (an input
    /// reduced to sensor noise still looks "excited" once divided by its own small spread); it then only detects constant regressors and
    /// collinearity.</para>
    /// <para><b>Cost.</b> <see cref="Update"/> O(p²), no allocation; <see cref="Evaluate"/> O(p³) and allocates O(p²) (an SVD): evaluate every
    /// K samples, not every step. Not thread-safe.</para>
    /// </remarks>
    public sealed class ExcitationMonitor
    {
        /// <summary>Default <c>minimumInformation</c>: 10 samples' worth of reference-sized excitation in the weakest direction (rule of thumb).</summary>
        public const double DefaultMinimumInformation = 10.0;

        private readonly SquareRootEstimator factor;
        private readonly double[]? reference;
        private readonly double minimumInformation;
        private readonly int p;

        /// <summary>Creates a monitor.</summary>
        /// <param name="parameterCount">Number of regressors p ≥ 1.</param>
        /// <param name="forgettingFactor">β in (0, 1]; the memory is about 1/(1 − β) samples (1: everything since construction). Use the estimator's β or a shorter memory.</param>
        /// <param name="minimumInformation">Threshold on the weakest direction's information, &gt; 0 (see remarks).</param>
        /// <param name="referenceScales">Normal-operation spread of each regressor (length p, each &gt; 0), or empty to use the recent spread.</param>
        /// <exception cref="ArgumentException">Any argument out of range, named with its value.</exception>
        public ExcitationMonitor(int parameterCount, double forgettingFactor, double minimumInformation = DefaultMinimumInformation, ReadOnlySpan<double> referenceScales = default)
        {
            if (parameterCount < 1)
            {
                Guard.ThrowOutOfRange(nameof(parameterCount), parameterCount, "must be at least 1");
            }

            Guard.ForgettingFactor(forgettingFactor, nameof(forgettingFactor));
            if (!(minimumInformation > 0.0) || double.IsInfinity(minimumInformation))
            {
                Guard.ThrowOutOfRange(nameof(minimumInformation), minimumInformation, "must be a finite number > 0");
            }

            if (referenceScales.Length != 0)
            {
                Guard.Length(referenceScales.Length, parameterCount, nameof(referenceScales));
                for (int j = 0; j < referenceScales.Length; j++)
                {
                    if (!(referenceScales[j] > 0.0) || double.IsInfinity(referenceScales[j]))
                    {
                        Guard.ThrowArgument(nameof(referenceScales), FormattableString.Invariant($"referenceScales[{j}] = {referenceScales[j]:R} must be a finite number > 0."));
                    }
                }

                reference = referenceScales.ToArray();
            }

            p = parameterCount;
            this.minimumInformation = minimumInformation;
            factor = new SquareRootEstimator(parameterCount, new SquareRootSettings { ForgettingFactor = forgettingFactor, FitIntercept = true, Standardize = false });
        }

        /// <summary>Number of updates so far.</summary>
        public long SampleCount => factor.SampleCount;

        /// <summary>Adds the regressors of one sample. O(p²), no allocation.</summary>
        /// <param name="x">Regressor vector of length p, finite.</param>
        /// <param name="weight">Sample weight ≥ 0 (use the estimator's weight).</param>
        /// <exception cref="ArgumentException">Wrong length, non-finite entry or bad weight (nothing changes).</exception>
        public void Update(ReadOnlySpan<double> x, double weight = 1.0) => factor.Update(x, 0.0, weight);

        /// <summary>Evaluates the recent excitation. O(p³); allocates O(p²).</summary>
        /// <returns>The status; insufficient (information 0) before any weighted sample.</returns>
        public ExcitationStatus Evaluate()
        {
            int c = factor.FactorOrder;
            var t = new double[c * c];
            factor.CopyFactorTo(t);
            var direction = new double[p];
            double w = factor.WeightSum;
            if (!(t[0] > 0.0))
            {
                return new ExcitationStatus(false, 0.0, 0.0, direction, -1, w);
            }

            var spread = new double[p];
            factor.CopyScalesTo(spread);
            for (int j = 0; j < p; j++)
            {
                double mean = t[j + 1] / t[0];
                if (spread[j] <= 1e3 * 2.220446049250313e-16 * Math.Sqrt((mean * mean) + (spread[j] * spread[j])))
                {
                    direction[j] = 1.0;
                    return new ExcitationStatus(false, 0.0, 0.0, direction, j, w);
                }
            }

            // R₂₂ᵀR₂₂ = M_xx (MATH.md §4.3); B = R₂₂·D⁻¹ has BᵀB = D⁻¹M_xxD⁻¹.
            var b = Matrix<double>.Build.Dense(p, p, (i, j) => j >= i ? t[((i + 1) * c) + j + 1] / (reference is null ? spread[j] : reference[j]) : 0.0);
            var svd = b.Svd(true);
            double smax = svd.S[0];
            double smin = svd.S[p - 1];
            for (int j = 0; j < p; j++)
            {
                direction[j] = svd.VT[p - 1, j];
            }

            double info = smin * smin;
            return new ExcitationStatus(info >= minimumInformation, info, smax > 0 ? smin / smax : 0.0, direction, -1, w);
        }
    }
}
