using System;
using System.Collections.Generic;
using BenchmarkDotNet.Attributes;
using MathNet.Numerics.LinearAlgebra;

namespace OnlineRidge.Benchmarks
{
    /// <summary>
    /// One batch ridge fit (standardized, with intercept, penalty 1) per solver, over n rows and p columns.
    /// Cholesky is the baseline, so the Ratio column reads as "cost relative to the normal equations".
    /// </summary>
    [MemoryDiagnoser]
    public class BatchFitBenchmarks
    {
        private const int Seed = 20_261_202;
        private const double Penalty = 1.0;

        private RandomProblem problem = null!;
        private RidgeSettings cholesky = null!;
        private RidgeSettings qr = null!;
        private RidgeSettings svd = null!;
        private RidgeSettings auto = null!;

        /// <summary>When set (by <c>--smoke</c>), the parameters shrink to one small problem per p so that a dry run ends in seconds.</summary>
        internal static bool Smoke { get; set; }

        /// <summary>Number of rows n.</summary>
        [ParamsSource(nameof(RowCounts))]
        public int N { get; set; }

        /// <summary>Number of regressor columns p.</summary>
        [Params(8, 32)]
        public int P { get; set; }

        /// <summary>The values of <see cref="N"/>: 10⁴ and 10⁵, or 10³ in smoke mode.</summary>
        public static IEnumerable<int> RowCounts => Smoke ? new[] { 1_000 } : new[] { 10_000, 100_000 };

        /// <summary>Generates the data (fixed seed, so every run and every solver sees the same numbers).</summary>
        [GlobalSetup]
        public void Setup()
        {
            problem = RandomProblem.Create(N, P, Seed + P);
            cholesky = Settings(RidgeSolver.Cholesky);
            qr = Settings(RidgeSolver.Qr);
            svd = Settings(RidgeSolver.Svd);
            auto = Settings(RidgeSolver.Auto);

            // Fail the run before measuring if a solver cannot fit this problem (e.g. Cholesky refusing it).
            foreach (var s in new[] { cholesky, qr, svd, auto })
            {
                _ = Fit(s);
            }
        }

        /// <summary>Cholesky factorization of the normal equations.</summary>
        /// <returns>The fit (returned so the work is not eliminated).</returns>
        [Benchmark(Baseline = true)]
        public RidgeFit Cholesky() => Fit(cholesky);

        /// <summary>Householder QR of the weighted design with the penalty rows.</summary>
        /// <returns>The fit.</returns>
        [Benchmark]
        public RidgeFit Qr() => Fit(qr);

        /// <summary>QR followed by the SVD of the triangular factor.</summary>
        /// <returns>The fit.</returns>
        [Benchmark]
        public RidgeFit Svd() => Fit(svd);

        /// <summary>Automatic choice by condition estimate.</summary>
        /// <returns>The fit.</returns>
        [Benchmark]
        public RidgeFit Auto() => Fit(auto);

        /// <summary>
        /// The plain baseline a developer would write with MathNet matrix objects: copy into a dense matrix with a column of ones,
        /// form XᵀX + λI (intercept unpenalized, no standardization) and solve by Cholesky. Same cost class as <see cref="Cholesky"/>,
        /// without the condition estimate, residual statistics or the accuracy safeguards.
        /// </summary>
        /// <returns>The coefficients, intercept first.</returns>
        [Benchmark]
        public Vector<double> MathNetNormalEquations()
        {
            int n = problem.Rows;
            int p = problem.Columns;
            var design = Matrix<double>.Build.Dense(n, p + 1, (i, j) => j == 0 ? 1.0 : problem.X[(i * p) + j - 1]);
            var y = Vector<double>.Build.DenseOfArray(problem.Y);
            var gram = design.TransposeThisAndMultiply(design);
            for (int j = 1; j <= p; j++)
            {
                gram[j, j] += Penalty;
            }

            return gram.Cholesky().Solve(design.TransposeThisAndMultiply(y));
        }

        internal static RidgeSettings Settings(RidgeSolver solver) => new() { Solver = solver, Penalty = Penalty };

        private RidgeFit Fit(RidgeSettings settings) =>
            BatchRidge.Fit(new MatrixView(problem.X, problem.Rows, problem.Columns), problem.Y, settings);
    }
}
