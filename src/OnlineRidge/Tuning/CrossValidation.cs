using System;
using OnlineRidge.Internal;

namespace OnlineRidge
{
    /// <summary>How samples are split into cross-validation folds.</summary>
    public enum FoldLayout
    {
        /// <summary>K contiguous blocks in sample order; each block is held out once and the model is fitted on all other blocks.</summary>
        Contiguous = 0,

        /// <summary>
        /// Time-series layout: K contiguous blocks; block k (k = 1..K−1) is held out and the model is fitted on blocks 0..k−1 only,
        /// so no sample from the future of the held-out block is ever used to predict it.
        /// </summary>
        ForwardChaining = 1,

        /// <summary>Samples assigned to K folds by a seeded pseudo-random permutation (reproducible for a given seed on every runtime).</summary>
        Shuffled = 2,
    }

    /// <summary>
    /// K-fold cross-validation of the penalty: for every fold, the ridge path is computed on the training samples and the weighted mean
    /// squared prediction error is accumulated on the held-out samples, for every penalty of the grid.
    /// </summary>
    /// <remarks>
    /// <para>The effective weights βⁿ⁻ⁱwᵢ of the whole data set are kept for every sample (training and held-out), so forgetting means the same
    /// in every fold. Standardization scales and centering are recomputed from each training set, as they would be in use.</para>
    /// <para>Cost: K fits of the path (≈ 2·n·p² each, plus O(p³ + L·p²)), plus O(n·p·L) for the held-out predictions; O(n·p) memory for
    /// the training copy. Failures: as <see cref="RegularizationPath.Compute"/>, and <see cref="ArgumentOutOfRangeException"/> for fewer
    /// than 2 folds or more folds than samples. Thread-safe (no shared state); reproducible for a given seed.</para>
    /// </remarks>
    public static class CrossValidation
    {
        /// <summary>Chooses the penalty by K-fold cross-validation.</summary>
        /// <param name="x">Regressors, one sample per row.</param>
        /// <param name="y">Outputs.</param>
        /// <param name="settings">Forgetting, prior, intercept, standardization; null for the defaults (the penalty is ignored).</param>
        /// <param name="weights">Sample weights; empty for unit weights.</param>
        /// <param name="folds">Number of folds K ≥ 2 (5 or 10 are common practice, a rule of thumb).</param>
        /// <param name="layout">How samples are assigned to folds; use <see cref="FoldLayout.ForwardChaining"/> for time series.</param>
        /// <param name="seed">Seed of the permutation for <see cref="FoldLayout.Shuffled"/> (ignored otherwise).</param>
        /// <param name="penalties">Grid of penalties; empty for the default grid of the full data set.</param>
        /// <returns>The choice, with the held-out error at every grid point.</returns>
        public static PenaltyChoice KFold(MatrixView x, ReadOnlySpan<double> y, RidgeSettings? settings = null, ReadOnlySpan<double> weights = default, int folds = 5, FoldLayout layout = FoldLayout.Contiguous, int seed = 0, ReadOnlySpan<double> penalties = default)
        {
            var s = settings ?? RidgeSettings.Default;
            int n = x.Rows;
            int p = x.Columns;
            if (folds < 2 || folds > n)
            {
                Guard.ThrowOutOfRange(nameof(folds), folds, FormattableString.Invariant($"must lie in [2, {n}] (the number of samples)"));
            }

            if (layout < FoldLayout.Contiguous || layout > FoldLayout.Shuffled)
            {
                Guard.ThrowOutOfRange(nameof(layout), (double)layout, "not a FoldLayout member");
            }

            // Validate everything once on the full data, and take its effective weights and default grid.
            var full = BatchProblem.Create(x, y, weights, s.WithPenalty(1.0));
            double[] grid = penalties.Length == 0
                ? RegularizationPath.DefaultGrid(PathDecomposition.Create(full, x, y, s).LargestSingularValue)
                : penalties.ToArray();
            for (int k = 0; k < grid.Length; k++)
            {
                if (!(grid[k] >= 0.0) || double.IsInfinity(grid[k]))
                {
                    Guard.ThrowArgument(nameof(penalties), FormattableString.Invariant($"penalties[{k}] = {grid[k]:R} is invalid: a penalty must be a finite number >= 0."));
                }
            }

            Array.Sort(grid);
            int[] fold = AssignFolds(n, folds, layout, seed);
            var trainSettings = new RidgeSettings
            {
                ForgettingFactor = 1.0,
                FitIntercept = s.FitIntercept,
                Standardize = s.Standardize,
                Prior = s.Prior,
                RankTolerance = s.RankTolerance,
            };

            var error = new double[grid.Length];
            double heldWeight = 0.0;
            var trainX = new double[n * p];
            var trainY = new double[n];
            var trainW = new double[n];
            var theta = new double[p];
            for (int k = 0; k < folds; k++)
            {
                if (layout == FoldLayout.ForwardChaining && k == 0)
                {
                    continue;
                }

                int m = 0;
                for (int i = 0; i < n; i++)
                {
                    bool train = layout == FoldLayout.ForwardChaining ? fold[i] < k : fold[i] != k;
                    if (train && full.Weights[i] > 0.0)
                    {
                        x.Row(i).CopyTo(trainX.AsSpan(m * p, p));
                        trainY[m] = y[i];
                        trainW[m] = full.Weights[i];
                        m++;
                    }
                }

                if (m == 0)
                {
                    continue;
                }

                var path = RegularizationPath.Compute(new MatrixView(trainX.AsSpan(0, m * p), m, p), trainY.AsSpan(0, m), trainSettings, trainW.AsSpan(0, m), grid, leaveOneOut: false);
                for (int i = 0; i < n; i++)
                {
                    if (fold[i] != k || full.Weights[i] == 0.0)
                    {
                        continue;
                    }

                    double a = full.Weights[i];
                    heldWeight += a;
                    ReadOnlySpan<double> xi = x.Row(i);
                    for (int g = 0; g < grid.Length; g++)
                    {
                        path.CopyCoefficientsTo(g, theta);
                        double pred = path.Intercepts[g];
                        for (int j = 0; j < p; j++)
                        {
                            pred += theta[j] * xi[j];
                        }

                        double e = y[i] - pred;
                        error[g] += a * e * e;
                    }
                }
            }

            for (int g = 0; g < grid.Length; g++)
            {
                error[g] = heldWeight > 0.0 ? error[g] / heldWeight : double.NaN;
            }

            return new PenaltyChoice(PenaltyCriterion.KFold, grid, error);
        }

        /// <summary>Fold of each sample: contiguous blocks of sizes differing by at most one, or a seeded shuffle of those labels.</summary>
        internal static int[] AssignFolds(int n, int folds, FoldLayout layout, int seed)
        {
            var fold = new int[n];
            for (int i = 0; i < n; i++)
            {
                fold[i] = (int)((long)i * folds / n);
            }

            if (layout == FoldLayout.Shuffled)
            {
                // Fisher–Yates with a fixed 64-bit generator (SplitMix64), so the permutation does not depend on the runtime's Random.
                ulong state = unchecked((ulong)seed * 0x9E3779B97F4A7C15UL) ^ 0xD1B54A32D192ED03UL;
                for (int i = n - 1; i > 0; i--)
                {
                    state = unchecked(state + 0x9E3779B97F4A7C15UL);
                    ulong zz = state;
                    zz = unchecked((zz ^ (zz >> 30)) * 0xBF58476D1CE4E5B9UL);
                    zz = unchecked((zz ^ (zz >> 27)) * 0x94D049BB133111EBUL);
                    zz ^= zz >> 31;
                    int j = (int)(zz % (ulong)(i + 1));
                    (fold[i], fold[j]) = (fold[j], fold[i]);
                }
            }

            return fold;
        }
    }
}
