using System;
using System.Collections.Generic;
using System.Runtime.CompilerServices;
using BenchmarkDotNet.Attributes;
using MathNet.Numerics.LinearAlgebra;

namespace OnlineRidge.Benchmarks
{
    /// <summary>
    /// Cost of one <c>Update(x, y)</c> of each recursive form over a pre-generated stream (fixed seed) that is cycled, forgetting β = 0.999
    /// (the settings of the native yardstick in refbench/rls.c). Each invocation folds in the whole stream, and
    /// <see cref="BenchmarkAttribute.OperationsPerInvoke"/> divides by its length, so the Mean column is nanoseconds per update and the
    /// Allocated column bytes per update. The baseline is the covariance-form recursion a developer would write with MathNet matrix objects.
    /// </summary>
    /// <remarks>On a shared, oversubscribed machine run with short iterations (e.g. <c>--iterationTime 5 --iterationCount 41</c>) and read the
    /// Min and Median columns: an iteration that fits in one scheduler slice measures the undisturbed cost.</remarks>
    [MemoryDiagnoser]
    [MinColumn]
    [MedianColumn]
    public class RecursiveUpdateBenchmarks
    {
        /// <summary>Samples in the stream; every benchmark method folds in all of them per invocation.</summary>
        public const int StreamLength = 1024;

        private const int Seed = 20_261_203;
        private const double Beta = 0.999;

        private RandomProblem problem = null!;
        private CovarianceFormEstimator covariance = null!;
        private SquareRootEstimator squareRoot = null!;
        private SquareRootEstimator squareRootStandardized = null!;
        private InformationFormEstimator information = null!;
        private InformationFormEstimator informationStandardized = null!;
        private MathNetCovarianceRls baseline = null!;

        /// <summary>When set (by <c>--smoke</c>), only the smallest p runs, so that a dry run ends in seconds.</summary>
        internal static bool Smoke { get; set; }

        /// <summary>Number of regressors p.</summary>
        [ParamsSource(nameof(ParameterCounts))]
        public int P { get; set; }

        /// <summary>The values of <see cref="P"/>: 4 … 128, or 4 in smoke mode.</summary>
        public static IEnumerable<int> ParameterCounts => Smoke ? new[] { 4 } : new[] { 4, 8, 16, 32, 64, 128 };

        /// <summary>Generates the stream and the estimators, and runs every estimator over the stream once (warm state, no start-up transient).</summary>
        [GlobalSetup]
        public void Setup()
        {
            problem = RandomProblem.Create(StreamLength, P, Seed + P);
            covariance = new CovarianceFormEstimator(P, new CovarianceFormSettings { ForgettingFactor = Beta });
            squareRoot = new SquareRootEstimator(P, new SquareRootSettings { ForgettingFactor = Beta, FitIntercept = false, Standardize = false });
            squareRootStandardized = new SquareRootEstimator(P, new SquareRootSettings { ForgettingFactor = Beta });
            information = new InformationFormEstimator(P, new RidgeSettings { ForgettingFactor = Beta, FitIntercept = false, Standardize = false });
            informationStandardized = new InformationFormEstimator(P, new RidgeSettings { ForgettingFactor = Beta });
            baseline = new MathNetCovarianceRls(P, Beta, CovarianceFormSettings.DefaultPriorWeight);
            CovarianceForm();
            SquareRoot();
            SquareRootWithIntercept();
            InformationForm();
            InformationFormWithIntercept();
            MathNetCovarianceForm();
        }

        /// <summary>Covariance form (symmetric update on the packed triangle). No intercept or standardization in this form.</summary>
        [Benchmark(OperationsPerInvoke = StreamLength)]
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
        public void CovarianceForm()
        {
            double[] x = problem.X;
            double[] y = problem.Y;
            int p = P;
            CovarianceFormEstimator e = covariance;
            for (int i = 0; i < StreamLength; i++)
            {
                e.Update(x.AsSpan(i * p, p), y[i]);
            }
        }

        /// <summary>Square-root information form, factor of [x y] (no intercept column, no standardization).</summary>
        [Benchmark(OperationsPerInvoke = StreamLength)]
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
        public void SquareRoot()
        {
            double[] x = problem.X;
            double[] y = problem.Y;
            int p = P;
            SquareRootEstimator e = squareRoot;
            for (int i = 0; i < StreamLength; i++)
            {
                e.Update(x.AsSpan(i * p, p), y[i]);
            }
        }

        /// <summary>Square-root information form with the defaults: intercept column (factor of [1 x y]) and standardization at solve time.</summary>
        [Benchmark(OperationsPerInvoke = StreamLength)]
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
        public void SquareRootWithIntercept()
        {
            double[] x = problem.X;
            double[] y = problem.Y;
            int p = P;
            SquareRootEstimator e = squareRootStandardized;
            for (int i = 0; i < StreamLength; i++)
            {
                e.Update(x.AsSpan(i * p, p), y[i]);
            }
        }

        /// <summary>Information form, Gram rank-1 update of [x y] (no intercept, no standardization).</summary>
        [Benchmark(OperationsPerInvoke = StreamLength)]
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
        public void InformationForm()
        {
            double[] x = problem.X;
            double[] y = problem.Y;
            int p = P;
            InformationFormEstimator e = information;
            for (int i = 0; i < StreamLength; i++)
            {
                e.Update(x.AsSpan(i * p, p), y[i]);
            }
        }

        /// <summary>Information form with the defaults: streaming means and centred co-moments (intercept, standardization at solve time).</summary>
        [Benchmark(OperationsPerInvoke = StreamLength)]
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
        public void InformationFormWithIntercept()
        {
            double[] x = problem.X;
            double[] y = problem.Y;
            int p = P;
            InformationFormEstimator e = informationStandardized;
            for (int i = 0; i < StreamLength; i++)
            {
                e.Update(x.AsSpan(i * p, p), y[i]);
            }
        }

        /// <summary>The plain MathNet covariance-form recursion (see <see cref="MathNetCovarianceRls"/>).</summary>
        [Benchmark(Baseline = true, OperationsPerInvoke = StreamLength)]
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
        public void MathNetCovarianceForm()
        {
            double[] x = problem.X;
            double[] y = problem.Y;
            int p = P;
            MathNetCovarianceRls e = baseline;
            for (int i = 0; i < StreamLength; i++)
            {
                e.Update(x, i * p, y[i]);
            }
        }
    }

    /// <summary>
    /// Cost of reading the estimate of each recursive form once the stream has been folded in: the covariance form keeps θ and only copies
    /// it; the square-root form solves the triangular system of its factor (with standardization and a penalty other than the one cached);
    /// the information form factors and solves the penalized normal equations (Cholesky with a condition estimate).
    /// </summary>
    [MemoryDiagnoser]
    [MinColumn]
    [MedianColumn]
    public class RecursiveSolveBenchmarks
    {
        private const int Seed = 20_261_204;
        private const double Beta = 0.999;
        private const double SolvePenalty = 0.5;

        private CovarianceFormEstimator covariance = null!;
        private SquareRootEstimator squareRoot = null!;
        private InformationFormEstimator information = null!;
        private double[] coefficients = null!;

        /// <summary>Number of regressors p.</summary>
        [ParamsSource(nameof(ParameterCounts))]
        public int P { get; set; }

        /// <summary>The values of <see cref="P"/>, as for <see cref="RecursiveUpdateBenchmarks"/>.</summary>
        public static IEnumerable<int> ParameterCounts => RecursiveUpdateBenchmarks.ParameterCounts;

        /// <summary>Folds one stream into each estimator (defaults: intercept and standardization where the form has them).</summary>
        [GlobalSetup]
        public void Setup()
        {
            var problem = RandomProblem.Create(RecursiveUpdateBenchmarks.StreamLength, P, Seed + P);
            covariance = new CovarianceFormEstimator(P, new CovarianceFormSettings { ForgettingFactor = Beta });
            squareRoot = new SquareRootEstimator(P, new SquareRootSettings { ForgettingFactor = Beta, Penalty = 1.0 });
            information = new InformationFormEstimator(P, new RidgeSettings { ForgettingFactor = Beta, Penalty = 1.0 });
            coefficients = new double[P];
            for (int i = 0; i < problem.Rows; i++)
            {
                ReadOnlySpan<double> x = problem.X.AsSpan(i * P, P);
                covariance.Update(x, problem.Y[i]);
                squareRoot.Update(x, problem.Y[i]);
                information.Update(x, problem.Y[i]);
            }
        }

        /// <summary>Covariance form: θ is part of the state, reading it is a copy.</summary>
        /// <returns>The first coefficient (returned so the work is not eliminated).</returns>
        [Benchmark]
        public double CovarianceCopyParameters()
        {
            covariance.CopyParametersTo(coefficients);
            return coefficients[0];
        }

        /// <summary>Square-root form: back substitution on the factor (not the cached solution: the penalty differs from the settings').</summary>
        /// <returns>The intercept.</returns>
        [Benchmark]
        public double SquareRootSolve() => squareRoot.SolveWithPenalty(SolvePenalty, coefficients);

        /// <summary>Information form: Cholesky solve of the penalized normal equations.</summary>
        /// <returns>The intercept.</returns>
        [Benchmark]
        public double InformationSolve() => information.Solve(SolvePenalty, PenaltyRegime.Constant, coefficients);
    }

    /// <summary>
    /// Covariance-form RLS as a developer would write it with MathNet matrix and vector objects: v = P x, d = β + xᵀv, θ += v·e/d,
    /// P ← (P − v vᵀ/d)/β. The rank-1 term is the outer product of one vector with itself, so P stays exactly symmetric (the literal
    /// P − k (xᵀP) form drifts apart and diverges under forgetting). Allocates its temporaries, as such code does.
    /// </summary>
    internal sealed class MathNetCovarianceRls
    {
        private readonly double beta;
        private readonly Vector<double> x;
        private Matrix<double> covariance;
        private Vector<double> theta;

        public MathNetCovarianceRls(int p, double beta, double priorWeight)
        {
            this.beta = beta;
            x = Vector<double>.Build.Dense(p);
            covariance = Matrix<double>.Build.DenseIdentity(p) / priorWeight;
            theta = Vector<double>.Build.Dense(p);
        }

        public Vector<double> Theta => theta;

        public void Update(double[] rows, int offset, double y)
        {
            for (int j = 0; j < x.Count; j++)
            {
                x[j] = rows[offset + j];
            }

            Vector<double> v = covariance * x;
            double d = beta + x.DotProduct(v);
            double e = y - x.DotProduct(theta);
            theta = theta + (v * (e / d));
            covariance = (covariance - (v.OuterProduct(v) / d)) / beta;
        }
    }
}
