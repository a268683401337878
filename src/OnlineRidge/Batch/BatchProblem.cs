using System;
using System.Collections.Generic;
using System.Globalization;
using OnlineRidge.Internal;

namespace OnlineRidge
{
    /// <summary>
    /// A validated batch problem: effective weights aᵢ = βⁿ⁻ⁱwᵢ, weighted means, column scales D, the active (non-excluded) columns and the
    /// prior in solver coordinates γ₀ = D·θ₀. Solver coordinates: zᵢⱼ = (xᵢⱼ − mⱼ)/Dⱼ over active columns, output yᵢ − m_y.
    /// </summary>
    internal sealed class BatchProblem : ISolverCoordinates
    {
        private BatchProblem(int n, int p)
        {
            Rows = n;
            Columns = p;
            Weights = new double[n];
            MeanX = new double[p];
            Scale = new double[p];
        }

        public int Rows { get; }

        public int Columns { get; }

        /// <summary>Effective weights aᵢ.</summary>
        public double[] Weights { get; }

        public double[] MeanX { get; }

        public double MeanY { get; private set; }

        /// <summary>Solver scale Sⱼ: the standardization scale Dⱼ, or an internal equilibration when the penalty is 0, or 1.</summary>
        public double[] Scale { get; }

        public int[] Active { get; private set; } = Array.Empty<int>();

        public int[] Excluded { get; private set; } = Array.Empty<int>();

        /// <summary>γ₀ over active columns.</summary>
        public double[] PriorScaled { get; private set; } = Array.Empty<double>();

        public double[] PriorRaw { get; private set; } = Array.Empty<double>();

        public bool HasPrior { get; private set; }

        public double WeightSum { get; private set; }

        /// <summary>N = Σ βⁿ⁻ⁱ over rows with wᵢ > 0.</summary>
        public double DiscountedCount { get; private set; }

        public int PositiveRows { get; private set; }

        public double Penalty { get; private set; }

        public double Beta { get; private set; }

        public bool Intercept { get; private set; }

        /// <summary>True when the solver scale is an internal equilibration (zero penalty, no standardization), not part of the objective.</summary>
        public bool Equilibrated { get; private set; }

        /// <summary>Number of active columns q.</summary>
        public int Q => Active.Length;

        public static BatchProblem Create(MatrixView x, ReadOnlySpan<double> y, ReadOnlySpan<double> weights, RidgeSettings settings)
        {
            int n = x.Rows;
            int p = x.Columns;
            if (n == 0)
            {
                Guard.ThrowArgument(nameof(x), "x has 0 rows; at least one sample is needed.");
            }

            Guard.Length(y.Length, n, nameof(y));
            if (weights.Length != 0)
            {
                Guard.Length(weights.Length, n, nameof(weights));
            }

            ReadOnlySpan<double> all = x.RowMajor;
            for (int k = 0; k < all.Length; k++)
            {
                if (!Guard.IsFinite(all[k]))
                {
                    Guard.ThrowArgument(nameof(x), string.Format(CultureInfo.InvariantCulture, "x[{0}, {1}] = {2:R} is not a finite number.", k / p, k % p, all[k]));
                }
            }

            Guard.AllFinite(y, nameof(y));
            for (int i = 0; i < weights.Length; i++)
            {
                if (!(weights[i] >= 0.0) || double.IsInfinity(weights[i]))
                {
                    Guard.ThrowArgument(nameof(weights), string.Format(CultureInfo.InvariantCulture, "weights[{0}] = {1:R} is invalid: a sample weight must be a finite number >= 0.", i, weights[i]));
                }
            }

            IReadOnlyList<double>? prior = settings.Prior;
            if (prior is not null && prior.Count != p)
            {
                Guard.ThrowArgument(nameof(settings), string.Format(CultureInfo.InvariantCulture, "settings.Prior has length {0}; expected {1} (one per regressor column).", prior.Count, p));
            }

            var pr = new BatchProblem(n, p)
            {
                Penalty = settings.Penalty,
                Beta = settings.ForgettingFactor,
                Intercept = settings.FitIntercept,
                HasPrior = prior is not null,
            };

            // Effective weights a_i = w_i β^(n-1-i); Math.Pow per row keeps every weight correctly rounded (no drift of a running product).
            double beta = settings.ForgettingFactor;
            double wsum = 0.0;
            double discounted = 0.0;
            int positive = 0;
            for (int i = 0; i < n; i++)
            {
                double decay = beta == 1.0 ? 1.0 : Math.Pow(beta, n - 1 - i);
                double w = weights.Length == 0 ? 1.0 : weights[i];
                double a = w * decay;
                pr.Weights[i] = a;
                if (a > 0.0)
                {
                    wsum += a;
                    discounted += decay;
                    positive++;
                }
            }

            if (!(wsum > 0.0))
            {
                Guard.ThrowArgument(nameof(weights), string.Format(CultureInfo.InvariantCulture, "the effective sample weights wᵢ·βⁿ⁻¹⁻ⁱ sum to {0:R} (every one is zero); at least one sample must carry weight.", wsum));
            }

            pr.WeightSum = wsum;
            pr.DiscountedCount = discounted;
            pr.PositiveRows = positive;

            // Weighted means, with one correction pass (two-pass accuracy).
            double[] a0 = pr.Weights;
            if (settings.FitIntercept)
            {
                ColumnMoments.WeightedMeans(all, n, p, a0, wsum, pr.MeanX);

                double my = 0.0;
                for (int i = 0; i < n; i++)
                {
                    my += a0[i] * y[i];
                }

                my /= wsum;
                double cy = 0.0;
                for (int i = 0; i < n; i++)
                {
                    cy += a0[i] * (y[i] - my);
                }

                pr.MeanY = my + (cy / wsum);
            }

            // Column scales. With standardization the scale D defines the penalty metric (λ‖D(θ − θ₀)‖²). Without it the penalty acts on raw
            // coefficients, so the solver works in raw units (scale 1) when λ > 0; when λ = 0 the penalty is absent and the columns are
            // equilibrated internally (same scale rule), which leaves a full-rank solution unchanged and makes the rank test scale-invariant.
            var active = new List<int>(p);
            var excluded = new List<int>();
            const double ConstantLevel = 1e3 * 2.220446049250313e-16;
            bool scaled = settings.Standardize || settings.Penalty == 0.0;
            pr.Equilibrated = scaled && !settings.Standardize;
            var spreads = new double[scaled ? p : 0];
            if (scaled)
            {
                ColumnMoments.WeightedSpreads(all, n, p, a0, pr.MeanX, wsum, spreads);
            }

            for (int j = 0; j < p; j++)
            {
                double scale = 1.0;
                bool exclude = false;
                if (scaled)
                {
                    double m = pr.MeanX[j];
                    double spread = spreads[j];
                    bool constant = settings.FitIntercept
                        ? spread <= ConstantLevel * Math.Sqrt((m * m) + (spread * spread))
                        : spread == 0.0;
                    if (settings.Standardize)
                    {
                        exclude = constant;
                        scale = spread;
                    }
                    else
                    {
                        scale = constant ? 1.0 : spread;
                    }
                }

                if (exclude)
                {
                    excluded.Add(j);
                    pr.Scale[j] = 1.0;
                }
                else
                {
                    active.Add(j);
                    pr.Scale[j] = scale;
                }
            }

            pr.Active = active.ToArray();
            pr.Excluded = excluded.ToArray();
            pr.PriorRaw = new double[p];
            pr.PriorScaled = new double[pr.Active.Length];
            if (prior is not null)
            {
                for (int j = 0; j < p; j++)
                {
                    pr.PriorRaw[j] = prior[j];
                }

                for (int k = 0; k < pr.Active.Length; k++)
                {
                    int j = pr.Active[k];
                    pr.PriorScaled[k] = pr.Scale[j] * prior[j];
                }
            }

            int needed = pr.Active.Length + (settings.FitIntercept ? 1 : 0);
            if (settings.Penalty == 0.0 && settings.Solver != RidgeSolver.Svd && positive < needed)
            {
                Guard.ThrowArgument(nameof(x), string.Format(CultureInfo.InvariantCulture,
                    "{0} samples of positive weight cannot determine {1} parameters without a penalty; add samples, set a penalty > 0, or use the SVD solver for the minimum-norm solution.",
                    positive, needed));
            }

            return pr;
        }

        /// <summary>Writes row i in solver coordinates, multiplied by √aᵢ, into <paramref name="row"/> (length q + 1; last entry the output).</summary>
        public void WeightedRow(MatrixView x, ReadOnlySpan<double> y, int i, Span<double> row)
        {
            double s = Math.Sqrt(Weights[i]);
            ReadOnlySpan<double> xi = x.Row(i);
            int q = Active.Length;
            for (int k = 0; k < q; k++)
            {
                int j = Active[k];
                row[k] = s * ((xi[j] - MeanX[j]) / Scale[j]);
            }

            row[q] = s * (y[i] - MeanY);
        }
    }
}
