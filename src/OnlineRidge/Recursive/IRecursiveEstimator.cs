using System;

namespace OnlineRidge
{
    /// <summary>
    /// The shape every recursive (sample-at-a-time) estimator of the library shares: fixed regressor length p, an O(p²) update that
    /// allocates nothing, and reads of the current parameters and predictions.
    /// </summary>
    /// <remarks>
    /// Implementations are not thread-safe: one thread updates; readers on other threads must synchronize. A call that throws leaves the
    /// estimator exactly as it was; a sample skipped under <see cref="InvalidSamplePolicy.SkipAndCount"/> changes only
    /// <see cref="SkippedSampleCount"/>.
    /// </remarks>
    public interface IRecursiveEstimator
    {
        /// <summary>Number of regressors p (length of every x), fixed at construction.</summary>
        int ParameterCount { get; }

        /// <summary>Number of updates accepted so far (including zero-weight updates, which only forget).</summary>
        long SampleCount { get; }

        /// <summary>
        /// Number of samples skipped as unusable under <see cref="InvalidSamplePolicy.SkipAndCount"/> (always 0 under
        /// <see cref="InvalidSamplePolicy.Throw"/>); skipped samples are not in <see cref="SampleCount"/>. O(1).
        /// </summary>
        long SkippedSampleCount { get; }

        /// <summary>Adds one sample (x, y) with weight 1.</summary>
        /// <param name="x">Regressor vector of length <see cref="ParameterCount"/>.</param>
        /// <param name="y">Output.</param>
        void Update(ReadOnlySpan<double> x, double y);

        /// <summary>Adds one sample (x, y) with precision weight <paramref name="weight"/> ≥ 0; weight 0 only applies forgetting.</summary>
        /// <param name="x">Regressor vector of length <see cref="ParameterCount"/>.</param>
        /// <param name="y">Output.</param>
        /// <param name="weight">Sample weight, finite and ≥ 0.</param>
        void Update(ReadOnlySpan<double> x, double y, double weight);

        /// <summary>Current prediction b₀ + xᵀθ for a new regressor vector.</summary>
        /// <param name="x">Regressor vector of length <see cref="ParameterCount"/>.</param>
        /// <returns>The prediction.</returns>
        double Predict(ReadOnlySpan<double> x);

        /// <summary>Writes the current coefficients θ (raw units) into <paramref name="destination"/> (length ≥ p).</summary>
        /// <param name="destination">Caller buffer.</param>
        void CopyParametersTo(Span<double> destination);

        /// <summary>Current intercept b₀ (0 when the estimator has none).</summary>
        double Intercept { get; }
    }
}
