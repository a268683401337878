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
    /// Property tests of <see cref="CovarianceFormEstimator"/> against the batch regime-D solution (MATH.md §1.1, §2.1) with the tolerance rule
    /// of MATH.md §10: the covariance form is Gram class with κ_path; the batch reference (<see cref="BatchRidge"/>, QR with refinement) is
    /// orthogonal class. κ, κ_path, η and Y² are computed from the data with MathNet.
    /// </summary>
    public class CovarianceFormPropertyTests
    {
        internal static CovarianceFormSettings SettingsOf(RecursiveCase c, RecursiveData data) => new()
        {
            ForgettingFactor = c.Beta,
            PriorWeight = c.PriorWeight,
            Prior = data.Prior,
            Update = c.Flag ? CovarianceUpdate.JosephLike : CovarianceUpdate.Symmetric,
        };

        /// <summary>The batch regime-D problem of the first k samples: penalty β^k·δ on ‖θ − θ₀‖², no intercept, no standardization (MATH.md §1.1).</summary>
        internal static RidgeFit BatchRegimeD(RecursiveCase c, RecursiveData data, int k) =>
            BatchRidge.Fit(
                new MatrixView(data.RowMajor(k), k, c.P),
                data.Y.AsSpan(0, k),
                new RidgeSettings
                {
                    Penalty = Math.Pow(c.Beta, k) * c.PriorWeight,
                    Prior = data.Prior,
                    ForgettingFactor = c.Beta,
                    FitIntercept = false,
                    Standardize = false,
                    Solver = RidgeSolver.Qr,
                },
                data.W.AsSpan(0, k));

        /// <summary>Largest difference/tolerance ratios of one run; <see cref="ThetaRatioMathPath"/> uses κ_path exactly as MATH.md §10 defines it (no growth term), for reporting only.</summary>
        internal readonly record struct Comparison(double ThetaRatio, double CovarianceRatio, double CostRatio, double ThetaRatioMathPath, double CovarianceRatioMathPath, int Compared, int Skipped);

        /// <summary>
        /// Feeds the case sample by sample and, after every sample k, compares θ_k, P_k and J*_k with the batch regime-D solution of the first k
        /// samples. Returns the largest difference/tolerance ratios seen (each must be ≤ 1).
        /// </summary>
        internal static Comparison CompareAfterEverySample(RecursiveCase c, int checkEvery = 1)
        {
            RecursiveData data = c.Materialize();
            int p = c.P;
            var est = new CovarianceFormEstimator(p, SettingsOf(c, data));
            var path = new RecursiveReference.PathCondition(c.PriorWeight * Matrix<double>.Build.DenseIdentity(p), c.Beta);
            var theta = new double[p];
            var cov = new double[p * p];
            double worstTheta = 0.0;
            double worstCov = 0.0;
            double worstCost = 0.0;
            double worstThetaMath = 0.0;
            double worstCovMath = 0.0;
            int compared = 0;
            int skipped = 0;
            double weightSoFar = 0.0;
            for (int k = 1; k <= data.N; k++)
            {
                est.Update(data.X[k - 1], data.Y[k - 1], data.W[k - 1]);
                path.Add(data.X[k - 1], data.W[k - 1]);
                weightSoFar += data.W[k - 1];
                if (k % checkEvery != 0 && k != data.N)
                {
                    continue;
                }

                est.CopyParametersTo(theta);
                est.CopyCovarianceTo(cov);
                Assert.All(theta, v => Assert.True(double.IsFinite(v)));
                Assert.All(cov, v => Assert.True(double.IsFinite(v)));

                // Exact symmetry (MATH.md §2.2 item 1).
                for (int i = 0; i < p; i++)
                {
                    for (int j = 0; j < i; j++)
                    {
                        Assert.Equal(cov[(i * p) + j], cov[(j * p) + i]);
                    }
                }

                double decay = Math.Pow(c.Beta, k);
                var a = RecursiveGenerators.EffectiveWeights(data.W, k, c.Beta);
                var gamma = (decay * c.PriorWeight) * Matrix<double>.Build.DenseIdentity(p);
                var problem = ToleranceRule.Problem.FromData(data.X.Take(k).ToArray(), data.Y.Take(k).ToArray(), a, gamma, data.Prior);
                double tolA = ToleranceRule.Gram(p, k, path.Path);

                double[] reference;
                double referenceCost;
                double tolB;
                if (weightSoFar == 0.0)
                {
                    // No data weight yet: H_k = β^k·δ·I, the regime-D minimizer is θ₀ and J* = 0 (MATH.md §2.1, w = 0 steps).
                    reference = data.Prior;
                    referenceCost = 0.0;
                    tolB = 0.0;
                }
                else
                {
                    RidgeFit fit = BatchRegimeD(c, data, k);
                    reference = fit.Coefficients.ToArray();
                    referenceCost = fit.ObjectiveValue;
                    tolB = ToleranceRule.Orthogonal(p, k, problem.Kappa, problem.Eta(referenceCost, ToleranceRule.Norm(reference)));
                }

                if (tolA + tolB > ToleranceRule.SkipLevel)
                {
                    skipped++;
                    continue;
                }

                compared++;
                {
                    double tolMath = ToleranceRule.Gram(p, k, path.Max);
                    worstThetaMath = Math.Max(worstThetaMath, ToleranceRule.Distance(theta, reference) / problem.CoefficientBound(tolMath, tolB, ToleranceRule.Norm(reference)));
                    var pmMath = Matrix<double>.Build.DenseOfRowMajor(p, p, cov);
                    var hInvMath = problem.Hessian.Inverse();
                    worstCovMath = Math.Max(worstCovMath, ((pmMath - hInvMath).FrobeniusNorm() / hInvMath.FrobeniusNorm()) / (tolMath + ToleranceRule.Gram(p, k, problem.Kappa)));
                }

                // Coefficients: ‖θ_A − θ_B‖ ≤ (tol_A + tol_B)·max(‖θ_B‖, Y/√λ_max) (MATH.md §10).
                double bound = problem.CoefficientBound(tolA, tolB, ToleranceRule.Norm(reference));
                double diff = ToleranceRule.Distance(theta, reference);
                worstTheta = Math.Max(worstTheta, diff / bound);
                Assert.True(diff <= bound, $"k={k}: ‖θ − θ_batch‖ = {diff:E3} > {bound:E3} (κ_path {path.Max:E2}, path growth {path.Path:E2}, κ {problem.Kappa:E2})");

                // Covariance: ‖P − H⁻¹‖_F/‖H⁻¹‖_F ≤ tol_G(κ_path) + tol_G(κ), H⁻¹ by MathNet (MATH.md §10).
                var hInv = problem.Hessian.Inverse();
                var pm = Matrix<double>.Build.DenseOfRowMajor(p, p, cov);
                double covRel = (pm - hInv).FrobeniusNorm() / hInv.FrobeniusNorm();
                double covTol = ToleranceRule.Gram(p, k, path.Path) + ToleranceRule.Gram(p, k, problem.Kappa);
                worstCov = Math.Max(worstCov, covRel / covTol);
                Assert.True(covRel <= covTol, $"k={k}: relative ‖P − H⁻¹‖ = {covRel:E3} > {covTol:E3}");

                // Minimal cost: |J_A − J_B| ≤ tol_J·(f_A + f_B), f_A = 1 + κ_path (J* recursion of §2.1), f_B = 1 (batch residuals).
                double tolJ = ToleranceRule.Objective(p, k, problem.Y2, referenceCost, problem.LambdaMax, ToleranceRule.Norm(reference)) * (2.0 + path.Path);
                double costDiff = Math.Abs(est.MinimumCost - referenceCost);
                worstCost = Math.Max(worstCost, tolJ > 0 ? costDiff / tolJ : (costDiff == 0 ? 0 : double.PositiveInfinity));
                Assert.True(costDiff <= tolJ, $"k={k}: |J* − J*_batch| = {costDiff:E3} > {tolJ:E3}");
            }

            return new Comparison(worstTheta, worstCov, worstCost, worstThetaMath, worstCovMath, compared, skipped);
        }

        /// <summary>
        /// Theorem (MATH.md §2.1): the covariance-form recursion started at θ₀, P₀ = δ⁻¹I gives, after every sample k, θ_k = argmin of the
        /// regime-D objective Σ β^(k−i)wᵢ(yᵢ − xᵢᵀθ)² + β^k·δ‖θ − θ₀‖², P_k = H_k⁻¹ and J*_k = min J_k — for both update forms of §2.2.
        /// Reference: <see cref="BatchRidge"/> with penalty β^k·δ; tolerance MATH.md §10 with κ_path.
        /// </summary>
        [RecursiveProperty(Replay = "(902117543,296613)")]
        public Property CovarianceFormEqualsBatchRegimeDSolutionAfterEverySample() =>
            Prop.ForAll(RecursiveGenerators.Arbitrary(1, 24), c => { CompareAfterEverySample(c); });

        /// <summary>
        /// Theorem (MATH.md §2.1, last paragraph): a step with weight 0 is a pure forgetting step: θ unchanged (bit for bit), P ← P/β, J* ← β·J*.
        /// </summary>
        [RecursiveProperty(Replay = "(44110327,98767)")]
        public Property CovarianceFormZeroWeightSampleOnlyForgets() =>
            Prop.ForAll(RecursiveGenerators.Arbitrary(1, 40), c =>
            {
                RecursiveData data = c.Materialize();
                int p = c.P;
                var est = new CovarianceFormEstimator(p, SettingsOf(c, data));
                for (int i = 0; i < data.N; i++)
                {
                    est.Update(data.X[i], data.Y[i], data.W[i]);
                }

                var thetaBefore = new double[p];
                var covBefore = new double[p * p];
                est.CopyParametersTo(thetaBefore);
                est.CopyCovarianceTo(covBefore);
                double costBefore = est.MinimumCost;

                est.Update(data.X[0], data.Y[0] + 1.0, 0.0);

                var thetaAfter = new double[p];
                var covAfter = new double[p * p];
                est.CopyParametersTo(thetaAfter);
                est.CopyCovarianceTo(covAfter);
                Assert.Equal(thetaBefore, thetaAfter);
                for (int i = 0; i < p * p; i++)
                {
                    // The estimator keeps P = σ·P̃ and forgets by σ ← σ/β: the reported entries fl(σ·P̃ᵢⱼ) before and after differ from an exact
                    // division by β by the roundings of σ/β and of the two products, at most 3 units of ε/2 each, plus that of this division.
                    double expected = covBefore[i] / c.Beta;
                    Assert.True(Math.Abs(covAfter[i] - expected) <= 2.0 * ToleranceRule.Eps * Math.Abs(expected), $"P[{i}] = {covAfter[i]:R}, expected {expected:R}");
                }

                Assert.True(Math.Abs(est.MinimumCost - (c.Beta * costBefore)) <= ToleranceRule.Eps * c.Beta * costBefore);
            });

        /// <summary>
        /// Theorem (MATH.md §1.1 with β = 1): without forgetting the objective is a sum over samples, so the minimizer does not depend on their
        /// order. Two covariance-form runs over the same samples in different orders agree within the sum of their Gram-class tolerances,
        /// each with its own κ_path (MATH.md §10).
        /// </summary>
        [RecursiveProperty(Replay = "(7719,20251203)")]
        public Property CovarianceFormWithoutForgettingIsOrderIndependent() =>
            Prop.ForAll(RecursiveGenerators.Arbitrary(1, 60), c =>
            {
                RecursiveData data = c.Materialize();
                int p = c.P;
                var settings = SettingsOf(c, data);
                settings = new CovarianceFormSettings { ForgettingFactor = 1.0, PriorWeight = settings.PriorWeight, Prior = settings.Prior, Update = settings.Update };
                int[] order = Enumerable.Range(0, data.N).ToArray();
                new Random(c.Seed ^ 0x5bd1e995).Shuffle(order);

                double RunMaxCondition(int[] sequence, double[] thetaOut)
                {
                    var est = new CovarianceFormEstimator(p, settings);
                    var path = new RecursiveReference.PathCondition(c.PriorWeight * Matrix<double>.Build.DenseIdentity(p), 1.0);
                    foreach (int i in sequence)
                    {
                        est.Update(data.X[i], data.Y[i], data.W[i]);
                        path.Add(data.X[i], data.W[i]);
                    }

                    est.CopyParametersTo(thetaOut);
                    return path.Path;
                }

                var t1 = new double[p];
                var t2 = new double[p];
                double k1 = RunMaxCondition(Enumerable.Range(0, data.N).ToArray(), t1);
                double k2 = RunMaxCondition(order, t2);
                var problem = ToleranceRule.Problem.FromData(data.X, data.Y, data.W, c.PriorWeight * Matrix<double>.Build.DenseIdentity(p), data.Prior);
                double tolA = ToleranceRule.Gram(p, data.N, k1);
                double tolB = ToleranceRule.Gram(p, data.N, k2);
                Assert.All(t2, v => Assert.True(double.IsFinite(v)));
                if (tolA + tolB > ToleranceRule.SkipLevel)
                {
                    return;
                }

                double bound = problem.CoefficientBound(tolA, tolB, ToleranceRule.Norm(t1));
                double diff = ToleranceRule.Distance(t1, t2);
                Assert.True(diff <= bound, $"orders differ by {diff:E3} > {bound:E3}");
            });
    }
}
