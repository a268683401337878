using System;
using System.Collections.Generic;
using BenchmarkDotNet.Attributes;
using OnlineRidge.Internal;

namespace OnlineRidge.Benchmarks
{
    /// <summary>
    /// The streaming stages of a batch fit, one at a time, on a problem prepared once (standardized, intercept, penalty 1):
    /// problem setup (validation, effective weights, means, scales), the Gram pass of the Cholesky solver (Xᵀ W X upper triangle with
    /// Xᵀ W y, the weighted rows built on the fly) and the Householder pass of the QR and SVD solvers, each on one thread and on two.
    /// The Gram pass on one thread is the baseline. Compare the Gram pass with OpenBLAS dsyrk + dgemv and the Householder pass with LAPACK
    /// dgeqrf / dtpqrt from ../shared/refbench (batch.c), measured in the same sitting.
    /// </summary>
    [MemoryDiagnoser]
    public class BatchStageBenchmarks
    {
        private RandomProblem problem = null!;
        private BatchProblem prepared = null!;
        private RidgeSettings settings = null!;

        /// <summary>When set (by <c>--smoke</c>), one small problem per p.</summary>
        internal static bool Smoke { get; set; }

        /// <summary>Number of rows n.</summary>
        [ParamsSource(nameof(RowCounts))]
        public int N { get; set; }

        /// <summary>Number of regressor columns p.</summary>
        [ParamsSource(nameof(ColumnCounts))]
        public int P { get; set; }

        /// <summary>10⁵ and 10⁶ rows (smoke: 2·10⁴, enough for two segments so the parallel code runs).</summary>
        public static IEnumerable<int> RowCounts => Smoke ? new[] { 20_000 } : new[] { 100_000, 1_000_000 };

        /// <summary>8, 32 and 128 columns (smoke: 8 and 32).</summary>
        public static IEnumerable<int> ColumnCounts => Smoke ? new[] { 8, 32 } : new[] { 8, 32, 128 };

        /// <summary>Generates the data (fixed seed) and the prepared problem.</summary>
        [GlobalSetup]
        public void Setup()
        {
            problem = RandomProblem.Create(N, P, 20_261_202 + P);
            settings = new RidgeSettings { Penalty = 1.0 };
            prepared = BatchProblem.Create(new MatrixView(problem.X, N, P), problem.Y, default, settings);
        }

        /// <summary>Validation, effective weights, weighted means and column scales (BatchProblem.Create).</summary>
        /// <returns>The problem.</returns>
        [Benchmark]
        public object ProblemSetup() => BatchProblem.Create(new MatrixView(problem.X, N, P), problem.Y, default, settings);

        /// <summary>Gram matrix of the weighted rows, one thread.</summary>
        /// <returns>The (p+1)×(p+1) matrix.</returns>
        [Benchmark(Baseline = true)]
        public double[] Gram() => BatchKernels.Gram(prepared, problem.X, problem.Y, 1);

        /// <summary>Gram matrix of the weighted rows, two threads (same bits).</summary>
        /// <returns>The (p+1)×(p+1) matrix.</returns>
        [Benchmark]
        public double[] GramTwoThreads() => BatchKernels.Gram(prepared, problem.X, problem.Y, 2);

        /// <summary>Householder factor of the weighted rows, one thread.</summary>
        /// <returns>The (p+1)×(p+1) factor.</returns>
        [Benchmark]
        public double[] HouseholderFactor() => BatchKernels.Factor(prepared, problem.X, problem.Y, 1);

        /// <summary>Householder factor of the weighted rows, two threads (same bits).</summary>
        /// <returns>The (p+1)×(p+1) factor.</returns>
        [Benchmark]
        public double[] HouseholderFactorTwoThreads() => BatchKernels.Factor(prepared, problem.X, problem.Y, 2);
    }
}
