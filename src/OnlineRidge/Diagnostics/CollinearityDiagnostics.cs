using System;
using System.Collections.Generic;
using MathNet.Numerics.LinearAlgebra;
using OnlineRidge.Internal;

namespace OnlineRidge
{
    /// <summary>
    /// Collinearity diagnostics of a weighted design (MATH.md §8; Belsley, Kuh and Welsch 1980): singular values and condition indices of
    /// the standardized design, variance inflation factors, variance-decomposition proportions, the uncentered scaled condition indices
    /// that also reveal collinearity with the intercept, and the effective degrees of freedom of a ridge penalty.
    /// </summary>
    /// <remarks>
    /// <para>Standardized design Z = A^½(X − 1mᵀ)D⁻¹/√W (weights aᵢ = βⁿ⁻ⁱwᵢ, weighted means m, population standard deviations D), so that
    /// ZᵀZ is the weighted correlation matrix. Its singular values come from the triangular factor of the centered, scaled rows (Householder,
    /// each row read once), never from the correlation matrix itself, so they are accurate to about ε·s₁ (not ε·s₁²).</para>
    /// <para>Rules of thumb (common practice, not theorems): condition indices above about 30 flag strong dependencies (Belsley, Kuh and
    /// Welsch 1980); VIF above 10 flags a regressor that is mostly explained by the others.</para>
    /// <para>Rank deficiency: when the smallest singular value is at or below max(n, p)·ε·s₁ the design is reported as rank deficient
    /// (<see cref="IsRankDeficient"/>); VIF and proportions are then null instead of meaningless huge numbers, and <see cref="NullDirection"/>
    /// names the combination of columns that is (numerically) constant. Constant columns are listed in <see cref="ConstantColumns"/> and
    /// left out of the other statistics.</para>
    /// <para>Cost: O(n·p²) for the factor plus O(p³); O(p² + n·p) memory (the uncentered indices need a copy of the design with a column of
    /// ones). Immutable and thread-safe.</para>
    /// </remarks>
    public sealed class CollinearityDiagnostics
    {
        private readonly int[] columns;
        private readonly double[] singularValues;
        private readonly double[] conditionIndices;
        private readonly double[]? vif;
        private readonly double[,]? proportions;
        private readonly double[] scaledConditionIndices;
        private readonly double[]? nullDirection;
        private readonly int[] constantColumns;

        private CollinearityDiagnostics(int[] columns, double[] singularValues, double[] conditionIndices, double[]? vif, double[,]? proportions, double[] scaledConditionIndices, double[]? nullDirection, int[] constantColumns, double weightSum)
        {
            this.columns = columns;
            this.singularValues = singularValues;
            this.conditionIndices = conditionIndices;
            this.vif = vif;
            this.proportions = proportions;
            this.scaledConditionIndices = scaledConditionIndices;
            this.nullDirection = nullDirection;
            this.constantColumns = constantColumns;
            WeightSum = weightSum;
        }

        /// <summary>The regressor columns the statistics refer to (all non-constant columns, ascending).</summary>
        public IReadOnlyList<int> Columns => columns;

        /// <summary>Singular values s₁ ≥ … ≥ s_q of the standardized design Z (sₖ² are the eigenvalues of the weighted correlation matrix).</summary>
        public IReadOnlyList<double> SingularValues => singularValues;

        /// <summary>Condition number κ = s₁/s_q of the standardized design (+∞ when rank deficient to working precision).</summary>
        public double ConditionNumber => singularValues.Length == 0 ? 1.0 : (singularValues[singularValues.Length - 1] > 0 ? singularValues[0] / singularValues[singularValues.Length - 1] : double.PositiveInfinity);

        /// <summary>Condition indices s₁/sₖ, k = 1..q.</summary>
        public IReadOnlyList<double> ConditionIndices => conditionIndices;

        /// <summary>Variance inflation factors VIFⱼ = [Corr⁻¹]ⱼⱼ = Σₖ Vⱼₖ²/sₖ², one per entry of <see cref="Columns"/>; null when rank deficient.</summary>
        public IReadOnlyList<double>? VarianceInflationFactors => vif;

        /// <summary>True when the standardized design is numerically rank deficient (smallest singular value ≤ max(n, p)·ε·s₁).</summary>
        public bool IsRankDeficient => vif is null;

        /// <summary>
        /// When rank deficient: the unit vector v (over <see cref="Columns"/>, in standardized units) with Zv ≈ 0 — the columns with large
        /// entries are the ones that are linearly dependent. Null otherwise.
        /// </summary>
        public IReadOnlyList<double>? NullDirection => nullDirection;

        /// <summary>Columns that are constant (zero weighted standard deviation at rounding level); excluded from the statistics.</summary>
        public IReadOnlyList<int> ConstantColumns => constantColumns;

        /// <summary>
        /// Belsley's uncentered condition indices: of A^½[1, X] with every column (the intercept's included) scaled to unit length; index 0 is 1.
        /// Large values that do not appear in <see cref="ConditionIndices"/> point at collinearity with the intercept.
        /// </summary>
        public IReadOnlyList<double> ScaledConditionIndices => scaledConditionIndices;

        /// <summary>Sum of effective weights W.</summary>
        public double WeightSum { get; }

        /// <summary>
        /// Variance-decomposition proportion πⱼₖ = (Vⱼₖ²/sₖ²)/VIFⱼ: the share of the variance of coefficient j (index into <see cref="Columns"/>)
        /// carried by singular direction k; rows sum to 1. Two or more large proportions under one large condition index identify a dependency.
        /// </summary>
        /// <param name="column">Index into <see cref="Columns"/>.</param>
        /// <param name="direction">Index of the singular value (0 = largest).</param>
        /// <returns>The proportion, or NaN when rank deficient.</returns>
        public double VarianceProportion(int column, int direction) => proportions is null ? double.NaN : proportions[column, direction];

        /// <summary>
        /// Effective degrees of freedom Σₖ sₖ²/(sₖ² + λ/W) of a ridge penalty λ on the standardized coefficients, without the intercept
        /// (MATH.md §6.4; equal to <see cref="RidgeFit.EffectiveDegreesOfFreedom"/> − 1 for a standardized fit with intercept). O(p).
        /// </summary>
        /// <param name="penalty">λ ≥ 0 (absolute, as in <see cref="RidgeSettings.Penalty"/>).</param>
        /// <returns>The degrees of freedom.</returns>
        public double EffectiveDegreesOfFreedom(double penalty)
        {
            Guard.NonNegativeFinite(penalty, nameof(penalty));
            double df = 0.0;
            foreach (double s in singularValues)
            {
                double s2 = s * s * WeightSum;
                df += s2 > 0.0 ? s2 / (s2 + penalty) : 0.0;
            }

            return df;
        }

        /// <summary>Computes the diagnostics of a design.</summary>
        /// <param name="x">Regressors, one sample per row.</param>
        /// <param name="weights">Sample weights; empty for unit weights.</param>
        /// <param name="forgettingFactor">β in (0, 1]: sample i of n weighs βⁿ⁻ⁱwᵢ.</param>
        /// <returns>The diagnostics.</returns>
        /// <exception cref="ArgumentException">Non-finite data, bad weights or β (as for <see cref="BatchRidge"/>).</exception>
        public static CollinearityDiagnostics Compute(MatrixView x, ReadOnlySpan<double> weights = default, double forgettingFactor = 1.0)
        {
            Guard.ForgettingFactor(forgettingFactor, nameof(forgettingFactor));
            int n = x.Rows;
            int p = x.Columns;
            var zeros = new double[n];
            var settings = new RidgeSettings { Penalty = 1.0, Standardize = true, FitIntercept = true, ForgettingFactor = forgettingFactor };
            var pr = BatchProblem.Create(x, zeros, weights, settings);
            double[] t = BatchSolver.DataFactor(pr, x, zeros);
            int q = pr.Q;
            double scale = 1.0 / Math.Sqrt(pr.WeightSum);
            double[] unit = ScaledFactor(UncenteredFactor(x, pr), p + 1, p + 2);
            return Build(pr.Active, pr.Excluded, q, (i, j) => t[(i * (q + 1)) + j] * scale, q, unit, Math.Max(n, p), pr.WeightSum);
        }

        /// <summary>
        /// The diagnostics of the data a running square-root estimator with an intercept has seen, weighted by its forgetting (the recent
        /// design), from its factor alone (MATH.md §8): Z has the singular values of R₂₂D⁻¹/√W, and the uncentered scaled indices come from the
        /// leading (p + 1)×(p + 1) block of the factor with unit-length columns. Cost O(p³); the estimator is not changed.
        /// </summary>
        /// <param name="estimator">A square-root estimator built with <see cref="SquareRootSettings.FitIntercept"/> (centering needs the means).</param>
        /// <returns>The diagnostics of its current (forgetting-weighted) design.</returns>
        /// <exception cref="ArgumentNullException">The estimator is null.</exception>
        /// <exception cref="InvalidOperationException">No intercept column, or no weighted sample yet.</exception>
        public static CollinearityDiagnostics FromState(SquareRootEstimator estimator)
        {
            Guard.NotNull(estimator, nameof(estimator));
            if (!estimator.Settings.FitIntercept)
            {
                throw new InvalidOperationException("Collinearity diagnostics of a stream need an estimator with an intercept (the centered design).");
            }

            int p = estimator.ParameterCount;
            int c = estimator.FactorOrder;
            var t = new double[c * c];
            estimator.CopyFactorTo(t);
            double r11 = t[0];
            if (!(r11 > 0.0))
            {
                throw new InvalidOperationException("The estimator has no weighted samples yet.");
            }

            var sd = new double[p];
            estimator.CopyScalesTo(sd);
            var active = new System.Collections.Generic.List<int>(p);
            var excluded = new System.Collections.Generic.List<int>();
            for (int j = 0; j < p; j++)
            {
                (estimator.IsExcluded(j) || !(sd[j] > 0.0) ? excluded : active).Add(j);
            }

            int[] act = active.ToArray();
            double w = estimator.WeightSum;
            double denom = Math.Sqrt(w);

            // Z = R₂₂[:, active]·D⁻¹/√W: p rows (the data block) × q columns.
            double[] unit = ScaledFactor(t, p + 1, c);
            return Build(act, excluded.ToArray(), p, (i, k) => t[((i + 1) * c) + act[k] + 1] / (sd[act[k]] * denom), p, unit, p + 1, w);
        }

        private static CollinearityDiagnostics Build(int[] active, int[] excluded, int rows, Func<int, int, double> z, int rankScale, double[] scaledIndices, int sizeForTolerance, double weightSum)
        {
            int q = active.Length;
            var s = new double[q];
            var ci = new double[q];
            double[]? vif = null;
            double[,]? prop = null;
            double[]? nullDir = null;
            if (q > 0)
            {
                var svd = Matrix<double>.Build.Dense(Math.Max(rows, q), q, (i, j) => i < rows ? z(i, j) : 0.0).Svd(true);
                for (int k = 0; k < q; k++)
                {
                    s[k] = svd.S[k];
                    ci[k] = s[k] > 0 ? s[0] / s[k] : double.PositiveInfinity;
                }

                double cut = Math.Max(sizeForTolerance, rankScale) * 2.220446049250313e-16 * s[0];
                if (s[q - 1] <= cut)
                {
                    nullDir = new double[q];
                    for (int j = 0; j < q; j++)
                    {
                        nullDir[j] = svd.VT[q - 1, j];
                    }
                }
                else
                {
                    vif = new double[q];
                    prop = new double[q, q];
                    for (int j = 0; j < q; j++)
                    {
                        double sum = 0.0;
                        for (int k = 0; k < q; k++)
                        {
                            double term = svd.VT[k, j] * svd.VT[k, j] / (s[k] * s[k]);
                            prop[j, k] = term;
                            sum += term;
                        }

                        vif[j] = sum;
                        for (int k = 0; k < q; k++)
                        {
                            prop[j, k] /= sum;
                        }
                    }
                }
            }

            return new CollinearityDiagnostics(active, s, ci, vif, prop, scaledIndices, nullDir, excluded, weightSum);
        }

        /// <summary>Condition indices of the leading m×m block of an upper-triangular factor (row stride <paramref name="stride"/>) with its columns scaled to unit length.</summary>
        private static double[] ScaledFactor(double[] t, int m, int stride)
        {
            var norms = new double[m];
            for (int j = 0; j < m; j++)
            {
                double sum = 0.0;
                for (int i = 0; i <= j; i++)
                {
                    double v = t[(i * stride) + j];
                    sum += v * v;
                }

                norms[j] = Math.Sqrt(sum);
            }

            var mat = Matrix<double>.Build.Dense(m, m, (i, j) => j >= i && norms[j] > 0 ? t[(i * stride) + j] / norms[j] : 0.0);
            var sv = mat.Svd(false).S;
            var result = new double[m];
            for (int k = 0; k < m; k++)
            {
                result[k] = sv[k] > 0 ? sv[0] / sv[k] : double.PositiveInfinity;
            }

            return result;
        }

        /// <summary>The triangular factor ((p + 2)², stride p + 2, last column unused) of the weighted uncentered rows A^½[1, X].</summary>
        private static double[] UncenteredFactor(MatrixView x, BatchProblem pr)
        {
            int n = x.Rows;
            int p = x.Columns;
            int c = p + 1;
            var acc = new HouseholderAccumulator(c + 1);
            var row = new double[c + 1];
            for (int i = 0; i < n; i++)
            {
                double a = pr.Weights[i];
                if (a == 0.0)
                {
                    continue;
                }

                double sa = Math.Sqrt(a);
                row[0] = sa;
                ReadOnlySpan<double> xi = x.Row(i);
                for (int j = 0; j < p; j++)
                {
                    row[j + 1] = sa * xi[j];
                }

                row[c] = 0.0;
                acc.AddRow(row);
            }

            acc.Flush();
            return acc.Factor;
        }
    }
}
