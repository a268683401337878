using System;
using System.Globalization;
using System.Linq;
using MathNet.Numerics.LinearAlgebra;
using OnlineRidge.Tests.Properties;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Recursive
{
    /// <summary>
    /// Batch references and the MATH.md §10 tolerance rule for the square-root estimator. The reference is <see cref="BatchRidge"/> with the
    /// QR solver and forgetting factor β̃ = q², q = fl(√β) (MATH.md §3.2, §10); κ, η, Y² come from MathNet on the raw data (the Hessian
    /// Σ aᵢuᵢuᵢᵀ + Γ with u = (1, x) or x and Γ = diag(0, μD²)), with D computed here from the data, never from the code under test.
    /// </summary>
    internal static class SquareRootReference
    {
        /// <summary>Effective weights aᵢ = wᵢ·(q²)^(m−1−i) of the first m samples.</summary>
        public static double[] EffectiveWeights(SquareRootCase c, int m)
        {
            double bt = c.Q * c.Q;
            var a = new double[m];
            for (int i = 0; i < m; i++)
            {
                a[i] = c.W[i] * Math.Pow(bt, m - 1 - i);
            }

            return a;
        }

        /// <summary>Standardization scales Dⱼ of the first m samples: weighted population SD with an intercept, RMS without (MATH.md §4.5); 1 without standardization.</summary>
        public static double[] PenaltyScales(SquareRootCase c, int m, double[] a)
        {
            var d = new double[c.P];
            double wsum = a.Sum();
            for (int j = 0; j < c.P; j++)
            {
                if (!c.Standardize)
                {
                    d[j] = 1.0;
                    continue;
                }

                double mean = 0.0;
                if (c.Intercept)
                {
                    for (int i = 0; i < m; i++)
                    {
                        mean += a[i] * c.X[i][j];
                    }

                    mean /= wsum;
                }

                double s = 0.0;
                for (int i = 0; i < m; i++)
                {
                    double e = c.X[i][j] - mean;
                    s += a[i] * e * e;
                }

                d[j] = Math.Sqrt(s / wsum);
            }

            return d;
        }

        /// <summary>Penalty μ = λ + δ·(q²)^m of the objective at time m (MATH.md §1.1 regimes C and D, §3.3).</summary>
        public static double TotalPenalty(SquareRootCase c, int m, double lambda) =>
            lambda + (c.DecayingPriorWeight * Math.Pow(c.Q * c.Q, m));

        /// <summary>The batch QR reference for the first m samples with penalty μ; null with the breakdown when the batch solver refuses.</summary>
        public static RidgeFit? Batch(SquareRootCase c, int m, double mu, out BreakdownInfo breakdown)
        {
            var flat = new double[m * c.P];
            for (int i = 0; i < m; i++)
            {
                Array.Copy(c.X[i], 0, flat, i * c.P, c.P);
            }

            var settings = new RidgeSettings
            {
                ForgettingFactor = c.Q * c.Q,
                Penalty = mu,
                FitIntercept = c.Intercept,
                Standardize = c.Standardize,
                Prior = c.Prior,
                Solver = RidgeSolver.Qr,
            };
            return BatchRidge.TryFit(new MatrixView(flat, m, c.P), c.Y.AsSpan(0, m), settings, c.W.AsSpan(0, m), out RidgeFit? fit, out breakdown) ? fit : null;
        }

        /// <summary>The spectral facts of the Hessian in the estimator's raw coordinates (intercept first when fitted).</summary>
        public static ToleranceRule.Problem Problem(SquareRootCase c, int m, double mu)
        {
            double[] a = EffectiveWeights(c, m);
            double[] d = PenaltyScales(c, m, a);
            int off = c.Intercept ? 1 : 0;
            int ph = c.P + off;
            var rows = new double[m][];
            for (int i = 0; i < m; i++)
            {
                var u = new double[ph];
                if (off == 1)
                {
                    u[0] = 1.0;
                }

                Array.Copy(c.X[i], 0, u, off, c.P);
                rows[i] = u;
            }

            var gamma = Matrix<double>.Build.Dense(ph, ph);
            for (int j = 0; j < c.P; j++)
            {
                gamma[j + off, j + off] = mu * d[j] * d[j];
            }

            var theta0 = new double[ph];
            if (c.Prior is { } pr)
            {
                Array.Copy(pr, 0, theta0, off, c.P);
            }

            return ToleranceRule.Problem.FromData(rows, c.Y.Take(m).ToArray(), a, gamma, theta0);
        }

        /// <summary>(b₀, θ) with the intercept first when fitted.</summary>
        public static double[] Full(SquareRootCase c, double intercept, ReadOnlySpan<double> theta)
        {
            var v = new double[c.P + (c.Intercept ? 1 : 0)];
            int off = 0;
            if (c.Intercept)
            {
                v[0] = intercept;
                off = 1;
            }

            theta.Slice(0, c.P).CopyTo(v.AsSpan(off));
            return v;
        }

        public static double[] Full(SquareRootCase c, RidgeFit fit) => Full(c, fit.Intercept, fit.Coefficients.ToArray());

        /// <summary>Checkpoints: the first prefix with p + 2 samples of positive weight (or n/3 if later), the midpoint to n, and n.</summary>
        public static int[] Checkpoints(SquareRootCase c)
        {
            int positive = 0;
            int first = c.N;
            for (int i = 0; i < c.N; i++)
            {
                positive += c.W[i] > 0.0 ? 1 : 0;
                if (positive == c.P + 2)
                {
                    first = i + 1;
                    break;
                }
            }

            first = Math.Max(first, c.N / 3);
            int mid = (first + c.N) / 2;
            return new[] { first, mid, c.N }.Distinct().ToArray();
        }

        /// <summary>
        /// Asserts MATH.md §10 for coefficients (and the objective when <paramref name="objectiveA"/> is given) of a square-root solution A
        /// against reference B (both orthogonal class). Returns ‖θ_A − θ_B‖ / bound, or NaN when the rule says skip (tol_A + tol_B &gt; 10⁻²),
        /// in which case only finiteness of a reported solution is checked.
        /// </summary>
        public static double AssertClose(SquareRootCase c, int m, ToleranceRule.Problem problem, double[]? a, double[] b, double jStarB,
            double? objectiveA, string label)
        {
            int ph = b.Length;
            double thetaNorm = ToleranceRule.Norm(b);
            double eta = problem.Eta(jStarB, thetaNorm);
            double tol = ToleranceRule.Orthogonal(ph, m, problem.Kappa, eta);
            if (!(2.0 * tol <= ToleranceRule.SkipLevel))
            {
                if (a is not null)
                {
                    Assert.True(a.All(double.IsFinite), $"{label}: non-finite solution in a skipped case {c}");
                }

                return double.NaN;
            }

            Assert.True(a is not null, $"{label}: the square-root form reported a breakdown where the rule expects a solution (κ={problem.Kappa:E3}, tol={tol:E3}) for {c}");
            double bound = problem.CoefficientBound(tol, tol, thetaNorm);
            double diff = ToleranceRule.Distance(a!, b);
            Assert.True(diff <= bound, string.Format(CultureInfo.InvariantCulture,
                "{0}: |θ_A − θ_B| = {1:E3} > bound {2:E3} (κ={3:E3}, η={4:E3}, m={5}) for {6}", label, diff, bound, problem.Kappa, eta, m, c));
            if (objectiveA is double ja)
            {
                double tolJ = ToleranceRule.Objective(ph, m, problem.Y2, jStarB, problem.LambdaMax, thetaNorm);
                Assert.True(Math.Abs(ja - jStarB) <= 2.0 * tolJ, string.Format(CultureInfo.InvariantCulture,
                    "{0}: |J_A − J_B| = {1:E3} > 2·tol_J = {2:E3} (J_B={3:E6}) for {4}", label, Math.Abs(ja - jStarB), 2.0 * tolJ, jStarB, c));
            }

            return bound > 0.0 ? diff / bound : 0.0;
        }

        /// <summary>Feeds samples [from, to) of the case into the estimator.</summary>
        public static void Feed(SquareRootEstimator est, SquareRootCase c, int from, int to)
        {
            for (int i = from; i < to; i++)
            {
                est.Update(c.X[i], c.Y[i], c.W[i]);
            }
        }

        /// <summary>The estimator's (b₀, θ) at the configured penalty, or null when it reports a breakdown (which must then be a rank or overflow report).</summary>
        public static double[]? Solution(SquareRootEstimator est, SquareRootCase c, out double objective)
        {
            objective = double.NaN;
            if (!est.TrySolve(out BreakdownInfo bd))
            {
                Assert.True(bd.Kind is BreakdownKind.RankDeficient or BreakdownKind.NonFinite, bd.ToString());
                return null;
            }

            var theta = new double[c.P];
            est.CopyParametersTo(theta);
            objective = est.ObjectiveValue;
            return Full(c, est.Intercept, theta);
        }
    }
}
