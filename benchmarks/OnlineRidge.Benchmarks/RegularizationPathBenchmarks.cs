using System;
using System.Collections.Generic;
using BenchmarkDotNet.Attributes;

namespace OnlineRidge.Benchmarks
{
    /// <summary>
    /// A regularization path of 100 penalties (one data factor, one SVD of the p×p factor, O(p²) per penalty) against one fit at a single
    /// penalty with the SVD solver (the baseline) and with the Cholesky and QR solvers. The path without leave-one-out should cost little more than
    /// the single SVD fit; leave-one-out adds one more pass over the data.
    /// </summary>
    [MemoryDiagnoser]
    public class RegularizationPathBenchmarks
    {
        private const int GridSize = 100;
        private RandomProblem problem = null!;
        private double[] grid = null!;
        private RidgeSettings svd = null!;
        private RidgeSettings cholesky = null!;
        private RidgeSettings qr = null!;

        /// <summary>When set (by <c>--smoke</c>), one small problem per p.</summary>
        internal static bool Smoke { get; set; }

        /// <summary>Number of rows n.</summary>
        [ParamsSource(nameof(RowCounts))]
        public int N { get; set; }

        /// <summary>Number of regressor columns p.</summary>
        [ParamsSource(nameof(ColumnCounts))]
        public int P { get; set; }

        /// <summary>10⁵ and 10⁶ rows (smoke: 10³).</summary>
        public static IEnumerable<int> RowCounts => Smoke ? new[] { 1_000 } : new[] { 100_000, 1_000_000 };

        /// <summary>8, 32 and 128 columns (smoke: 8 and 32).</summary>
        public static IEnumerable<int> ColumnCounts => Smoke ? new[] { 8, 32 } : new[] { 8, 32, 128 };

        /// <summary>Generates the data (fixed seed) and a log-spaced grid of 100 penalties over 10⁻⁴..10⁴.</summary>
        [GlobalSetup]
        public void Setup()
        {
            problem = RandomProblem.Create(N, P, 20_261_202 + P);
            grid = new double[GridSize];
            for (int k = 0; k < GridSize; k++)
            {
                grid[k] = Math.Pow(10.0, -4.0 + (8.0 * k / (GridSize - 1)));
            }

            svd = new RidgeSettings { Solver = RidgeSolver.Svd, Penalty = 1.0 };
            cholesky = new RidgeSettings { Solver = RidgeSolver.Cholesky, Penalty = 1.0 };
            qr = new RidgeSettings { Solver = RidgeSolver.Qr, Penalty = 1.0 };
        }

        /// <summary>One SVD fit at penalty 1.</summary>
        /// <returns>The fit.</returns>
        [Benchmark(Baseline = true)]
        public RidgeFit SingleSvdFit() => BatchRidge.Fit(new MatrixView(problem.X, N, P), problem.Y, svd);

        /// <summary>One Cholesky fit at penalty 1.</summary>
        /// <returns>The fit.</returns>
        [Benchmark]
        public RidgeFit SingleCholeskyFit() => BatchRidge.Fit(new MatrixView(problem.X, N, P), problem.Y, cholesky);

        /// <summary>One QR fit at penalty 1 (the same data pass as the SVD fit, without the p×p SVD).</summary>
        /// <returns>The fit.</returns>
        [Benchmark]
        public RidgeFit SingleQrFit() => BatchRidge.Fit(new MatrixView(problem.X, N, P), problem.Y, qr);

        /// <summary>The path over 100 penalties, coefficients, RSS, df and GCV at each, without leave-one-out.</summary>
        /// <returns>The path.</returns>
        [Benchmark]
        public RegularizationPath Path() => RegularizationPath.Compute(new MatrixView(problem.X, N, P), problem.Y, svd, default, grid, leaveOneOut: false);

        /// <summary>The same path with exact leave-one-out errors at each penalty.</summary>
        /// <returns>The path.</returns>
        [Benchmark]
        public RegularizationPath PathWithLeaveOneOut() => RegularizationPath.Compute(new MatrixView(problem.X, N, P), problem.Y, svd, default, grid, leaveOneOut: true);
    }
}
