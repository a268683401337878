using System;
using System.Collections.Generic;
using OnlineRidge.Internal;

namespace OnlineRidge
{
    /// <summary>
    /// Exact parameter uncertainty for a running <see cref="SquareRootEstimator"/> under forgetting (MATH.md §6): a second square-root factor
    /// of the same regressors forgotten with β̃² gives G₂, so that the covariance σ²·H⁻¹G₂H⁻¹, the forgetting-aware residual degrees of
    /// freedom ν = N − 2tr(H⁻¹G₂) + tr(H⁻¹GH⁻¹G₂) and σ̂² = RSS/ν are available at any time without the data.
    /// </summary>
    /// <remarks>
    /// <para>Feed it the regressors and weights of every sample given to the estimator (<see cref="Update"/>), then call
    /// <see cref="Evaluate"/>: it returns a <see cref="RidgeFit"/> with the estimator's current coefficients, standard errors, confidence and
    /// prediction intervals (Student t with ν), exactly as <see cref="BatchRidge"/> with <see cref="CovarianceModel.Sandwich"/> would report
    /// for the same data with forgetting factor β̃ = fl(√β)². The common shortcut σ̂²·H⁻¹ would overstate the variance by about 1 + β
    /// (MATH.md §6.3).</para>
    /// <para>Cost: <see cref="Update"/> about 2(p + 2)² multiply-adds, no allocation; <see cref="Evaluate"/> O(p³) and allocates O(p²) (the
    /// result). Accuracy: computed from triangular factors (H = R_HᵀR_H from an orthogonal factorization of the data and penalty rows, C = KᵀK
    /// with K = R₂R_H⁻¹R_H⁻ᵀ), so it loses digits like cond(R), not cond(H). Not thread-safe.</para>
    /// </remarks>
    public sealed class StreamingUncertainty
    {
        private readonly SquareRootEstimator squared;
        private readonly SquareRootSettings settings;
        private readonly int p;

        /// <summary>Creates the tracker for an estimator built with <paramref name="settings"/>.</summary>
        /// <param name="parameterCount">Number of regressors p ≥ 1, as the estimator's.</param>
        /// <param name="settings">The estimator's settings (forgetting factor and intercept must match); null for the defaults.</param>
        /// <exception cref="ArgumentOutOfRangeException">Bad parameter count.</exception>
        public StreamingUncertainty(int parameterCount, SquareRootSettings? settings = null)
        {
            this.settings = settings ?? SquareRootSettings.Default;
            p = parameterCount;
            double q = Math.Sqrt(this.settings.ForgettingFactor);
            double effective = q * q;
            squared = new SquareRootEstimator(parameterCount, new SquareRootSettings
            {
                ForgettingFactor = effective * effective,
                FitIntercept = this.settings.FitIntercept,
                Standardize = false,
            });
        }

        /// <summary>Number of samples fed.</summary>
        public long SampleCount => squared.SampleCount;

        /// <summary>Adds the regressors and weight of one sample (the same as given to the estimator). O(p²), no allocation.</summary>
        /// <param name="x">Regressor vector of length p.</param>
        /// <param name="weight">Sample weight ≥ 0.</param>
        /// <exception cref="ArgumentException">Wrong length, non-finite entry or bad weight (nothing changes).</exception>
        public void Update(ReadOnlySpan<double> x, double weight = 1.0) => squared.Update(x, 0.0, weight);

        /// <summary>
        /// The estimator's current solution with its exact uncertainty (order of <see cref="RidgeFit.CopyCovarianceTo"/>: θ₁..θ_p, then b₀).
        /// <see cref="RidgeFit.SolverUsed"/> is <see cref="RidgeSolver.Qr"/> (orthogonal factors throughout).
        /// </summary>
        /// <param name="estimator">The estimator fed the same samples, with the same parameter count, forgetting factor and intercept setting.</param>
        /// <returns>The fit.</returns>
        /// <exception cref="ArgumentNullException">The estimator is null.</exception>
        /// <exception cref="ArgumentException">The estimator does not match this tracker (count, settings or number of samples).</exception>
        /// <exception cref="RidgeBreakdownException">The estimator's solve broke down, or the penalized system is singular.</exception>
        public RidgeFit Evaluate(SquareRootEstimator estimator)
        {
            Guard.NotNull(estimator, nameof(estimator));
            var es = estimator.Settings;
            if (estimator.ParameterCount != p || es.FitIntercept != settings.FitIntercept || !es.ForgettingFactor.Equals(settings.ForgettingFactor) || estimator.SampleCount != squared.SampleCount)
            {
                Guard.ThrowArgument(nameof(estimator), FormattableString.Invariant(
                    $"the estimator (p = {estimator.ParameterCount}, β = {es.ForgettingFactor:R}, intercept {es.FitIntercept}, {estimator.SampleCount} samples) does not match this tracker (p = {p}, β = {settings.ForgettingFactor:R}, intercept {settings.FitIntercept}, {squared.SampleCount} samples)"));
            }

            var theta = new double[p];
            estimator.CopyParametersTo(theta);
            double intercept = estimator.Intercept;
            double rss = estimator.ResidualSumOfSquares;
            double objective = estimator.ObjectiveValue;
            double cond = estimator.ConditionEstimate;

            int off = es.FitIntercept ? 1 : 0;
            int c = estimator.FactorOrder;
            var t = new double[c * c];
            var t2 = new double[c * c];
            estimator.CopyFactorTo(t);
            squared.CopyFactorTo(t2);

            // Coordinates: the non-excluded regressors, then the intercept (output order θ, b₀).
            var cols = new List<int>(p);
            var excluded = new List<int>();
            for (int j = 0; j < p; j++)
            {
                (estimator.IsExcluded(j) ? excluded : cols).Add(j);
            }

            int q = cols.Count;
            int m = q + off;
            int FactorIndex(int k) => k < q ? cols[k] + off : 0; // column of the factor for coordinate k

            double mu = es.Penalty;
            if (es.DecayingPriorWeight > 0.0)
            {
                double qq = Math.Sqrt(es.ForgettingFactor);
                mu += es.DecayingPriorWeight * Math.Pow(qq, 2.0 * estimator.SampleCount);
            }

            var scales = new double[p];
            estimator.CopyScalesTo(scales);

            // R (m rows of the data factor restricted to the coordinates) and R₂ likewise; then R_H from [R; √μ·D].
            var lead = new double[c * m];
            var lead2 = new double[c * m];
            for (int i = 0; i < c - 1; i++)
            {
                for (int k = 0; k < m; k++)
                {
                    lead[(i * m) + k] = t[(i * c) + FactorIndex(k)];
                    lead2[(i * m) + k] = t2[(i * c) + FactorIndex(k)];
                }
            }

            var acc = new HouseholderAccumulator(m, c - 1 + q);
            var row = new double[m];
            for (int i = 0; i < c - 1; i++)
            {
                Array.Copy(lead, i * m, row, 0, m);
                acc.AddRow(row);
            }

            if (mu > 0.0)
            {
                for (int k = 0; k < q; k++)
                {
                    Array.Clear(row, 0, m);
                    row[k] = Math.Sqrt(mu) * (es.Standardize ? scales[cols[k]] : 1.0);
                    acc.AddRow(row);
                }
            }

            acc.Flush();
            double[] rh = acc.Factor;
            var rhInv = new double[m * m];
            if (!Triangular.InvertUpper(rh, m, m, rhInv))
            {
                Guard.ThrowBreakdown(new BreakdownInfo(BreakdownKind.RankDeficient, -1, 0.0, double.PositiveInfinity));
            }

            // A = R₂·R_H⁻¹ (c−1 rows × m), K = A·R_H⁻ᵀ, C = KᵀK, tr(H⁻¹G₂) = ‖A‖², tr(H⁻¹GH⁻¹G₂) = ‖R·Kᵀ‖², tr(H⁻¹G) = ‖R·R_H⁻¹‖².
            int rows = c - 1;
            double[] a = MultiplyByUpper(lead2, rows, m, rhInv);
            double[] k2 = MultiplyByUpperTransposed(a, rows, m, rhInv);
            double[] b = MultiplyByUpper(lead, rows, m, rhInv);
            double tr1 = FrobeniusSquared(a);
            double df = FrobeniusSquared(b);
            double tr2 = 0.0;
            for (int i = 0; i < rows; i++)
            {
                for (int r = 0; r < rows; r++)
                {
                    double s = 0.0;
                    for (int k = 0; k < m; k++)
                    {
                        s += lead[(i * m) + k] * k2[(r * m) + k];
                    }

                    tr2 += s * s;
                }
            }

            var cov = new double[(p + off) * (p + off)];
            int Out(int k) => k < q ? cols[k] : p;
            for (int u = 0; u < m; u++)
            {
                for (int v = 0; v < m; v++)
                {
                    double s = 0.0;
                    for (int r = 0; r < rows; r++)
                    {
                        s += k2[(r * m) + u] * k2[(r * m) + v];
                    }

                    cov[(Out(u) * (p + off)) + Out(v)] = s;
                }
            }

            double n = estimator.DiscountedCount;
            double nu = n - (2.0 * tr1) + tr2;

            // R² from the factor: TSS = ‖y column of the data block‖² (centered with an intercept).
            double tss = 0.0;
            for (int i = off; i < c; i++)
            {
                double v = t[(i * c) + c - 1];
                tss += v * v;
            }

            double rSquared = tss > 0.0 ? 1.0 - (rss / tss) : double.NaN;
            return new RidgeFit(theta, intercept, off == 1, cov, rss, nu, rSquared, df, cond, RidgeSolver.Qr, q, excluded.ToArray(),
                (int)Math.Min(int.MaxValue, estimator.SampleCount), estimator.WeightSum, n, mu, objective);
        }

        private static double[] MultiplyByUpper(double[] left, int rows, int m, double[] upper)
        {
            var result = new double[rows * m];
            for (int i = 0; i < rows; i++)
            {
                for (int j = 0; j < m; j++)
                {
                    double s = 0.0;
                    for (int k = 0; k <= j; k++)
                    {
                        s += left[(i * m) + k] * upper[(k * m) + j];
                    }

                    result[(i * m) + j] = s;
                }
            }

            return result;
        }

        private static double[] MultiplyByUpperTransposed(double[] left, int rows, int m, double[] upper)
        {
            var result = new double[rows * m];
            for (int i = 0; i < rows; i++)
            {
                for (int j = 0; j < m; j++)
                {
                    double s = 0.0;
                    for (int k = j; k < m; k++)
                    {
                        s += left[(i * m) + k] * upper[(j * m) + k];
                    }

                    result[(i * m) + j] = s;
                }
            }

            return result;
        }

        private static double FrobeniusSquared(double[] a)
        {
            double s = 0.0;
            foreach (double v in a)
            {
                s += v * v;
            }

            return s;
        }
    }
}
