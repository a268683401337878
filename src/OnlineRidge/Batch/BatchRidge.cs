using System;
using System.Diagnostics.CodeAnalysis;
using OnlineRidge.Internal;

namespace OnlineRidge
{
    /// <summary>
    /// Batch regularized least squares: minimizes Σᵢ βⁿ⁻ⁱwᵢ (yᵢ − b₀ − xᵢᵀθ)² + λ (θ − θ₀)ᵀD²(θ − θ₀) over all rows at once
    /// (MATH.md §1, with §4 for the unpenalized intercept and standardization), with a choice of solver (<see cref="RidgeSolver"/>).
    /// This is the reference every recursive form of the library is proven against.
    /// </summary>
    /// <remarks>
    /// <para>Algorithm: effective weights aᵢ = βⁿ⁻ⁱwᵢ; weighted means (with an intercept, two-pass) and column scales D (with standardization);
    /// then the centered, scaled, weighted rows are either accumulated into the Gram matrix (Cholesky) or reflected into a triangular factor by
    /// blocked Householder QR (QR and SVD; each row read once), the penalty rows √λ·[I, Dθ₀] are appended, and the SVD solver takes the SVD of
    /// the small p×p factor (Chan 1982 R-SVD). Results are mapped back to raw units.</para>
    /// <para>Cost: O(n·p) for the passes over the data, plus n·p²/2 (Cholesky) or about 2·n·p² (QR, SVD) multiply-adds, plus O(p³).
    /// Memory O(n) for the effective weights plus O(p² + 128·p) besides the result; the input is not copied.</para>
    /// <para>Accuracy: see <see cref="RidgeSolver"/>. On the NIST StRD linear sets the QR and SVD solvers reach at least 9 digits (7 on Filip);
    /// the README lists the digits each solver reaches.</para>
    /// <para>Failures: caller mistakes throw <see cref="ArgumentException"/> naming the parameter and value before any work; data-dependent
    /// breakdown throws <see cref="RidgeBreakdownException"/> (or returns false from <see cref="TryFit"/>). Thread-safe: no shared state.
    /// Reproducible: the same inputs on the same runtime and hardware give the same bits.</para>
    /// </remarks>
    public static class BatchRidge
    {
        /// <summary>Fits the model to the rows of <paramref name="x"/> and the outputs <paramref name="y"/>.</summary>
        /// <param name="x">Regressors, one sample per row (n × p).</param>
        /// <param name="y">Outputs, length n.</param>
        /// <param name="settings">Penalty, forgetting, prior, intercept, standardization and solver; null for <see cref="RidgeSettings.Default"/>.</param>
        /// <param name="weights">Sample weights wᵢ ≥ 0 (precision weights), length n; empty for unit weights.</param>
        /// <returns>The fit.</returns>
        /// <exception cref="ArgumentException">Non-finite data, mismatched lengths, negative weights, all weights zero, prior of wrong length,
        /// or fewer samples of positive weight than parameters while the penalty is zero (except with the SVD solver, which then returns the minimum-norm solution).</exception>
        /// <exception cref="RidgeBreakdownException">The data make the chosen solver break down (see <see cref="BreakdownInfo"/>).</exception>
        public static RidgeFit Fit(MatrixView x, ReadOnlySpan<double> y, RidgeSettings? settings = null, ReadOnlySpan<double> weights = default)
        {
            if (!TryFit(x, y, settings, weights, out RidgeFit? fit, out BreakdownInfo breakdown))
            {
                Guard.ThrowBreakdown(breakdown);
            }

            return fit;
        }

        /// <summary>Fits the model to a rectangular array of regressors (copied once to row-major memory).</summary>
        /// <param name="x">Regressors, n × p.</param>
        /// <param name="y">Outputs, length n.</param>
        /// <param name="settings">Settings; null for the defaults.</param>
        /// <param name="weights">Sample weights, length n, or null for unit weights.</param>
        /// <returns>The fit.</returns>
        /// <exception cref="ArgumentNullException"><paramref name="x"/> or <paramref name="y"/> is null.</exception>
        /// <exception cref="ArgumentException">As for <see cref="Fit(MatrixView, ReadOnlySpan{double}, RidgeSettings?, ReadOnlySpan{double})"/>.</exception>
        /// <exception cref="RidgeBreakdownException">The data make the chosen solver break down.</exception>
        public static RidgeFit Fit(double[,] x, double[] y, RidgeSettings? settings = null, double[]? weights = null)
        {
            Guard.NotNull(x, nameof(x));
            Guard.NotNull(y, nameof(y));

            int rows = x.GetLength(0);
            int cols = x.GetLength(1);
            if (cols < 1)
            {
                Guard.ThrowArgument(nameof(x), string.Format(System.Globalization.CultureInfo.InvariantCulture, "x has {0} columns; at least one is needed.", cols));
            }

            var data = new double[rows * cols];
            for (int i = 0; i < rows; i++)
            {
                for (int j = 0; j < cols; j++)
                {
                    data[(i * cols) + j] = x[i, j];
                }
            }

            return Fit(new MatrixView(data, rows, cols), y, settings, weights ?? ReadOnlySpan<double>.Empty);
        }

        /// <summary>As <see cref="Fit(MatrixView, ReadOnlySpan{double}, RidgeSettings?, ReadOnlySpan{double})"/>, but reports a data-dependent breakdown by returning false.</summary>
        /// <param name="x">Regressors, one sample per row.</param>
        /// <param name="y">Outputs.</param>
        /// <param name="settings">Settings; null for the defaults.</param>
        /// <param name="weights">Sample weights; empty for unit weights.</param>
        /// <param name="fit">The fit, or null on breakdown.</param>
        /// <param name="breakdown">What broke down, or <see cref="BreakdownInfo.None"/>.</param>
        /// <returns>True on success.</returns>
        /// <exception cref="ArgumentException">Caller mistakes, as for Fit (these are never reported through the return value).</exception>
        public static bool TryFit(MatrixView x, ReadOnlySpan<double> y, RidgeSettings? settings, ReadOnlySpan<double> weights, [NotNullWhen(true)] out RidgeFit? fit, out BreakdownInfo breakdown)
        {
            settings ??= RidgeSettings.Default;
            var problem = BatchProblem.Create(x, y, weights, settings);
            try
            {
                return BatchSolver.TrySolve(problem, x, y, settings, out fit, out breakdown);
            }
            catch (MathNet.Numerics.NonConvergenceException)
            {
                // MathNet's SVD or eigen-solver gives up when an intermediate overflows to NaN (finite data near 1e154 and beyond):
                // a data-dependent breakdown, to be reported as such and never as a foreign exception type.
                fit = null;
                breakdown = new BreakdownInfo(BreakdownKind.NonFinite, -1, double.NaN, double.NaN);
                return false;
            }
        }
    }
}
