using System;
using System.Linq;
using MathNet.Numerics.LinearAlgebra;
using Xunit;

namespace OnlineRidge.Tests.Diagnostics
{
    /// <summary>The excitation monitor: its information measure against an independent computation, and its verdicts in invented scenarios.</summary>
    public class ExcitationMonitorTests
    {
        private static double Gauss(Random rng) => Math.Sqrt(-2.0 * Math.Log(1.0 - rng.NextDouble())) * Math.Cos(2.0 * Math.PI * rng.NextDouble());

        /// <summary>WeakestInformation = λ_min(D⁻¹M_xxD⁻¹) with M_xx the forgetting-weighted centered co-moment (MATH.md §4.1), computed here with MathNet.</summary>
        [Fact]
        public void WeakestInformationIsTheSmallestEigenvalueOfTheScaledRecentComoment()
        {
            var rng = new Random(5);
            const int P = 3;
            const int N = 300;
            const double Beta = 0.98;
            double[] reference = { 1.0, 2.0, 0.5 };
            var monitor = new ExcitationMonitor(P, Beta, referenceScales: reference);
            var xs = new double[N][];
            for (int i = 0; i < N; i++)
            {
                double common = Gauss(rng);
                xs[i] = new[] { common + (0.3 * Gauss(rng)), 2.0 * Gauss(rng), 0.5 * (common + Gauss(rng)) + 4.0 };
                monitor.Update(xs[i]);
            }

            double q = Math.Sqrt(Beta);
            var a = Enumerable.Range(0, N).Select(i => Math.Pow(q * q, N - 1 - i)).ToArray();
            double w = a.Sum();
            var mean = Enumerable.Range(0, P).Select(j => Enumerable.Range(0, N).Sum(i => a[i] * xs[i][j]) / w).ToArray();
            var m = Matrix<double>.Build.Dense(P, P, (j, k) => Enumerable.Range(0, N).Sum(i => a[i] * (xs[i][j] - mean[j]) * (xs[i][k] - mean[k])) / (reference[j] * reference[k]));
            double expected = m.Evd(Symmetricity.Symmetric).EigenValues.Select(c => c.Real).Min();
            var status = monitor.Evaluate();
            Assert.Equal(1.0, status.WeakestInformation / expected, 9);
            Assert.True(status.IsSufficient);
            Assert.Equal(-1, status.ConstantColumn);
        }

        /// <summary>
        /// Invented scenario (a heater whose power input is held constant while the machine idles): after the idle stretch the monitor
        /// reports the input as constant and the estimate as unsupported; when excitation returns, it recovers.
        /// </summary>
        [Fact]
        public void IdleInputIsFlaggedAndRecoveryIsSeen()
        {
            var rng = new Random(9);
            var monitor = new ExcitationMonitor(2, 0.98);
            for (int i = 0; i < 400; i++)
            {
                monitor.Update(new[] { 5.0 + Gauss(rng), 20.0 + (3.0 * Gauss(rng)) });
            }

            Assert.True(monitor.Evaluate().IsSufficient);
            for (int i = 0; i < 3000; i++)
            {
                monitor.Update(new[] { 5.0, 20.0 + (3.0 * Gauss(rng)) });
            }

            var idle = monitor.Evaluate();
            Assert.False(idle.IsSufficient);
            Assert.Equal(0, idle.ConstantColumn);
            for (int i = 0; i < 400; i++)
            {
                monitor.Update(new[] { 5.0 + Gauss(rng), 20.0 + (3.0 * Gauss(rng)) });
            }

            Assert.True(monitor.Evaluate().IsSufficient);
        }

        /// <summary>
        /// Loss of amplitude (input reduced to sensor noise 10⁻³ of its normal spread) is flagged only when reference scales are given:
        /// without them the monitor divides by the small recent spread and stays blind, as documented.
        /// </summary>
        [Fact]
        public void AmplitudeLossNeedsReferenceScales()
        {
            var rng = new Random(10);
            var withReference = new ExcitationMonitor(2, 0.98, referenceScales: new[] { 1.0, 3.0 });
            var without = new ExcitationMonitor(2, 0.98);
            for (int i = 0; i < 2000; i++)
            {
                var x = new[] { 5.0 + (1e-3 * Gauss(rng)), 20.0 + (3.0 * Gauss(rng)) };
                withReference.Update(x);
                without.Update(x);
            }

            var a = withReference.Evaluate();
            Assert.False(a.IsSufficient);
            Assert.True(Math.Abs(a.WeakestDirection[0]) > 0.99, "the weak direction is the first regressor");
            Assert.True(without.Evaluate().IsSufficient);
        }

        [Fact]
        public void DuplicatedRegressorsLeaveTheirDifferenceUnexcited()
        {
            var rng = new Random(11);
            var monitor = new ExcitationMonitor(3, 0.99);
            for (int i = 0; i < 1000; i++)
            {
                double u = Gauss(rng);
                monitor.Update(new[] { u, u, Gauss(rng) });
            }

            var s = monitor.Evaluate();
            Assert.False(s.IsSufficient);
            Assert.True(s.ReciprocalCondition < 1e-6);
            Assert.Equal(1.0 / Math.Sqrt(2.0), Math.Abs(s.WeakestDirection[0]), 5);
            Assert.Equal(-s.WeakestDirection[0], s.WeakestDirection[1], 5);
        }

        [Fact]
        public void ArgumentsAreValidatedByName()
        {
            Assert.Equal("parameterCount", Assert.Throws<ArgumentOutOfRangeException>(() => new ExcitationMonitor(0, 0.9)).ParamName);
            Assert.Equal("forgettingFactor", Assert.Throws<ArgumentOutOfRangeException>(() => new ExcitationMonitor(2, 1.5)).ParamName);
            Assert.Equal("minimumInformation", Assert.Throws<ArgumentOutOfRangeException>(() => new ExcitationMonitor(2, 0.9, 0.0)).ParamName);
            Assert.Equal("referenceScales", Assert.Throws<ArgumentException>(() => new ExcitationMonitor(2, 0.9, 10, new[] { 1.0, -1.0 })).ParamName);
            Assert.False(new ExcitationMonitor(2, 0.9).Evaluate().IsSufficient);
        }
    }
}
