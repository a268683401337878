using System;
using System.Collections.Generic;
using MathNet.Numerics.LinearAlgebra;
using OnlineRidge.Internal;

namespace OnlineRidge
{
    /// <summary>
    /// The ridge solution for a whole grid of penalties from one decomposition: coefficients, residual sum of squares, effective degrees
    /// of freedom, generalized cross-validation and (batch) exact leave-one-out error at every grid point (MATH.md §1.4, §6.4, §7).
    /// </summary>
    /// <remarks>
    /// <para>Computed from the SVD of the triangular factor R of the weighted, centered (and, with standardization, scaled) design:
    /// R = U S Vᵀ has the singular values of the design itself (Chan 1982), c = Uᵀ(z − Rγ₀) and ρ² (the part of the output outside the
    /// column space) give, for every λ, γ(λ) = γ₀ + V diag(sⱼ/(sⱼ² + λ)) c, RSS(λ) = Σ (λ/(sⱼ² + λ))² cⱼ² + ρ² and
    /// df(λ) = Σ sⱼ²/(sⱼ² + λ) (+1 for the intercept). With λ = 0, singular values at or below the rank tolerance are dropped
    /// (minimum-norm solution), exactly as the SVD solver of <see cref="BatchRidge"/> does.</para>
    /// <para>Cost: one pass over the data for the factor (≈ 2·n·p²), O(p³) for the SVD, then O(p²) per grid point for the coefficients and
    /// O(p) for RSS, df and GCV; leave-one-out adds one more pass, O(n·p²) once plus O(n·p) per grid point, and no storage of the data.
    /// Memory O(L·p) for L grid points.</para>
    /// <para>Accuracy: orthogonal class (errors of order ε·κ, not ε·κ²); no refinement steps are applied on the path, so on very
    /// ill-conditioned data a single <see cref="BatchRidge.Fit(MatrixView, ReadOnlySpan{double}, RidgeSettings?, ReadOnlySpan{double})"/>
    /// at the chosen penalty can be a few digits more accurate.</para>
    /// <para>Failures: caller mistakes throw <see cref="ArgumentException"/> (as for BatchRidge, and for a grid value that is negative or not
    /// finite); the penalty in the given settings is ignored (the grid supplies it). Immutable and thread-safe once computed.</para>
    /// </remarks>
    public sealed class RegularizationPath
    {
        private readonly double[] penalties;
        private readonly double[][] coefficients;
        private readonly double[] intercepts;
        private readonly double[] rss;
        private readonly double[] df;
        private readonly double[] gcv;
        private readonly double[]? loo;
        private readonly double[] singularValues;

        private RegularizationPath(double[] penalties, double[][] coefficients, double[] intercepts, double[] rss, double[] df, double[] gcv, double[]? loo, double[] singularValues, double discountedCount)
        {
            this.penalties = penalties;
            this.coefficients = coefficients;
            this.intercepts = intercepts;
            this.rss = rss;
            this.df = df;
            this.gcv = gcv;
            this.loo = loo;
            this.singularValues = singularValues;
            DiscountedCount = discountedCount;
        }

        /// <summary>Number of default grid points (MATH.md §7.3).</summary>
        public const int DefaultGridSize = 50;

        /// <summary>The penalties λ of the grid, ascending.</summary>
        public IReadOnlyList<double> Penalties => penalties;

        /// <summary>Singular values s₁ ≥ … ≥ s_q of the weighted, centered design in the penalty's coordinates (standardized when the settings standardize).</summary>
        public IReadOnlyList<double> SingularValues => singularValues;

        /// <summary>Weighted residual sum of squares at each grid point.</summary>
        public IReadOnlyList<double> ResidualSumOfSquares => rss;

        /// <summary>Effective degrees of freedom df(λ) at each grid point, including 1 for the intercept.</summary>
        public IReadOnlyList<double> EffectiveDegreesOfFreedom => df;

        /// <summary>GCV(λ) = N·RSS/(N − df)² at each grid point (+∞ where df ≥ N), N the discounted count (MATH.md §7.1).</summary>
        public IReadOnlyList<double> GeneralizedCrossValidation => gcv;

        /// <summary>Exact leave-one-out mean squared error PRESS/N at each grid point, or null when not requested (MATH.md §7.2).</summary>
        public IReadOnlyList<double>? LeaveOneOut => loo;

        /// <summary>Intercepts b₀(λ) in raw units (0 without intercept).</summary>
        public IReadOnlyList<double> Intercepts => intercepts;

        /// <summary>N = Σ βⁿ⁻ⁱ over samples of positive weight.</summary>
        public double DiscountedCount { get; }

        /// <summary>Number of grid points.</summary>
        public int Count => penalties.Length;

        /// <summary>Copies the raw-unit coefficients at grid point <paramref name="index"/> into <paramref name="destination"/>. O(p), no allocation.</summary>
        /// <param name="index">Grid index, 0 ≤ index &lt; <see cref="Count"/>.</param>
        /// <param name="destination">Buffer of length ≥ p.</param>
        /// <exception cref="ArgumentOutOfRangeException">Index out of range.</exception>
        /// <exception cref="ArgumentException">Buffer too short.</exception>
        public void CopyCoefficientsTo(int index, Span<double> destination)
        {
            if ((uint)index >= (uint)penalties.Length)
            {
                Guard.ThrowOutOfRange(nameof(index), index, "grid index out of range");
            }

            double[] c = coefficients[index];
            if (destination.Length < c.Length)
            {
                Guard.ThrowLength(nameof(destination), destination.Length, c.Length);
            }

            c.AsSpan().CopyTo(destination);
        }

        /// <summary>The penalty minimizing GCV over the grid (ties to the larger penalty).</summary>
        /// <returns>The choice with the whole GCV curve.</returns>
        public PenaltyChoice ChooseByGeneralizedCrossValidation() => new(PenaltyCriterion.GeneralizedCrossValidation, penalties, gcv);

        /// <summary>The penalty minimizing the exact leave-one-out error over the grid (ties to the larger penalty).</summary>
        /// <returns>The choice with the whole curve.</returns>
        /// <exception cref="InvalidOperationException">The path was computed without leave-one-out.</exception>
        public PenaltyChoice ChooseByLeaveOneOut() =>
            loo is null ? throw new InvalidOperationException("This path was computed without leave-one-out errors.") : new(PenaltyCriterion.LeaveOneOut, penalties, loo);

        /// <summary>
        /// A default grid of <paramref name="count"/> log-spaced penalties in [10⁻⁶·s₁², 10²·s₁²], s₁ the largest singular value of the
        /// weighted (standardized) design (MATH.md §7.3). Ascending. O(count).
        /// </summary>
        /// <param name="largestSingularValue">s₁ &gt; 0.</param>
        /// <param name="count">Number of points, at least 2.</param>
        /// <returns>The grid.</returns>
        /// <exception cref="ArgumentOutOfRangeException">s₁ not positive and finite, or count &lt; 2.</exception>
        public static double[] DefaultGrid(double largestSingularValue, int count = DefaultGridSize)
        {
            if (!(largestSingularValue > 0.0) || double.IsInfinity(largestSingularValue))
            {
                Guard.ThrowOutOfRange(nameof(largestSingularValue), largestSingularValue, "must be positive and finite");
            }

            if (count < 2)
            {
                Guard.ThrowOutOfRange(nameof(count), count, "must be at least 2");
            }

            double s2 = largestSingularValue * largestSingularValue;
            double lo = Math.Log10(1e-6 * s2);
            double hi = Math.Log10(1e2 * s2);
            var grid = new double[count];
            for (int k = 0; k < count; k++)
            {
                grid[k] = Math.Pow(10.0, lo + ((hi - lo) * k / (count - 1)));
            }

            return grid;
        }

        /// <summary>
        /// The path of a running square-root estimator from its state alone (MATH.md §7.3): the SVD of the scaled data block of its factor
        /// gives, for every constant penalty λ of the grid, the coefficients, RSS, df and GCV with N = the discounted count Σβ̃ⁿ⁻ⁱ (so that
        /// ancient rows of negligible weight are not counted as full rows). Leave-one-out is not available from the state (it needs past
        /// leverages), so <see cref="LeaveOneOut"/> is null. The estimator's decaying prior weight, if any, is not part of the path: grid values
        /// are the constant penalty. Cost O(p³) plus O(p²) per grid point; evaluate every K samples, not every step. The estimator is not changed.
        /// </summary>
        /// <param name="estimator">A square-root estimator with at least one weighted sample.</param>
        /// <param name="penalties">Grid of penalties λ ≥ 0; empty for <see cref="DefaultGrid"/> of its current largest singular value.</param>
        /// <returns>The path; its coefficients equal <see cref="SquareRootEstimator.SolveWithPenalty"/> at each grid point.</returns>
        /// <exception cref="ArgumentNullException">The estimator is null.</exception>
        /// <exception cref="ArgumentException">A grid value is negative or not finite.</exception>
        /// <exception cref="InvalidOperationException">The estimator has no weighted data yet.</exception>
        public static RegularizationPath FromState(SquareRootEstimator estimator, ReadOnlySpan<double> penalties = default)
        {
            Guard.NotNull(estimator, nameof(estimator));
            CheckGrid(penalties);
            var d = StatePath.Create(estimator, out FactorCoordinates co);
            return Assemble(d, co, SortedGrid(d, penalties), null);
        }

        /// <summary>Computes the path for the given data and settings (the settings' penalty is ignored).</summary>
        /// <param name="x">Regressors, one sample per row.</param>
        /// <param name="y">Outputs.</param>
        /// <param name="settings">Forgetting, prior, intercept, standardization, rank tolerance; null for the defaults.</param>
        /// <param name="weights">Sample weights; empty for unit weights.</param>
        /// <param name="penalties">Grid of penalties λ ≥ 0 (any order; stored ascending); empty for <see cref="DefaultGrid"/>.</param>
        /// <param name="leaveOneOut">Whether to compute the exact leave-one-out errors (one more pass over the data).</param>
        /// <returns>The path.</returns>
        /// <exception cref="ArgumentException">Invalid data or grid (see <see cref="BatchRidge"/>).</exception>
        public static RegularizationPath Compute(MatrixView x, ReadOnlySpan<double> y, RidgeSettings? settings = null, ReadOnlySpan<double> weights = default, ReadOnlySpan<double> penalties = default, bool leaveOneOut = true)
        {
            var s = (settings ?? RidgeSettings.Default).WithPenalty(1.0);
            CheckGrid(penalties);
            var pr = BatchProblem.Create(x, y, weights, s);
            var d = PathDecomposition.Create(pr, x, y, s);
            double[] grid = SortedGrid(d, penalties);
            return Assemble(d, pr, grid, leaveOneOut ? d.LeaveOneOut(x, y, grid) : null);
        }

        private static void CheckGrid(ReadOnlySpan<double> penalties)
        {
            for (int k = 0; k < penalties.Length; k++)
            {
                if (!(penalties[k] >= 0.0) || double.IsInfinity(penalties[k]))
                {
                    Guard.ThrowArgument(nameof(penalties), FormattableString.Invariant($"penalties[{k}] = {penalties[k]:R} is invalid: a penalty must be a finite number >= 0."));
                }
            }
        }

        private static double[] SortedGrid(PathDecomposition d, ReadOnlySpan<double> penalties)
        {
            double[] grid = penalties.Length == 0 ? DefaultGrid(d.LargestSingularValue) : penalties.ToArray();
            Array.Sort(grid);
            return grid;
        }

#pragma warning disable CA1859 // both coordinate kinds pass through here
        private static RegularizationPath Assemble(PathDecomposition d, ISolverCoordinates co, double[] grid, double[]? looValues)
#pragma warning restore CA1859
        {
            int count = grid.Length;
            int p = co.Columns;
            var coefficients = new double[count][];
            var intercepts = new double[count];
            var rss = new double[count];
            var df = new double[count];
            var gcv = new double[count];
            double n = co.DiscountedCount;
            for (int k = 0; k < count; k++)
            {
                coefficients[k] = new double[p];
                d.Evaluate(grid[k], coefficients[k], out intercepts[k], out rss[k], out df[k]);
                double denom = n - df[k];
                gcv[k] = denom > 0.0 ? n * rss[k] / (denom * denom) : double.PositiveInfinity;
            }

            return new RegularizationPath(grid, coefficients, intercepts, rss, df, gcv, looValues, d.SingularValues, n);
        }
    }

    /// <summary>Builds the solver coordinates and the path decomposition of a square-root estimator's state.</summary>
    internal static class StatePath
    {
        /// <summary>
        /// From the factor T of A^½[1, X, y] (or [X, y]): means m = T₀,₁..ₚ/r₁₁, scales D from the column norms of the data block (when
        /// standardizing), the active columns, and B = R_d[:, active]·D⁻¹ with target z_d and ρ = T_last,last (MATH.md §4.3, §4.5, §7.3).
        /// </summary>
        public static PathDecomposition Create(SquareRootEstimator estimator, out FactorCoordinates coordinates)
        {
            int p = estimator.ParameterCount;
            int c = estimator.FactorOrder;
            var settings = estimator.Settings;
            int off = settings.FitIntercept ? 1 : 0;
            var t = new double[c * c];
            estimator.CopyFactorTo(t);
            double r11 = off == 1 ? t[0] : Math.Sqrt(estimator.WeightSum);
            if (!(r11 > 0.0))
            {
                throw new InvalidOperationException("The estimator has no weighted samples yet; a path needs data.");
            }

            var meanX = new double[p];
            double meanY = 0.0;
            if (off == 1)
            {
                for (int j = 0; j < p; j++)
                {
                    meanX[j] = t[j + 1] / r11;
                }

                meanY = t[c - 1] / r11;
            }

            var sd = new double[p];
            estimator.CopyScalesTo(sd);
            var active = new System.Collections.Generic.List<int>(p);
            var scale = new double[p];
            for (int j = 0; j < p; j++)
            {
                scale[j] = settings.Standardize ? sd[j] : 1.0;
                if (!estimator.IsExcluded(j))
                {
                    active.Add(j);
                }
                else
                {
                    scale[j] = 1.0;
                }
            }

            int q = active.Count;
            var prior = new double[q];
            if (settings.Prior is { } pr)
            {
                for (int k = 0; k < q; k++)
                {
                    prior[k] = scale[active[k]] * pr[active[k]];
                }
            }

            coordinates = new FactorCoordinates
            {
                Columns = p,
                Active = active.ToArray(),
                Scale = scale,
                PriorScaled = prior,
                MeanX = meanX,
                MeanY = meanY,
                Intercept = off == 1,
                DiscountedCount = estimator.DiscountedCount,
                WeightSum = estimator.WeightSum,
            };
            var co = coordinates;
            double rho = t[(c * c) - 1];
            return PathDecomposition.FromBlock(
                co,
                null,
                (i, k) => t[((i + off) * c) + co.Active[k] + off] / co.Scale[co.Active[k]],
                i => t[((i + off) * c) + c - 1],
                p,
                rho * rho,
                10.0 * (p + 1) * 2.220446049250313e-16);
        }
    }

    /// <summary>The coordinates a solver works in: active columns, their scales, the prior in scaled units, means (with an intercept), counts.</summary>
    internal interface ISolverCoordinates
    {
        int Columns { get; }

        int[] Active { get; }

        /// <summary>Sⱼ per raw column.</summary>
        double[] Scale { get; }

        /// <summary>γ₀ = S·θ₀ per active column.</summary>
        double[] PriorScaled { get; }

        double[] MeanX { get; }

        double MeanY { get; }

        bool Intercept { get; }

        double DiscountedCount { get; }

        double WeightSum { get; }
    }

    /// <summary>Coordinates read off a square-root estimator's factor (MATH.md §4.3).</summary>
    internal sealed class FactorCoordinates : ISolverCoordinates
    {
        public int Columns { get; init; }

        public int[] Active { get; init; } = Array.Empty<int>();

        public double[] Scale { get; init; } = Array.Empty<double>();

        public double[] PriorScaled { get; init; } = Array.Empty<double>();

        public double[] MeanX { get; init; } = Array.Empty<double>();

        public double MeanY { get; init; }

        public bool Intercept { get; init; }

        public double DiscountedCount { get; init; }

        public double WeightSum { get; init; }
    }

    /// <summary>The SVD of a problem's data factor and the path formulas of MATH.md §1.4 and §7.2 in solver coordinates.</summary>
    internal sealed class PathDecomposition
    {
        private readonly ISolverCoordinates pr;
        private readonly BatchProblem? batch;
        private readonly int q;
        private readonly double[] s;
        private readonly double[] v;   // q×q row-major: v[j*q + k] = V_jk
        private readonly double[] c;
        private readonly double rho2;
        private readonly double cut;

        private PathDecomposition(ISolverCoordinates pr, BatchProblem? batch, double[] s, double[] v, double[] c, double rho2, double cut)
        {
            this.pr = pr;
            this.batch = batch;
            q = pr.Active.Length;
            this.s = s;
            this.v = v;
            this.c = c;
            this.rho2 = rho2;
            this.cut = cut;
        }

        public double[] SingularValues => s;

        public double LargestSingularValue => q > 0 ? s[0] : 0.0;

        public static PathDecomposition Create(BatchProblem pr, MatrixView x, ReadOnlySpan<double> y, RidgeSettings settings)
        {
            double[] t = BatchSolver.DataFactor(pr, x, y);
            int q = pr.Q;
            int cols = q + 1;
            double tolerance = settings.RankTolerance ?? (Math.Max(pr.Rows, pr.Columns) * 2.220446049250313e-16);
            double rho = t[(q * cols) + q];
            return FromBlock(pr, pr, (i, k) => t[(i * cols) + k], i => t[(i * cols) + q], q, rho * rho, tolerance);
        }

        /// <summary>
        /// From a data block B (rows × q, already in solver coordinates), its target z and the residual ρ² outside the regressors:
        /// SVD B = U S Vᵀ, c = Uᵀ(z − Bγ₀), and the part of z − Bγ₀ outside range(B) added to ρ².
        /// </summary>
        internal static PathDecomposition FromBlock(ISolverCoordinates co, BatchProblem? batch, Func<int, int, double> block, Func<int, double> target, int rows, double rho2, double tolerance)
        {
            int q = co.Active.Length;
            var s = new double[q];
            var v = new double[q * q];
            var c = new double[q];
            if (q > 0 && rows > 0)
            {
                Matrix<double> b = Matrix<double>.Build.Dense(Math.Max(rows, q), q, (i, k) => i < rows ? block(i, k) : 0.0);
                var svd = b.Svd(true);
                var r0 = new double[b.RowCount];
                double r0Norm2 = 0.0;
                for (int i = 0; i < rows; i++)
                {
                    double val = target(i);
                    for (int k = 0; k < q; k++)
                    {
                        val -= block(i, k) * co.PriorScaled[k];
                    }

                    r0[i] = val;
                    r0Norm2 += val * val;
                }

                double c2 = 0.0;
                for (int k = 0; k < q; k++)
                {
                    s[k] = svd.S[k];
                    double ck = 0.0;
                    for (int i = 0; i < r0.Length; i++)
                    {
                        ck += svd.U[i, k] * r0[i];
                    }

                    c[k] = ck;
                    c2 += ck * ck;
                    for (int j = 0; j < q; j++)
                    {
                        v[(j * q) + k] = svd.VT[k, j];
                    }
                }

                if (rows > q)
                {
                    rho2 += Math.Max(0.0, r0Norm2 - c2);
                }
            }

            return new PathDecomposition(co, batch, s, v, c, rho2, tolerance * (q > 0 ? s[0] : 0.0));
        }

        /// <summary>Filter factor sⱼ/(sⱼ² + λ) (0 for a dropped singular value when λ = 0).</summary>
        private double Filter(int k, double lambda) =>
            lambda > 0.0 ? s[k] / ((s[k] * s[k]) + lambda) : (s[k] > cut && s[k] > 0.0 ? 1.0 / s[k] : 0.0);

        /// <summary>1/(sⱼ² + λ) (0 when dropped).</summary>
        private double Inverse(int k, double lambda) =>
            lambda > 0.0 ? 1.0 / ((s[k] * s[k]) + lambda) : (s[k] > cut && s[k] > 0.0 ? 1.0 / (s[k] * s[k]) : 0.0);

        public void Evaluate(double lambda, double[] theta, out double intercept, out double rss, out double df)
        {
            int p = pr.Columns;
            Array.Clear(theta, 0, p);
            rss = rho2;
            df = pr.Intercept ? 1.0 : 0.0;
            var fc = new double[q];
            for (int k = 0; k < q; k++)
            {
                double f = Filter(k, lambda);
                fc[k] = f * c[k];
                double hat = f * s[k];
                double resid = 1.0 - hat;
                rss += resid * resid * c[k] * c[k];
                df += hat;
            }

            for (int j = 0; j < q; j++)
            {
                double g = pr.PriorScaled[j];
                for (int k = 0; k < q; k++)
                {
                    g += v[(j * q) + k] * fc[k];
                }

                int col = pr.Active[j];
                theta[col] = g / pr.Scale[col];
            }

            intercept = 0.0;
            if (pr.Intercept)
            {
                intercept = pr.MeanY;
                for (int j = 0; j < p; j++)
                {
                    intercept -= pr.MeanX[j] * theta[j];
                }
            }
        }

        /// <summary>
        /// PRESS/N for every grid point in one pass over the rows: hᵢᵢ = aᵢ(1/W + Σⱼ tᵢⱼ²/(sⱼ² + λ)), tᵢ = Vᵀz̃ᵢ, and the residual
        /// rᵢ = ỹᵢ − z̃ᵢᵀγ₀ − Σⱼ tᵢⱼ fⱼ cⱼ (MATH.md §7.2). A leverage of 1 makes the value +∞.
        /// </summary>
        public double[] LeaveOneOut(MatrixView x, ReadOnlySpan<double> y, double[] grid)
        {
            BatchProblem pr = batch ?? throw new InvalidOperationException("leave-one-out needs the retained data");
            int count = grid.Length;
            var press = new double[count];
            var fc = new double[count * q];
            var inv = new double[count * q];
            for (int g = 0; g < count; g++)
            {
                for (int k = 0; k < q; k++)
                {
                    fc[(g * q) + k] = Filter(k, grid[g]) * c[k];
                    inv[(g * q) + k] = Inverse(k, grid[g]);
                }
            }

            var z = new double[q];
            var t = new double[q];
            double base0 = pr.Intercept ? 1.0 / pr.WeightSum : 0.0;
            for (int i = 0; i < pr.Rows; i++)
            {
                double a = pr.Weights[i];
                if (a == 0.0)
                {
                    continue;
                }

                ReadOnlySpan<double> xi = x.Row(i);
                double r0 = y[i] - pr.MeanY;
                for (int j = 0; j < q; j++)
                {
                    int col = pr.Active[j];
                    z[j] = (xi[col] - pr.MeanX[col]) / pr.Scale[col];
                    r0 -= z[j] * pr.PriorScaled[j];
                }

                for (int k = 0; k < q; k++)
                {
                    double sum = 0.0;
                    for (int j = 0; j < q; j++)
                    {
                        sum += v[(j * q) + k] * z[j];
                    }

                    t[k] = sum;
                }

                for (int g = 0; g < count; g++)
                {
                    double h = base0;
                    double r = r0;
                    int o = g * q;
                    for (int k = 0; k < q; k++)
                    {
                        h += t[k] * t[k] * inv[o + k];
                        r -= t[k] * fc[o + k];
                    }

                    h *= a;
                    if (press[g] == double.PositiveInfinity)
                    {
                        continue;
                    }

                    double omh = 1.0 - h;
                    if (!(omh > 1e-12))
                    {
                        press[g] = double.PositiveInfinity;
                        continue;
                    }

                    double e = r / omh;
                    press[g] += a * e * e;
                }
            }

            for (int g = 0; g < count; g++)
            {
                press[g] /= pr.DiscountedCount;
            }

            return press;
        }
    }
}
