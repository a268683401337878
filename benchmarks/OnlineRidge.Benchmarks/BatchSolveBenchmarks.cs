using System;
using System.Collections.Generic;
using BenchmarkDotNet.Attributes;
using MathNet.Numerics.LinearAlgebra;
using OnlineRidge.Internal;

namespace OnlineRidge.Benchmarks
{
    /// <summary>
    /// The p×p solve stages that follow the streaming passes (their cost does not depend on n): Cholesky of G + λI with the two triangular
    /// solves and the inverse factor (Cholesky solver), and the SVD of the triangular data factor (SVD solver and regularization path).
    /// Inputs: the Gram matrix and the factor of a 10⁴-row problem (fixed seed).
    /// </summary>
    [MemoryDiagnoser]
    public class BatchSolveBenchmarks
    {
        private double[] gram = null!;
        private double[] factor = null!;
        private double[] h = null!;
        private double[] rhs = null!;
        private double[] inverse = null!;

        /// <summary>When set (by <c>--smoke</c>), p = 8 and 32 only.</summary>
        internal static bool Smoke { get; set; }

        /// <summary>Number of regressor columns p.</summary>
        [ParamsSource(nameof(ColumnCounts))]
        public int P { get; set; }

        /// <summary>8, 32 and 128 columns (smoke: 8 and 32).</summary>
        public static IEnumerable<int> ColumnCounts => Smoke ? new[] { 8, 32 } : new[] { 8, 32, 128 };

        /// <summary>Builds G and T from a fixed random problem.</summary>
        [GlobalSetup]
        public void Setup()
        {
            var problem = RandomProblem.Create(10_000, P, 7 + P);
            var pr = BatchProblem.Create(new MatrixView(problem.X, problem.Rows, P), problem.Y, default, new RidgeSettings { Penalty = 1.0 });
            gram = BatchKernels.Gram(pr, problem.X, problem.Y, 1);
            factor = BatchKernels.Factor(pr, problem.X, problem.Y, 1);
            h = new double[P * P];
            rhs = new double[P];
            inverse = new double[P * P];
        }

        /// <summary>Cholesky of G + λI, the two triangular solves and the inverse factor (what the Cholesky solver does after the Gram pass).</summary>
        /// <returns>The solution.</returns>
        [Benchmark(Baseline = true)]
        public double[] CholeskySolve()
        {
            int c = P + 1;
            for (int j = 0; j < P; j++)
            {
                Array.Copy(gram, j * c, h, j * P, P);
                h[(j * P) + j] += 1.0;
                rhs[j] = gram[(j * c) + P];
            }

            _ = Triangular.CholeskyUpper(h, P, P, out _, out _);
            Triangular.SolveUpperTransposed(h, P, P, rhs);
            Triangular.SolveUpper(h, P, P, rhs);
            Triangular.InvertUpper(h, P, P, inverse);
            return rhs;
        }

        /// <summary>SVD of the p×p triangular factor R (MathNet), as the SVD solver and the regularization path do.</summary>
        /// <returns>The singular values.</returns>
        [Benchmark]
        public Vector<double> FactorSvd()
        {
            int c = P + 1;
            Matrix<double> r = Matrix<double>.Build.Dense(P, P, (i, j) => j >= i ? factor[(i * c) + j] : 0.0);
            return r.Svd(true).S;
        }
    }
}
