using System;
using OnlineRidge.Internal;

namespace OnlineRidge
{
    /// <summary>
    /// Covariance-form recursive least squares (MATH.md §2.1–2.2, symmetric update) for m outputs that share one regressor vector:
    /// one covariance P (and one gain) serves every output, and only the m parameter vectors are separate, so an update costs
    /// about 1.5·p² + 2·p·m multiply-adds instead of m·1.5·p². Each output's parameters equal those of a
    /// <see cref="CovarianceFormEstimator"/> fed that output alone with the same settings, up to the rounding of differently ordered dot products.
    /// </summary>
    /// <remarks>
    /// <para>Objective per output k (regime D): Σᵢ βⁿ⁻ⁱwᵢ(y_{i,k} − xᵢᵀθ_k)² + βⁿδ‖θ_k − θ₀,k‖² — the outputs are fitted independently;
    /// sharing P is valid because the regressors and weights are common. Uses <see cref="CovarianceFormSettings.ForgettingFactor"/>,
    /// <see cref="CovarianceFormSettings.PriorWeight"/> and <see cref="CovarianceFormSettings.InvalidSamples"/>; the prior is given per
    /// output in the constructor, and only the plain symmetric update without windup protection is offered (use a forgetting factor of 1, or
    /// the single-output estimator for the protecting policies).</para>
    /// <para>Accuracy and failure modes as <see cref="CovarianceFormEstimator"/> (Gram class, κ_path; breakdown leaves the state unchanged).
    /// No allocation per update or read. Not thread-safe.</para>
    /// </remarks>
    public sealed class MultiOutputCovarianceEstimator
    {
        private readonly int p;
        private readonly int m;
        private readonly double beta;
        private readonly bool skipInvalid;
        private double[] covariance;
        private double[] covarianceNext;
        private double[] theta;     // p×m row-major: theta[j*m + k]
        private double[] thetaNext;
        private readonly double[] v;
        private readonly double[] errors;

        /// <summary>Creates the estimator.</summary>
        /// <param name="parameterCount">Number of regressors p ≥ 1.</param>
        /// <param name="outputCount">Number of outputs m ≥ 1.</param>
        /// <param name="settings">Forgetting factor, prior weight δ (P₀ = I/δ), dropout policy; null for the defaults. Its Prior must be null
        /// (give <paramref name="prior"/> instead) and its windup policy None.</param>
        /// <param name="prior">Prior θ₀, p×m row-major (θ₀[j·m + k] for regressor j, output k); empty for zero.</param>
        /// <exception cref="ArgumentException">Out-of-range counts, a prior of the wrong length or non-finite, or unsupported settings.</exception>
        public MultiOutputCovarianceEstimator(int parameterCount, int outputCount, CovarianceFormSettings? settings = null, ReadOnlySpan<double> prior = default)
        {
            if (parameterCount < 1 || parameterCount > 1 << 15)
            {
                Guard.ThrowOutOfRange(nameof(parameterCount), parameterCount, "must lie in [1, 32768]");
            }

            if (outputCount < 1 || outputCount > 1 << 15)
            {
                Guard.ThrowOutOfRange(nameof(outputCount), outputCount, "must lie in [1, 32768]");
            }

            settings ??= CovarianceFormSettings.Default;
            if (settings.Prior is not null)
            {
                Guard.ThrowArgument(nameof(settings), "settings.Prior must be null for several outputs; pass the p×m prior as the prior argument.");
            }

            if (settings.Windup.Kind != WindupProtectionKind.None || settings.Update != CovarianceUpdate.Symmetric)
            {
                Guard.ThrowArgument(nameof(settings), "the multi-output form offers the symmetric update without windup protection only.");
            }

            if (prior.Length != 0)
            {
                Guard.Length(prior.Length, parameterCount * outputCount, nameof(prior));
                Guard.AllFinite(prior, nameof(prior));
            }

            p = parameterCount;
            m = outputCount;
            beta = settings.ForgettingFactor;
            skipInvalid = settings.InvalidSamples == InvalidSamplePolicy.SkipAndCount;
            int packed = RecursiveKernels.PackedLength(p);
            covariance = new double[packed];
            covarianceNext = new double[packed];
            theta = new double[p * m];
            thetaNext = new double[p * m];
            v = new double[p];
            errors = new double[m];
            prior.CopyTo(theta);
            double p0 = 1.0 / settings.PriorWeight;
            if (double.IsInfinity(p0))
            {
                Guard.ThrowArgument(nameof(settings), "settings.PriorWeight is so small that its reciprocal overflows.");
            }

            for (int i = 0; i < p; i++)
            {
                covariance[RecursiveKernels.RowOffset(i, p)] = p0;
            }
        }

        /// <summary>Number of regressors p.</summary>
        public int ParameterCount => p;

        /// <summary>Number of outputs m.</summary>
        public int OutputCount => m;

        /// <summary>Number of updates accepted (zero-weight ones included).</summary>
        public long SampleCount { get; private set; }

        /// <summary>Number of samples skipped under <see cref="InvalidSamplePolicy.SkipAndCount"/>.</summary>
        public long SkippedSampleCount { get; private set; }

        /// <summary>Adds one sample: regressors x (length p), outputs y (length m), weight w ≥ 0. O(1.5p² + 2pm), no allocation.</summary>
        /// <param name="x">Regressor vector.</param>
        /// <param name="y">Output vector.</param>
        /// <param name="weight">Precision weight; 0 only forgets.</param>
        /// <exception cref="ArgumentException">Wrong lengths, non-finite values or a bad weight (unless skipped by policy); nothing changes.</exception>
        /// <exception cref="RidgeBreakdownException">Loss of positive definiteness or overflow; nothing changes.</exception>
        public void Update(ReadOnlySpan<double> x, ReadOnlySpan<double> y, double weight = 1.0)
        {
            if (!TryUpdate(x, y, weight, out BreakdownInfo breakdown))
            {
                Guard.ThrowBreakdown(breakdown);
            }
        }

        /// <summary>As <see cref="Update"/>, but reports a data-dependent breakdown by returning false (state unchanged).</summary>
        /// <param name="x">Regressor vector.</param>
        /// <param name="y">Output vector.</param>
        /// <param name="weight">Precision weight.</param>
        /// <param name="breakdown">What broke down, or <see cref="BreakdownInfo.None"/>.</param>
        /// <returns>True when the sample was added or skipped.</returns>
        /// <exception cref="ArgumentException">Caller mistakes, as for <see cref="Update"/>.</exception>
        public bool TryUpdate(ReadOnlySpan<double> x, ReadOnlySpan<double> y, double weight, out BreakdownInfo breakdown)
        {
            Guard.Length(x.Length, p, nameof(x));
            Guard.Length(y.Length, m, nameof(y));
            if (skipInvalid && !Usable(x, y, weight))
            {
                SkippedSampleCount++;
                breakdown = BreakdownInfo.None;
                return true;
            }

            Guard.AllFinite(x, nameof(x));
            Guard.AllFinite(y, nameof(y));
            Guard.Weight(weight, nameof(weight));

            // A-priori errors e_k = y_k − xᵀθ_k.
            for (int k = 0; k < m; k++)
            {
                double dot = 0.0;
                for (int j = 0; j < p; j++)
                {
                    dot += x[j] * theta[(j * m) + k];
                }

                double e = y[k] - dot;
                if (!Guard.IsFinite(e))
                {
                    breakdown = new BreakdownInfo(BreakdownKind.NonFinite, k, e, double.NaN);
                    return false;
                }

                errors[k] = e;
            }

            int code;
            int failIndex;
            double failValue;
            if (weight == 0.0)
            {
                code = RecursiveKernels.CovarianceUpdate(covariance, covarianceNext, p, 0.0, v, beta, out failIndex, out failValue);
                theta.AsSpan().CopyTo(thetaNext);
            }
            else
            {
                RecursiveKernels.SymmetricMultiply(covariance, p, x, v);
                double s = CovarianceKernels.Dot(x, v);
                double d = beta + (weight * s);
                if (!(s >= 0.0) || !(d > 0.0) || double.IsInfinity(d))
                {
                    breakdown = double.IsInfinity(s) || double.IsInfinity(d) || double.IsNaN(s)
                        ? new BreakdownInfo(BreakdownKind.NonFinite, -1, s, double.NaN)
                        : new BreakdownInfo(BreakdownKind.LostDefiniteness, -1, s < 0.0 ? s : d, double.NaN);
                    return false;
                }

                double g = weight / d;
                for (int j = 0; j < p; j++)
                {
                    double kj = g * v[j];
                    int row = j * m;
                    for (int k = 0; k < m; k++)
                    {
                        thetaNext[row + k] = theta[row + k] + (kj * errors[k]);
                    }
                }

                code = RecursiveKernels.CovarianceUpdate(covariance, covarianceNext, p, g, v, beta, out failIndex, out failValue);
                if (code == 0)
                {
                    foreach (double t in thetaNext)
                    {
                        if (!Guard.IsFinite(t))
                        {
                            code = 1;
                            break;
                        }
                    }
                }
            }

            if (code != 0)
            {
                breakdown = new BreakdownInfo(code == 1 ? BreakdownKind.NonFinite : BreakdownKind.LostDefiniteness, failIndex, failValue, double.NaN);
                return false;
            }

            (covariance, covarianceNext) = (covarianceNext, covariance);
            (theta, thetaNext) = (thetaNext, theta);
            SampleCount++;
            breakdown = BreakdownInfo.None;
            return true;
        }

        /// <summary>Copies the parameters of output <paramref name="output"/> (length p) into <paramref name="destination"/>. O(p), no allocation.</summary>
        /// <param name="output">Output index in [0, m).</param>
        /// <param name="destination">Buffer of length ≥ p.</param>
        /// <exception cref="ArgumentException">Index out of range or buffer too short.</exception>
        public void CopyParametersTo(int output, Span<double> destination)
        {
            if ((uint)output >= (uint)m)
            {
                Guard.ThrowOutOfRange(nameof(output), output, "output index out of range");
            }

            if (destination.Length < p)
            {
                Guard.ThrowLength(nameof(destination), destination.Length, p);
            }

            for (int j = 0; j < p; j++)
            {
                destination[j] = theta[(j * m) + output];
            }
        }

        /// <summary>Predictions xᵀθ_k of every output into <paramref name="destination"/> (length ≥ m). O(pm), no allocation.</summary>
        /// <param name="x">Regressor vector of length p.</param>
        /// <param name="destination">Buffer of length ≥ m.</param>
        /// <exception cref="ArgumentException">Wrong length, non-finite x, or buffer too short.</exception>
        public void Predict(ReadOnlySpan<double> x, Span<double> destination)
        {
            Guard.Length(x.Length, p, nameof(x));
            Guard.AllFinite(x, nameof(x));
            if (destination.Length < m)
            {
                Guard.ThrowLength(nameof(destination), destination.Length, m);
            }

            for (int k = 0; k < m; k++)
            {
                double dot = 0.0;
                for (int j = 0; j < p; j++)
                {
                    dot += x[j] * theta[(j * m) + k];
                }

                destination[k] = dot;
            }
        }

        /// <summary>Copies the shared covariance P (p×p, row-major, symmetric) into <paramref name="destination"/>. O(p²), no allocation.</summary>
        /// <param name="destination">Buffer of length ≥ p².</param>
        /// <exception cref="ArgumentException">Buffer too short.</exception>
        public void CopyCovarianceTo(Span<double> destination)
        {
            if (destination.Length < p * p)
            {
                Guard.ThrowLength(nameof(destination), destination.Length, p * p);
            }

            RecursiveKernels.Unpack(covariance, p, destination);
        }

        private static bool Usable(ReadOnlySpan<double> x, ReadOnlySpan<double> y, double w)
        {
            if (!(w >= 0.0) || double.IsInfinity(w))
            {
                return false;
            }

            foreach (double e in x)
            {
                if (!Guard.IsFinite(e))
                {
                    return false;
                }
            }

            foreach (double e in y)
            {
                if (!Guard.IsFinite(e))
                {
                    return false;
                }
            }

            return true;
        }
    }
}
