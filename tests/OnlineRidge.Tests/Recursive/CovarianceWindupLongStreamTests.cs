using System;
using System.Linq;
using MathNet.Numerics.LinearAlgebra;
using OnlineRidge.Tests.Properties;
using Xunit;

namespace OnlineRidge.Tests.Recursive
{
    /// <summary>
    /// The long stream of issue 4 (MATH.md §2.3–2.4): an invented plant y = xᵀθ* + noise (σ = 0.01, p = 8, β = 0.98) whose regressors are
    /// random for a block of 20 000 samples, then zero for a block, random again, then a constant vector for a block, and so on — half of the
    /// time without excitation, in long stretches. 10⁶ updates per policy (10⁷ under ONLINERIDGE_EXTENDED=1). Eigenvalues of P are checked with
    /// MathNet.Numerics' symmetric eigensolver (general-purpose reference) every 5 000 updates.
    /// </summary>
    public class CovarianceWindupLongStreamTests
    {
        private const int P = 8;
        private const double Beta = 0.98;
        private const int Block = 20_000;
        private const int CheckEvery = 5_000;
        private const double Noise = 0.01;

        /// <summary>Stated recovery claim: within this many samples after excitation returns the parameter error is below <see cref="RecoveredError"/> and stays there for the rest of the block.</summary>
        private const int RecoverySamples = 1_000;

        /// <summary>Stated recovery level of ‖θ − θ*‖ (the steady-state error is about σ·√(p(1 − β)/2) ≈ 0.001).</summary>
        private const double RecoveredError = 0.05;

        private static int Updates => Environment.GetEnvironmentVariable("ONLINERIDGE_EXTENDED") == "1" ? 10_000_000 : 1_000_000;

        private static readonly double[] Truth = { 1.0, -0.5, 0.25, 2.0, -1.5, 0.75, 0.1, -0.3 };
        private static readonly double[] Constant = { 1.0, 0.5, -0.5, 0.25, 1.0, -1.0, 0.3, 0.8 };

        /// <summary>Kind of block b: 0 random, 1 zero regressors, 2 random, 3 constant regressors.</summary>
        private static int BlockKind(int i) => (i / Block) % 4;

        private sealed class Stream
        {
            private readonly Random rng;

            public Stream(int seed) => rng = new Random(seed);

            public double Normal()
            {
                double u1 = 1.0 - rng.NextDouble();
                double u2 = rng.NextDouble();
                return Math.Sqrt(-2.0 * Math.Log(u1)) * Math.Cos(2.0 * Math.PI * u2);
            }

            /// <summary>Writes sample i into x and returns y.</summary>
            public double Next(int i, double[] x)
            {
                int kind = BlockKind(i);
                for (int j = 0; j < P; j++)
                {
                    x[j] = kind switch
                    {
                        1 => 0.0,
                        3 => Constant[j],
                        _ => Normal(),
                    };
                }

                double y = Noise * Normal();
                for (int j = 0; j < P; j++)
                {
                    y += x[j] * Truth[j];
                }

                return y;
            }
        }

        private static double Error(double[] theta) => Math.Sqrt(theta.Select((t, j) => (t - Truth[j]) * (t - Truth[j])).Sum());

        /// <summary>
        /// Claim (MATH.md §2.4b–d): with each protecting policy P stays exactly symmetric and positive definite over the whole stream, its
        /// eigenvalues stay inside the policy's bounds (trace bound: tr(P) ≤ c_max = 10; EFRA α = 0.5, b = c = 0.005: [σ_lo, σ_hi];
        /// directional μ = 0.98: P is bit-for-bit unchanged over the zero-regressor blocks, the information 1/(cᵀPc) along the constant
        /// regressor never falls below min(its value at the block start, μ/(1 − μ)), and λ_max(P) ≤ 1/δ = 10⁴, the prior's), nothing is NaN,
        /// and within <see cref="RecoverySamples"/> samples after excitation returns ‖θ − θ*‖ &lt; <see cref="RecoveredError"/> for the rest
        /// of the block.
        /// </summary>
        [Theory]
        [InlineData(WindupProtectionKind.TraceBound)]
        [InlineData(WindupProtectionKind.ExponentialResetting)]
        [InlineData(WindupProtectionKind.Directional)]
        public void ProtectedFormStaysBoundedAndRecoversOnTheLongStream(WindupProtectionKind kind)
        {
            const double traceLimit = 10.0;
            const double mu = 0.98;
            WindupProtection policy = kind switch
            {
                WindupProtectionKind.TraceBound => WindupProtection.TraceBound(traceLimit),
                WindupProtectionKind.ExponentialResetting => WindupProtection.ExponentialResetting(0.5, 0.005, 0.005),
                _ => WindupProtection.Directional(mu),
            };
            var est = new CovarianceFormEstimator(P, new CovarianceFormSettings
            {
                ForgettingFactor = kind == WindupProtectionKind.Directional ? 1.0 : Beta,
                PriorWeight = kind == WindupProtectionKind.TraceBound ? 1.0 : 1e-4,
                Windup = policy,
            });
            double lower = est.CovarianceLowerBound;
            double upper = kind == WindupProtectionKind.Directional ? 1e4 : est.CovarianceUpperBound;
            var stream = new Stream(4711);
            var x = new double[P];
            var theta = new double[P];
            var cov = new double[P * P];
            var blockStart = new double[P * P];
            double informationAtStart = 0.0;
            int checks = 0;
            int recoveries = 0;
            for (int i = 0; i < Updates; i++)
            {
                int inBlock = i % Block;
                int blockKind = BlockKind(i);
                if (inBlock == 0 && kind == WindupProtectionKind.Directional)
                {
                    est.CopyCovarianceTo(blockStart);
                    informationAtStart = 1.0 / Quadratic(blockStart, Constant);
                }

                double y = stream.Next(i, x);
                est.Update(x, y);

                if (kind == WindupProtectionKind.Directional && blockKind == 3 && inBlock % 97 == 0)
                {
                    est.CopyCovarianceTo(cov);
                    double information = 1.0 / Quadratic(cov, Constant);
                    double floor = Math.Min(informationAtStart, mu / (1.0 - mu));
                    Assert.True(information >= floor * (1.0 - 1e-9), $"i={i}: information along the constant regressor {information:R} < {floor:R}");
                }

                if (inBlock == Block - 1 && blockKind == 1 && kind == WindupProtectionKind.Directional)
                {
                    est.CopyCovarianceTo(cov);
                    Assert.Equal(blockStart, cov); // zero regressors: no information is lost in any direction
                }

                if ((blockKind == 0 || blockKind == 2) && i >= Block && inBlock >= RecoverySamples)
                {
                    est.CopyParametersTo(theta);
                    double error = Error(theta);
                    Assert.True(error < RecoveredError, $"{kind}, i={i} ({inBlock} samples after excitation returned): ‖θ − θ*‖ = {error:E3}");
                    if (inBlock == RecoverySamples)
                    {
                        recoveries++;
                    }
                }

                if ((i + 1) % CheckEvery == 0)
                {
                    checks++;
                    est.CopyCovarianceTo(cov);
                    Assert.All(cov, v => Assert.False(double.IsNaN(v) || double.IsInfinity(v)));
                    for (int r = 0; r < P; r++)
                    {
                        for (int s = 0; s < r; s++)
                        {
                            Assert.Equal(cov[(r * P) + s], cov[(s * P) + r]);
                        }
                    }

                    (double min, double max) = RecursiveReference.Extremes(Matrix<double>.Build.DenseOfRowMajor(P, P, cov));
                    Assert.True(min > 0.0, $"{kind}, i={i}: λ_min(P) = {min:R}");
                    Assert.True(min >= lower * (1.0 - 1e-9) && max <= upper * (1.0 + 1e-9), $"{kind}, i={i}: eig(P) in [{min:R}, {max:R}], bounds [{lower:R}, {upper:R}]");
                    if (kind == WindupProtectionKind.TraceBound)
                    {
                        double trace = Enumerable.Range(0, P).Sum(j => cov[(j * P) + j]);
                        Assert.True(trace <= traceLimit * (1.0 + 1e-12), $"i={i}: tr(P) = {trace:R}");
                    }
                }
            }

            Assert.Equal(Updates / CheckEvery, checks);
            Assert.True(recoveries >= (Updates / Block / 2) - 1, $"only {recoveries} recoveries checked");
            Assert.Equal(Updates, est.SampleCount);
        }

        /// <summary>
        /// Claim (MATH.md §2.3): without protection the same stream winds up. Over the first zero-regressor block tr(P) grows exactly like
        /// β⁻ᵐ (P ← P/β each step: ratio within 10⁻⁹ relative at m = 1 000, 10 000 and 20 000), and if the idle stretch goes on, the largest
        /// diagonal entry reaches the form's documented ceiling 2¹⁰²⁰ at the predicted step m* = ⌈ln(2¹⁰²⁰/max Pᵢᵢ)/(−ln β)⌉ (± 2): the guard
        /// reports <see cref="BreakdownKind.NonFinite"/> and leaves the state unchanged.
        /// </summary>
        [Fact]
        public void UnprotectedFormWindsUpLikeBetaToTheMinusMUntilTheGuardReportsOverflow()
        {
            var est = new CovarianceFormEstimator(P, new CovarianceFormSettings { ForgettingFactor = Beta });
            var stream = new Stream(4711);
            var x = new double[P];
            var cov = new double[P * P];
            for (int i = 0; i < Block; i++)
            {
                est.Update(x, stream.Next(i, x));
            }

            est.CopyCovarianceTo(cov);
            double trace0 = Trace(cov);
            double maxDiagonal0 = Enumerable.Range(0, P).Max(j => cov[(j * P) + j]);
            Array.Clear(x);
            int m = 0;
            foreach (int target in new[] { 1_000, 10_000, 20_000 })
            {
                for (; m < target; m++)
                {
                    Assert.True(est.TryUpdate(x, stream.Normal() * Noise, 1.0, out _), $"breakdown at m={m}");
                }

                est.CopyCovarianceTo(cov);
                double ratio = Trace(cov) / trace0;
                double expected = Math.Pow(Beta, -target);
                Assert.True(Math.Abs(ratio - expected) <= 1e-9 * expected, $"m={target}: tr(P_m)/tr(P_0) = {ratio:R}, β^(−m) = {expected:R}");
            }

            int predicted = (int)Math.Ceiling(((1020 * Math.Log(2.0)) - Math.Log(maxDiagonal0)) / -Math.Log(Beta));
            Assert.True(predicted > 20_000 && predicted < 60_000, $"predicted overflow step {predicted}");
            int failedAt = -1;
            for (; m < 60_000; m++)
            {
                byte[]? before = m >= predicted - 5 ? Support.SnapshotBytes.Of((s, e) => est.WriteSnapshot(s, e)) : null;
                if (!est.TryUpdate(x, 0.0, 1.0, out BreakdownInfo breakdown))
                {
                    Assert.Equal(BreakdownKind.NonFinite, breakdown.Kind);
                    Assert.NotNull(before);
                    Support.SnapshotBytes.AssertSame(before, Support.SnapshotBytes.Of((s, e) => est.WriteSnapshot(s, e)), "failed update");
                    failedAt = m + 1;
                    break;
                }
            }

            Assert.True(Math.Abs(failedAt - predicted) <= 2, $"overflow at idle step {failedAt}, predicted {predicted}");
        }

        private static double Trace(double[] cov) => Enumerable.Range(0, P).Sum(j => cov[(j * P) + j]);

        private static double Quadratic(double[] cov, double[] u)
        {
            double q = 0.0;
            for (int r = 0; r < P; r++)
            {
                for (int s = 0; s < P; s++)
                {
                    q += u[r] * cov[(r * P) + s] * u[s];
                }
            }

            return q;
        }
    }
}
