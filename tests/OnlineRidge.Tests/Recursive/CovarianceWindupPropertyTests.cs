using System;
using System.Linq;
using FsCheck;
using FsCheck.Fluent;
using MathNet.Numerics.LinearAlgebra;
using OnlineRidge.Tests.Properties;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Recursive
{
    /// <summary>
    /// Property tests of the windup policies of <see cref="CovarianceFormEstimator"/> (MATH.md §2.4b–d). References: <see cref="BatchRidge"/>
    /// with explicit sample weights (trace bound), and direct MathNet.Numerics transcriptions of the EFRA and directional-forgetting recursions
    /// (general-purpose library as reference); tolerances by the Gram-class rule of MATH.md §10.
    /// </summary>
    public class CovarianceWindupPropertyTests
    {
        private static readonly double[] LimitFactors = { 1.0, 1.5, 10.0 };

        /// <summary>max(cond(H_k), λ_max(H_k)/λ_min(β_k·H_{k−1})) along a path, the κ_path (with its growth term) of the existing covariance tests.</summary>
        private sealed class VariablePath
        {
            private double previousMin;

            public VariablePath(Matrix<double> h0)
            {
                Hessian = h0.Clone();
                (double min, double max) = RecursiveReference.Extremes(Hessian);
                previousMin = min;
                Path = max / min;
            }

            public Matrix<double> Hessian { get; private set; }

            public double Path { get; private set; }

            public double Kappa { get; private set; }

            public void Set(Matrix<double> h, double factor)
            {
                Hessian = h;
                (double min, double max) = RecursiveReference.Extremes(h);
                Kappa = min > 0 ? max / min : double.PositiveInfinity;
                double growth = previousMin > 0 ? max / (factor * previousMin) : double.PositiveInfinity;
                previousMin = min;
                Path = Math.Max(Path, Math.Max(Kappa, growth));
            }
        }

        /// <summary>
        /// Theorem (MATH.md §2.4b): with βₙ = max(β, tr(Pₙ₋₁)/c_max) the covariance form minimizes, after every sample k, the §1.1 objective
        /// with sample weights wᵢ·Π_{j=i+1..k} βⱼ and prior weight (Π_{j≤k} βⱼ)·δ, and tr(P_k) ≤ c_max. The factors are read back from
        /// <see cref="CovarianceFormEstimator.LogForgettingProduct"/> (weights wᵢ·exp(L_k − Lᵢ)); each recorded βₖ is checked against the rule
        /// with the trace of the previous P. Reference: <see cref="BatchRidge"/> (QR) with those explicit weights, ForgettingFactor = 1,
        /// Standardize = false, FitIntercept = false; tolerance MATH.md §10 (Gram class with κ_path, orthogonal class for the batch fit).
        /// </summary>
        [RecursiveProperty(Replay = "(577291003,90211)")]
        public Property TraceBoundEqualsTheBatchObjectiveWithTheRecordedFactors() =>
            Prop.ForAll(RecursiveGenerators.Arbitrary(1, 24), c =>
            {
                RecursiveData data = c.Materialize();
                int p = c.P;
                double trace0 = 0.0;
                for (int i = 0; i < p; i++)
                {
                    trace0 += 1.0 / c.PriorWeight; // tr(P₀) as the estimator sums it, so that factor 1 is exactly the limit
                }

                double limit = LimitFactors[(uint)c.Seed % 3] * trace0;
                var est = new CovarianceFormEstimator(p, new CovarianceFormSettings
                {
                    ForgettingFactor = c.Beta,
                    PriorWeight = c.PriorWeight,
                    Prior = data.Prior,
                    Update = c.Flag ? CovarianceUpdate.JosephLike : CovarianceUpdate.Symmetric,
                    Windup = WindupProtection.TraceBound(limit),
                });
                var logs = new double[data.N + 1];
                var path = new VariablePath(c.PriorWeight * Matrix<double>.Build.DenseIdentity(p));
                var cov = new double[p * p];
                var theta = new double[p];
                double weightSoFar = 0.0;
                for (int k = 1; k <= data.N; k++)
                {
                    est.CopyCovarianceTo(cov);
                    double trace = 0.0;
                    for (int i = 0; i < p; i++)
                    {
                        trace += cov[(i * p) + i];
                    }

                    est.Update(data.X[k - 1], data.Y[k - 1], data.W[k - 1]);
                    double expectedFactor = Math.Min(1.0, Math.Max(c.Beta, trace / limit));
                    Assert.Equal(expectedFactor, est.LastForgettingFactor);
                    logs[k] = est.LogForgettingProduct;
                    var u = Vector<double>.Build.DenseOfArray(data.X[k - 1]);
                    path.Set((expectedFactor * path.Hessian) + (data.W[k - 1] * u.OuterProduct(u)), expectedFactor);
                    weightSoFar += data.W[k - 1];

                    est.CopyCovarianceTo(cov);
                    est.CopyParametersTo(theta);
                    double traceAfter = Enumerable.Range(0, p).Sum(i => cov[(i * p) + i]);
                    Assert.True(traceAfter <= limit * (1.0 + (1e-12 * p)), $"k={k}: tr(P) = {traceAfter:R} > c_max = {limit:R}");

                    double[] a = Enumerable.Range(0, k).Select(i => data.W[i] * Math.Exp(logs[k] - logs[i + 1])).ToArray();
                    double priorWeight = Math.Exp(logs[k]) * c.PriorWeight;
                    var gamma = priorWeight * Matrix<double>.Build.DenseIdentity(p);
                    var problem = ToleranceRule.Problem.FromData(data.X.Take(k).ToArray(), data.Y.Take(k).ToArray(), a, gamma, data.Prior);
                    double tolA = ToleranceRule.Gram(p, k, path.Path);
                    double[] reference;
                    double tolB;
                    if (weightSoFar == 0.0)
                    {
                        reference = data.Prior;
                        tolB = 0.0;
                    }
                    else
                    {
                        RidgeFit fit = BatchRidge.Fit(
                            new MatrixView(data.RowMajor(k), k, p),
                            data.Y.AsSpan(0, k),
                            new RidgeSettings { Penalty = priorWeight, Prior = data.Prior, ForgettingFactor = 1.0, FitIntercept = false, Standardize = false, Solver = RidgeSolver.Qr },
                            a);
                        reference = fit.Coefficients.ToArray();
                        tolB = ToleranceRule.Orthogonal(p, k, problem.Kappa, problem.Eta(fit.ObjectiveValue, ToleranceRule.Norm(reference)));
                    }

                    if (tolA + tolB > ToleranceRule.SkipLevel)
                    {
                        continue;
                    }

                    double bound = problem.CoefficientBound(tolA, tolB, ToleranceRule.Norm(reference));
                    double diff = ToleranceRule.Distance(theta, reference);
                    Assert.True(diff <= bound, $"k={k}: ‖θ − θ_batch‖ = {diff:E3} > {bound:E3} (κ_path {path.Path:E2})");
                    var hInv = problem.Hessian.Inverse();
                    double covRel = (Matrix<double>.Build.DenseOfRowMajor(p, p, cov) - hInv).FrobeniusNorm() / hInv.FrobeniusNorm();
                    double covTol = tolA + ToleranceRule.Gram(p, k, problem.Kappa);
                    Assert.True(covRel <= covTol, $"k={k}: relative ‖P − H⁻¹‖ = {covRel:E3} > {covTol:E3}");
                }
            });

        /// <summary>
        /// Theorem (MATH.md §2.4c, invariant bounds derived there): EFRA equals a direct MathNet transcription of its three lines (with x, y
        /// scaled by √w, MATH.md §0), and σ_lo·I ⪯ Pₙ ⪯ σ_hi·I after every sample from P₀ = σ_hi·I, for every regressor sequence. Parameters:
        /// β ∈ {0.9, 0.95, 0.98, 0.99}, α ∈ {0.3, 0.5, 0.8}, b = c chosen to satisfy η² + 4bc ≤ (1 − α)². Tolerance: Gram class (MATH.md §10)
        /// with κ = σ_hi/σ_lo, which bounds cond(P) along the whole path; θ relative to ‖θ_ref‖ plus the accumulated step lengths.
        /// </summary>
        [RecursiveProperty(Replay = "(311045901,7125)")]
        public Property ExponentialResettingEqualsItsTranscriptionAndStaysInItsBounds() =>
            Prop.ForAll(RecursiveGenerators.Arbitrary(1, 40), c =>
            {
                RecursiveData data = c.Materialize();
                int p = c.P;
                double beta = new[] { 0.9, 0.95, 0.98, 0.99 }[(uint)c.Seed % 4];
                double alpha = new[] { 0.3, 0.5, 0.8 }[((uint)c.Seed / 4) % 3];
                double eta = (1.0 - beta) / beta;
                double bc = 0.5 * Math.Sqrt(((1.0 - alpha) * (1.0 - alpha)) - (eta * eta)) * (((uint)c.Seed / 12 % 2 == 0) ? 0.1 : 0.9);
                var policy = WindupProtection.ExponentialResetting(alpha, bc, bc);
                var est = new CovarianceFormEstimator(p, new CovarianceFormSettings { ForgettingFactor = beta, Prior = data.Prior, Windup = policy });
                (double lo, double hi) = policy.Bounds(beta);
                Assert.Equal(lo, est.CovarianceLowerBound);
                Assert.Equal(hi, est.CovarianceUpperBound);
                var identity = Matrix<double>.Build.DenseIdentity(p);
                Matrix<double> pRef = hi * identity;
                Vector<double> tRef = Vector<double>.Build.DenseOfArray(data.Prior);
                double pathLength = 0.0;
                var cov = new double[p * p];
                var theta = new double[p];
                double tol = 2.0 * ToleranceRule.Gram(p, data.N, hi / lo);
                for (int k = 0; k < data.N; k++)
                {
                    double w = data.W[k];
                    var x = Vector<double>.Build.DenseOfArray(data.X[k]);
                    double e = data.Y[k] - (x * tRef);
                    Vector<double> px = pRef * x;
                    double denominator = 1.0 + (w * (x * px));
                    Vector<double> step = (alpha * w * e / denominator) * px;
                    tRef += step;
                    pathLength += step.L2Norm();
                    pRef = (pRef / beta) - ((alpha * w / denominator) * px.OuterProduct(px)) + (bc * identity) - (bc * (pRef * pRef));

                    est.Update(data.X[k], data.Y[k], w);
                    est.CopyCovarianceTo(cov);
                    est.CopyParametersTo(theta);
                    var pm = Matrix<double>.Build.DenseOfRowMajor(p, p, cov);
                    double covRel = (pm - pRef).FrobeniusNorm() / pRef.FrobeniusNorm();
                    Assert.True(covRel <= tol, $"k={k}: relative ‖P − P_ref‖ = {covRel:E3} > {tol:E3}");
                    double diff = ToleranceRule.Distance(theta, tRef.ToArray());
                    double thetaTol = tol * (tRef.L2Norm() + pathLength);
                    Assert.True(diff <= thetaTol, $"k={k}: ‖θ − θ_ref‖ = {diff:E3} > {thetaTol:E3}");
                    (double min, double max) = RecursiveReference.Extremes(pm);
                    Assert.True(min >= lo * (1.0 - 1e-9) && max <= hi * (1.0 + 1e-9), $"k={k}: eig(P) in [{min:R}, {max:R}], bounds [{lo:R}, {hi:R}]");
                }

                Assert.True(double.IsNaN(est.MinimumCost));
            });

        /// <summary>
        /// Theorem (MATH.md §2.4d, information-form reading): directional forgetting gives Hₙ = H⁺ − [(1 − μ)/(xᵀH⁺⁻¹x)]·x·xᵀ with
        /// H⁺ = Hₙ₋₁ + w·x·xᵀ (when xᵀPₙ₋₁x &gt; 0), Pₙ = Hₙ⁻¹, and θ unchanged by the forgetting step: θₙ = H⁺⁻¹(Hₙ₋₁θₙ₋₁ + w·x·y).
        /// Reference: that recursion with MathNet (inverse and solve); tolerance MATH.md §10, Gram class with the path condition of the
        /// reference Hessians (H⁺ and Hₙ).
        /// </summary>
        [RecursiveProperty(Replay = "(88120457,44321)")]
        public Property DirectionalForgettingEqualsItsInformationFormReading() =>
            Prop.ForAll(RecursiveGenerators.Arbitrary(1, 40), c =>
            {
                RecursiveData data = c.Materialize();
                int p = c.P;
                double mu = new[] { 0.5, 0.9, 0.98, 1.0 }[(uint)c.Seed % 4];
                var est = new CovarianceFormEstimator(p, new CovarianceFormSettings
                {
                    PriorWeight = c.PriorWeight,
                    Prior = data.Prior,
                    Windup = WindupProtection.Directional(mu),
                });
                var path = new VariablePath(c.PriorWeight * Matrix<double>.Build.DenseIdentity(p));
                Vector<double> tRef = Vector<double>.Build.DenseOfArray(data.Prior);
                var cov = new double[p * p];
                var theta = new double[p];
                double scale = tRef.L2Norm();
                for (int k = 0; k < data.N; k++)
                {
                    double w = data.W[k];
                    var x = Vector<double>.Build.DenseOfArray(data.X[k]);
                    Matrix<double> h = path.Hessian;
                    double s = x * h.Solve(x);
                    Matrix<double> hPlus = h + (w * x.OuterProduct(x));
                    tRef = hPlus.Solve((h * tRef) + (w * data.Y[k] * x));
                    path.Set(hPlus, 1.0);
                    Matrix<double> hNext = s > 0 ? hPlus - (((1.0 - mu) / (x * hPlus.Solve(x))) * x.OuterProduct(x)) : hPlus;
                    path.Set(hNext, 1.0);
                    scale = Math.Max(scale, tRef.L2Norm());

                    est.Update(data.X[k], data.Y[k], w);
                    est.CopyCovarianceTo(cov);
                    est.CopyParametersTo(theta);
                    double tol = 2.0 * ToleranceRule.Gram(p, k + 1, path.Path);
                    if (tol > ToleranceRule.SkipLevel)
                    {
                        Assert.All(cov, v => Assert.True(double.IsFinite(v)));
                        continue;
                    }

                    var pInv = hNext.Inverse();
                    double covRel = (Matrix<double>.Build.DenseOfRowMajor(p, p, cov) - pInv).FrobeniusNorm() / pInv.FrobeniusNorm();
                    Assert.True(covRel <= tol, $"k={k}: relative ‖P − H⁻¹‖ = {covRel:E3} > {tol:E3} (path {path.Path:E2})");
                    double diff = ToleranceRule.Distance(theta, tRef.ToArray());
                    double bound = tol * Math.Max(scale, Math.Sqrt(data.Y.Take(k + 1).Sum(v => v * v)) / Math.Sqrt(RecursiveReference.Extremes(hPlus).Max));
                    Assert.True(diff <= bound, $"k={k}: ‖θ − θ_ref‖ = {diff:E3} > {bound:E3}");
                }

                Assert.True(double.IsNaN(est.MinimumCost));
                Assert.Equal(0.0, est.LogForgettingProduct);
            });
    }
}
