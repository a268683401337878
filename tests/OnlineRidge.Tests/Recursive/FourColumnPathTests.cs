using System;
using System.IO;
using OnlineRidge.Persistence;
using Xunit;

namespace OnlineRidge.Tests.Recursive
{
    /// <summary>
    /// At p = 4 the covariance and information forms take a register path that does the common update in one method (the general path stays
    /// for everything else). It is meant to be the general path restricted to the common step, with the same arithmetic: these tests run two
    /// estimators over the same stream, one with the path switched off, and require the same outcome of every call (accepted, refused with the
    /// same breakdown, or the same exception; through TryUpdate and through Update, which has a shortcut of its own) and the same state bit for bit — parameters, covariance, counters and the whole binary snapshot.
    /// The streams mix ordinary samples with the cases the path hands to the general path: zero weights, non-finite values, regressors so
    /// large or small that the projection is rescaled or the statistics overflow, and heavy repeated samples that strain definiteness; β = 0.9
    /// makes the scale renormalize about every 210 updates. The reference is the general path of the same estimator, which the property
    /// tests check against the batch solution (CovarianceFormPropertyTests, InformationFormPropertyTests: MATH.md §2 and §5 against
    /// BatchRidge, itself checked against the NIST StRD certified values); here only the agreement of the two paths is tested.
    /// </summary>
    public class FourColumnPathTests
    {
        private const int P = 4;

        /// <summary>One sample of the mixed stream (see the class remarks); deterministic in its seed.</summary>
        private static (double[] X, double Y, double W) Sample(Random random, int n)
        {
            var x = new double[P];
            for (int j = 0; j < P; j++)
            {
                x[j] = (random.NextDouble() * 2.0) - 1.0;
            }

            double y = x[0] - (0.5 * x[1]) + (0.25 * x[3]) + (0.1 * random.NextDouble());
            double w = 0.5 + random.NextDouble();
            switch (n % 211)
            {
                case 7: w = 0.0; break;
                case 31: Scale(x, 1e150); y = 1e150; break;
                case 37: Scale(x, 1e153); break;
                case 41: Scale(x, 1e156); break;
                case 53: Scale(x, 1e-153); break;
                case 59: Scale(x, 1e-157); break;
                case 79: x[2] = double.NaN; break;
                case 101: y = double.PositiveInfinity; break;
                case 113: Scale(x, 1e140); break;
                case 127: y = 1e200; break;
                case 149: w = -1.0; break;
                default:
                    if (n % 211 >= 160 && n % 211 < 170)
                    {
                        // Ten heavy copies of one direction: P shrinks fast along it (cancellation in the new diagonal).
                        x = new[] { 0.6, -0.8, 0.0, 1e-9 };
                        w = 1e14;
                    }

                    break;
            }

            if (n % 17 == 5)
            {
                w = 0.0;
            }

            return (x, y, w);
        }

        private static void Scale(double[] x, double f)
        {
            for (int j = 0; j < x.Length; j++)
            {
                x[j] *= f;
            }
        }

        /// <summary>Runs one TryUpdate and reports its outcome as text: accepted, refused with the breakdown, or the exception's type and message.</summary>
        private static string Outcome(Func<(bool Ok, BreakdownInfo Info)> call)
        {
            try
            {
                (bool ok, BreakdownInfo info) = call();
                return ok ? "accepted" : $"refused {info.Kind} {info.PivotIndex} {info.PivotValue:R} {info.ConditionEstimate:R}";
            }
            catch (ArgumentException ex)
            {
                return $"{ex.GetType().Name}: {ex.Message}";
            }
        }

        /// <summary>Solves into <paramref name="theta"/> (NaN when the solve breaks down) and says how it went.</summary>
        private static string Solve(InformationFormEstimator estimator, double[] theta)
        {
            try
            {
                estimator.CopyParametersTo(theta);
                return "solved";
            }
            catch (RidgeBreakdownException ex)
            {
                Array.Fill(theta, double.NaN);
                return ex.Message;
            }
        }

        /// <summary>Asserts that the register path (through TryUpdate and through Update) did what the general path did; 1 when it was a refusal.</summary>
        private static int SameOutcome(int n, string expected, string actual, string updated)
        {
            Assert.True(expected == actual, $"n={n}: general '{expected}', register path '{actual}'");
            Assert.True(expected == updated, $"n={n}: general '{expected}', Update '{updated}'");
            return expected.StartsWith("refused", StringComparison.Ordinal) ? 1 : 0;
        }

        /// <summary>Runs one Update and reports its outcome in the words of <see cref="Outcome"/> (a breakdown arrives as the exception's info).</summary>
        private static string UpdateOutcome(Action call)
        {
            try
            {
                call();
                return "accepted";
            }
            catch (RidgeBreakdownException ex)
            {
                BreakdownInfo info = ex.Info;
                return $"refused {info.Kind} {info.PivotIndex} {info.PivotValue:R} {info.ConditionEstimate:R}";
            }
            catch (ArgumentException ex)
            {
                return $"{ex.GetType().Name}: {ex.Message}";
            }
        }

        private static byte[] Snapshot(Action<Stream> write)
        {
            using var stream = new MemoryStream();
            write(stream);
            return stream.ToArray();
        }

        private static void AssertBitwiseEqual(double[] expected, double[] actual, string what, int n)
        {
            for (int j = 0; j < expected.Length; j++)
            {
                Assert.True(BitConverter.DoubleToInt64Bits(expected[j]) == BitConverter.DoubleToInt64Bits(actual[j]), $"n={n} {what}[{j}]: {expected[j]:R} vs {actual[j]:R}");
            }
        }

        /// <summary>Covariance form, symmetric in-place update, no windup protection: the register path against the general path.</summary>
        [Theory]
        [InlineData(0.9, InvalidSamplePolicy.Throw)]
        [InlineData(1.0, InvalidSamplePolicy.Throw)]
        [InlineData(0.9, InvalidSamplePolicy.SkipAndCount)]
        public void Covariance_form_register_path_changes_exactly_what_the_general_path_changes(double beta, InvalidSamplePolicy policy)
        {
            var settings = new CovarianceFormSettings { ForgettingFactor = beta, InvalidSamples = policy };
            var fast = new CovarianceFormEstimator(P, settings);
            var general = new CovarianceFormEstimator(P, settings) { FourColumnPathEnabled = false };
            var viaUpdate = new CovarianceFormEstimator(P, settings);
            Assert.Equal(BuildInfo.HasIntrinsicKernels, fast.FourColumnPathEnabled);
            Assert.False(general.FourColumnPathEnabled);

            var random = new Random(9400 + (int)(beta * 10) + (int)policy);
            var a = new double[P];
            var b = new double[P];
            var pa = new double[P * P];
            var pb = new double[P * P];
            int refused = 0;
            for (int n = 0; n < 4000; n++)
            {
                (double[] x, double y, double w) = Sample(random, n);
                refused += SameOutcome(
                    n,
                    Outcome(() => (general.TryUpdate(x, y, w, out BreakdownInfo info), info)),
                    Outcome(() => (fast.TryUpdate(x, y, w, out BreakdownInfo info), info)),
                    UpdateOutcome(() => viaUpdate.Update(x, y, w)));

                general.CopyParametersTo(a);
                fast.CopyParametersTo(b);
                AssertBitwiseEqual(a, b, "θ", n);
                Assert.Equal(BitConverter.DoubleToInt64Bits(general.LastPriorError), BitConverter.DoubleToInt64Bits(fast.LastPriorError));
                Assert.Equal(BitConverter.DoubleToInt64Bits(general.MinimumCost), BitConverter.DoubleToInt64Bits(fast.MinimumCost));
                Assert.Equal(general.SampleCount, fast.SampleCount);
                Assert.Equal(general.SkippedSampleCount, fast.SkippedSampleCount);
                if (n % 50 == 49)
                {
                    general.CopyCovarianceTo(pa);
                    fast.CopyCovarianceTo(pb);
                    AssertBitwiseEqual(pa, pb, "P", n);
                    Assert.Equal(Snapshot(s => general.WriteSnapshot(s)), Snapshot(s => fast.WriteSnapshot(s)));
                    Assert.Equal(Snapshot(s => general.WriteSnapshot(s)), Snapshot(s => viaUpdate.WriteSnapshot(s)));
                }
            }

            // The stream reached the refusal branches it was built to reach (so the comparison covered them).
            Assert.True(refused > 0, "no update was refused");
        }

        /// <summary>
        /// Covariance form with β = 0.9 and x = 0 for 8000 updates (weight 1: the register path's own case, no information arrives): P grows
        /// by 1/β per update until its bound reaches the overflow limit 2^1020 after about 6700 updates, and from then on every update is
        /// refused. Both paths must refuse at the same update with the same breakdown, and agree bit for bit before and after.
        /// </summary>
        [Fact]
        public void Covariance_form_register_path_hands_the_overflow_refusal_to_the_general_path()
        {
            var settings = new CovarianceFormSettings { ForgettingFactor = 0.9 };
            var fast = new CovarianceFormEstimator(P, settings);
            var general = new CovarianceFormEstimator(P, settings) { FourColumnPathEnabled = false };
            var random = new Random(9450);
            var zero = new double[P];
            var pa = new double[P * P];
            var pb = new double[P * P];
            int firstRefusal = -1;
            for (int n = 0; n < 8200; n++)
            {
                double[] x = n < 100 || n >= 8100 ? Sample(random, 1).X : zero;
                string expected = Outcome(() => (general.TryUpdate(x, 1.0, 1.0, out BreakdownInfo info), info));
                string actual = Outcome(() => (fast.TryUpdate(x, 1.0, 1.0, out BreakdownInfo info), info));
                Assert.True(expected == actual, $"n={n}: general '{expected}', register path '{actual}'");
                if (firstRefusal < 0 && expected.StartsWith("refused NonFinite", StringComparison.Ordinal))
                {
                    firstRefusal = n;
                }

                if (n % 100 == 99)
                {
                    general.CopyCovarianceTo(pa);
                    fast.CopyCovarianceTo(pb);
                    AssertBitwiseEqual(pa, pb, "P", n);
                    Assert.Equal(Snapshot(s => general.WriteSnapshot(s)), Snapshot(s => fast.WriteSnapshot(s)));
                }
            }

            Assert.InRange(firstRefusal, 6000, 8000);
        }

        /// <summary>
        /// With the register path on, the length check rides on the comparison that selects the path: a regressor of length 3 or 5 must still
        /// be refused with the parameter name "x", through Update and TryUpdate, and change nothing (the snapshot bytes stay the same).
        /// </summary>
        [Fact]
        public void Information_form_register_path_still_refuses_a_wrong_length()
        {
            var est = new InformationFormEstimator(P, new RidgeSettings { ForgettingFactor = 0.9, FitIntercept = false, Standardize = false });
            Assert.Equal(BuildInfo.HasIntrinsicKernels, est.FourColumnPathEnabled);
            var random = new Random(9480);
            for (int n = 0; n < 20; n++)
            {
                est.Update(Sample(random, 1).X, 0.5);
            }

            byte[] before = Snapshot(s => est.WriteSnapshot(s));
            foreach (int length in new[] { 0, 3, 5, 8 })
            {
                var x = new double[length];
                Assert.Equal("x", Assert.ThrowsAny<ArgumentException>(() => est.Update(x, 1.0)).ParamName);
                Assert.Equal("x", Assert.ThrowsAny<ArgumentException>(() => est.Update(x, 1.0, 2.0)).ParamName);
                Assert.Equal("x", Assert.ThrowsAny<ArgumentException>(() => est.TryUpdate(x, 1.0, 2.0, out _)).ParamName);
            }

            Assert.Equal(before, Snapshot(s => est.WriteSnapshot(s)));
            Assert.Equal(20, est.SampleCount);
        }

        /// <summary>Information form without intercept or G₂: the register path against the general path.</summary>
        [Theory]
        [InlineData(0.9, InvalidSamplePolicy.Throw)]
        [InlineData(1.0, InvalidSamplePolicy.Throw)]
        [InlineData(0.9, InvalidSamplePolicy.SkipAndCount)]
        public void Information_form_register_path_changes_exactly_what_the_general_path_changes(double beta, InvalidSamplePolicy policy)
        {
            var settings = new RidgeSettings { Penalty = 0.3, ForgettingFactor = beta, FitIntercept = false, Standardize = false };
            var fast = new InformationFormEstimator(P, settings, invalidSamples: policy);
            var general = new InformationFormEstimator(P, settings, invalidSamples: policy) { FourColumnPathEnabled = false };
            var viaUpdate = new InformationFormEstimator(P, settings, invalidSamples: policy);
            Assert.Equal(BuildInfo.HasIntrinsicKernels, fast.FourColumnPathEnabled);
            Assert.False(general.FourColumnPathEnabled);

            var random = new Random(9500 + (int)(beta * 10) + (int)policy);
            var a = new double[P];
            var b = new double[P];
            int refused = 0;
            for (int n = 0; n < 4000; n++)
            {
                (double[] x, double y, double w) = Sample(random, n);
                refused += SameOutcome(
                    n,
                    Outcome(() => (general.TryUpdate(x, y, w, out BreakdownInfo info), info)),
                    Outcome(() => (fast.TryUpdate(x, y, w, out BreakdownInfo info), info)),
                    UpdateOutcome(() => viaUpdate.Update(x, y, w)));
                Assert.Equal(BitConverter.DoubleToInt64Bits(general.WeightSum), BitConverter.DoubleToInt64Bits(fast.WeightSum));
                Assert.Equal(BitConverter.DoubleToInt64Bits(general.DiscountedCount), BitConverter.DoubleToInt64Bits(fast.DiscountedCount));
                Assert.Equal(general.SampleCount, fast.SampleCount);
                Assert.Equal(general.SkippedSampleCount, fast.SkippedSampleCount);
                if (n % 50 == 49)
                {
                    // The stream's huge samples can leave G beyond what a solve resolves: then both solves must fail alike.
                    string solvedGeneral = Solve(general, a);
                    string solvedFast = Solve(fast, b);
                    Assert.Equal(solvedGeneral, solvedFast);
                    AssertBitwiseEqual(a, b, "θ", n);
                    Assert.Equal(Snapshot(s => general.WriteSnapshot(s)), Snapshot(s => fast.WriteSnapshot(s)));
                    Assert.Equal(Snapshot(s => general.WriteSnapshot(s)), Snapshot(s => viaUpdate.WriteSnapshot(s)));
                }
            }

            Assert.True(refused > 0, "no update was refused");
        }
    }
}
