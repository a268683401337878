using System;
using System.Collections.Generic;
using System.IO;
using System.Linq;
using System.Text;
using OnlineRidge.Tests.Properties;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Recursive
{
    /// <summary>
    /// Long-running safety of <see cref="SquareRootEstimator"/>: bad input changes nothing (DESIGN.md failure tiers, with the binary
    /// snapshot as the fingerprint of the whole state), the opt-in skip-and-count policy for dropouts, and bit-exact snapshots. The references
    /// are a second estimator fed the same clean data, and the snapshot bytes themselves.
    /// </summary>
    public class SquareRootSafetyTests
    {
        private const int Cases = 150;

        private static SquareRootSettings WithPolicy(SquareRootSettings s, InvalidSamplePolicy policy) => new()
        {
            ForgettingFactor = s.ForgettingFactor,
            Penalty = s.Penalty,
            DecayingPriorWeight = s.DecayingPriorWeight,
            Prior = s.Prior,
            FitIntercept = s.FitIntercept,
            Standardize = s.Standardize,
            InvalidSamples = policy,
        };

        private static SquareRootSettings Settings(SquareRootCase c, InvalidSamplePolicy policy) => WithPolicy(c.Settings(), policy);

        /// <summary>Decaying prior weight varied per case (0 or 10^U(−2, 2), from the seed), so the snapshot's count-dependent term is exercised.</summary>
        private static SquareRootSettings SettingsWithDecay(SquareRootCase c, InvalidSamplePolicy policy) =>
            WithPolicy(c.Settings(decayingPriorWeight: c.Seed % 3 == 0 ? Math.Pow(10.0, -2.0 + (c.Seed % 400 / 100.0)) : 0.0), policy);

        private static byte[] Bytes(SquareRootEstimator est, SnapshotEncoding encoding = SnapshotEncoding.Binary) => SnapshotBytes.Of(est.WriteSnapshot, encoding);

        private static SquareRootEstimator Restore(byte[] bytes) => SnapshotBytes.Read(SquareRootEstimator.ReadSnapshot, bytes);

        /// <summary>(b₀, θ) bit patterns at the configured penalty, or null with the breakdown when the solve reports one.</summary>
        private static double[]? Parameters(SquareRootEstimator est, out BreakdownInfo breakdown)
        {
            if (!est.TrySolve(out breakdown))
            {
                return null;
            }

            var theta = new double[est.ParameterCount];
            est.CopyParametersTo(theta);
            return new[] { est.Intercept }.Concat(theta).ToArray();
        }

        private static void AssertUnchanged(SquareRootEstimator est, string parameter, Action call, string label)
        {
            byte[] before = Bytes(est);
            ArgumentException ex = Assert.ThrowsAny<ArgumentException>(call);
            Assert.Equal(parameter, ex.ParamName);
            Assert.Contains(parameter, ex.Message, StringComparison.Ordinal);
            SnapshotBytes.AssertSame(before, Bytes(est), label);
        }

        /// <summary>
        /// Theorem (DESIGN.md failure tier 1): under the default policy every caller mistake — NaN or ±∞ in x, y or the weight, a negative
        /// weight, a wrong length, a bad penalty or buffer in a query — throws an ArgumentException naming the parameter, and the binary
        /// snapshot (every bit of the state) is identical before and after; under SkipAndCount a wrong length still throws and changes nothing.
        /// </summary>
        [Fact]
        public void BadInputLeavesTheSnapshotBytesUnchanged()
        {
            SquareRootGenerators.Check(SquareRootGenerators.Arbitrary(maxP: 12, extraN: 40), 0x5AFE_0001UL, c =>
            {
                var est = new SquareRootEstimator(c.P, Settings(c, InvalidSamplePolicy.Throw));
                var skipping = new SquareRootEstimator(c.P, Settings(c, InvalidSamplePolicy.SkipAndCount));
                SquareRootReference.Feed(est, c, 0, c.N / 2);
                SquareRootReference.Feed(skipping, c, 0, c.N / 2);
                int j = (int)((uint)c.Seed % (uint)c.P);
                double[] x = (double[])c.X[c.N - 1].Clone();
                double y = c.Y[c.N - 1];
                foreach (double bad in new[] { double.NaN, double.PositiveInfinity, double.NegativeInfinity })
                {
                    double[] xb = (double[])x.Clone();
                    xb[j] = bad;
                    AssertUnchanged(est, "x", () => est.Update(xb, y), $"x[{j}]={bad}");
                    AssertUnchanged(est, "x", () => est.TryUpdate(xb, y, 1.0, out _), $"try x[{j}]={bad}");
                    AssertUnchanged(est, "y", () => est.Update(x, bad, 1.0), $"y={bad}");
                    AssertUnchanged(est, "weight", () => est.Update(x, y, bad), $"weight={bad}");
                    AssertUnchanged(est, "x", () => est.Predict(xb), $"predict x[{j}]={bad}");
                    AssertUnchanged(skipping, "x", () => skipping.Predict(xb), $"skipping predict x[{j}]={bad}");
                    AssertUnchanged(est, "penalty", () => est.SolveWithPenalty(bad, new double[c.P]), $"penalty={bad}");
                }

                AssertUnchanged(est, "weight", () => est.Update(x, y, -double.Epsilon), "negative weight");
                foreach (SquareRootEstimator e in new[] { est, skipping })
                {
                    AssertUnchanged(e, "x", () => e.Update(new double[c.P + 1], y), "long x");
                    AssertUnchanged(e, "x", () => e.TryUpdate(new double[c.P - 1], double.NaN, -1.0, out _), "short x with bad values");
                    AssertUnchanged(e, "destination", () => e.CopyParametersTo(new double[c.P - 1]), "short destination");
                    AssertUnchanged(e, "encoding", () => e.WriteSnapshot(new MemoryStream(), (SnapshotEncoding)7), "undefined encoding");
                }
            }, Cases);
        }

        /// <summary>
        /// Theorem (InvalidSamplePolicy.SkipAndCount docs): a stream with dropouts (NaN or ±∞ in x or y, NaN, ∞ or negative weights) inserted
        /// at random places leaves an estimator in exactly the state of one fed the clean stream alone — same factor, weight sum, discounted
        /// count, sample count and parameters, bit for bit — and SkippedSampleCount equals the number of dropouts.
        /// </summary>
        [Fact]
        public void SkipAndCountIgnoresExactlyTheDropouts()
        {
            SquareRootGenerators.Check(SquareRootGenerators.Arbitrary(extraN: 80), 0x5AFE_0002UL, c =>
            {
                var skipping = new SquareRootEstimator(c.P, SettingsWithDecay(c, InvalidSamplePolicy.SkipAndCount));
                var clean = new SquareRootEstimator(c.P, SettingsWithDecay(c, InvalidSamplePolicy.Throw));
                var rng = new Random(c.Seed);
                double[] bads = { double.NaN, double.PositiveInfinity, double.NegativeInfinity };
                int dropouts = 0;
                for (int i = 0; i < c.N; i++)
                {
                    while (rng.NextDouble() < 0.2)
                    {
                        double[] x = (double[])c.X[i].Clone();
                        double y = c.Y[i];
                        double w = c.W[i];
                        switch (rng.Next(4))
                        {
                            case 0: x[rng.Next(c.P)] = bads[rng.Next(3)]; break;
                            case 1: y = bads[rng.Next(3)]; break;
                            case 2: w = rng.Next(2) == 0 ? -0.5 - rng.NextDouble() : bads[rng.Next(2)]; break;
                            default: x[rng.Next(c.P)] = double.NaN; y = double.NaN; break;
                        }

                        Assert.True(skipping.TryUpdate(x, y, w, out BreakdownInfo bd));
                        Assert.True(bd.IsNone);
                        dropouts++;
                    }

                    skipping.Update(c.X[i], c.Y[i], c.W[i]);
                    clean.Update(c.X[i], c.Y[i], c.W[i]);
                }

                Assert.Equal(dropouts, skipping.SkippedSampleCount);
                Assert.Equal(0, clean.SkippedSampleCount);
                Assert.Equal(clean.SampleCount, skipping.SampleCount);
                var fa = new double[clean.FactorOrder * clean.FactorOrder];
                var fb = new double[fa.Length];
                clean.CopyFactorTo(fa);
                skipping.CopyFactorTo(fb);
                SnapshotBytes.AssertBitEqual(fa, fb, "factor");
                SnapshotBytes.AssertBitEqual(new[] { clean.WeightSum, clean.DiscountedCount }, new[] { skipping.WeightSum, skipping.DiscountedCount }, "counts");
                double[]? expected = Parameters(clean, out BreakdownInfo be);
                double[]? actual = Parameters(skipping, out BreakdownInfo ba);
                Assert.Equal(be, ba);
                SnapshotBytes.AssertBitEqual(expected, actual, "parameters");
            }, Cases);
        }

        /// <summary>
        /// Theorem (DESIGN.md failure tier 2 under either policy): a finite sample whose sum of squares would overflow the factor (x = 10²⁰⁰)
        /// is a breakdown, not a dropout: TryUpdate returns false with NonFinite, Update throws RidgeBreakdownException, the snapshot bytes are
        /// unchanged and nothing is counted as skipped. Skipping allocates nothing (10⁵ skipped samples after as many for warm-up, 0 bytes; AllocationCount).
        /// </summary>
        [Theory]
        [InlineData(InvalidSamplePolicy.Throw)]
        [InlineData(InvalidSamplePolicy.SkipAndCount)]
        public void OverflowIsReportedNotSkippedAndSkippingAllocatesNothing(InvalidSamplePolicy policy)
        {
            var est = new SquareRootEstimator(3, new SquareRootSettings { ForgettingFactor = 0.99, Penalty = 0.1, InvalidSamples = policy });
            var rng = new Random(11);
            for (int i = 0; i < 30; i++)
            {
                est.Update(new[] { rng.NextDouble(), rng.NextDouble(), rng.NextDouble() }, rng.NextDouble());
            }

            byte[] before = Bytes(est);
            double[] huge = { 1.0, 1e200, 2.0 };
            Assert.False(est.TryUpdate(huge, 1.0, 1.0, out BreakdownInfo bd));
            Assert.Equal(BreakdownKind.NonFinite, bd.Kind);
            Assert.Equal(BreakdownKind.NonFinite, Assert.Throws<RidgeBreakdownException>(() => est.Update(huge, 1.0)).Info.Kind);
            Assert.Equal(BreakdownKind.NonFinite, Assert.Throws<RidgeBreakdownException>(() => est.Update(new[] { 1.0, 2.0, 3.0 }, 1e200)).Info.Kind);
            SnapshotBytes.AssertSame(before, Bytes(est), "overflowing sample");
            Assert.Equal(0, est.SkippedSampleCount);

            if (policy == InvalidSamplePolicy.SkipAndCount)
            {
                double[] dropout = { 1.0, double.NaN, 2.0 };
                est.Update(dropout, 1.0);

                long allocated = AllocationCount.InSteadyState(() => SkipMany(est, dropout), out int runs);
                Assert.Equal(0, allocated);
                Assert.Equal(1 + (100_000L * runs), est.SkippedSampleCount);
                byte[] after = Bytes(est);
                SnapshotBytes.AssertSame(before, SnapshotBytes.Edit(after, "skippedSampleCount", 0L), "skipped samples change only the counter");
            }
        }

        private static void SkipMany(SquareRootEstimator est, double[] dropout)
        {
            for (int i = 0; i < 100_000; i++)
            {
                est.Update(dropout, 1.0, 1.0);
            }
        }

        /// <summary>
        /// Theorem (TryUpdate docs: a zero weight only forgets; the overflow guard counts only weighted data): a zero-weight sample whose
        /// finite entries have overflowing squares (x = 10²⁰⁰) is accepted under either policy and changes the state exactly as a
        /// zero-weight sample of ordinary entries does; the same entries with NaN in y still throw (or are skipped), naming y.
        /// </summary>
        [Theory]
        [InlineData(InvalidSamplePolicy.Throw)]
        [InlineData(InvalidSamplePolicy.SkipAndCount)]
        public void ZeroWeightSampleWithOverflowingSquaresOnlyForgets(InvalidSamplePolicy policy)
        {
            var settings = new SquareRootSettings { ForgettingFactor = 0.95, Penalty = 0.1, InvalidSamples = policy };
            var est = new SquareRootEstimator(3, settings);
            var twin = new SquareRootEstimator(3, settings);
            var rng = new Random(12);
            for (int i = 0; i < 20; i++)
            {
                double[] x = { rng.NextDouble(), rng.NextDouble(), rng.NextDouble() };
                double y = rng.NextDouble();
                est.Update(x, y);
                twin.Update(x, y);
            }

            double[] huge = { 1.0, 1e200, -1e250 };
            Assert.True(est.TryUpdate(huge, 1e300, 0.0, out BreakdownInfo bd));
            Assert.True(bd.IsNone);
            twin.Update(new[] { 1.0, 2.0, 3.0 }, 4.0, 0.0);
            SnapshotBytes.AssertSame(Bytes(twin), Bytes(est), "zero-weight sample with overflowing squares");

            if (policy == InvalidSamplePolicy.Throw)
            {
                AssertUnchanged(est, "y", () => est.Update(huge, double.NaN, 0.0), "NaN y with huge x");
            }
            else
            {
                est.Update(huge, double.NaN, 0.0);
                Assert.Equal(1, est.SkippedSampleCount);
            }
        }

        /// <summary>
        /// Theorem (WriteSnapshot/ReadSnapshot docs): for random states (every setting, both policies, random prefix of a random stream),
        /// restore(write(e)) written again gives the same bytes, in both encodings, and its parameters, breakdown status, counts and factor
        /// equal the original's bit for bit.
        /// </summary>
        [Fact]
        public void SnapshotRoundTripIsBitExact()
        {
            SquareRootGenerators.Check(SquareRootGenerators.Arbitrary(extraN: 60), 0x5AFE_0003UL, c =>
            {
                InvalidSamplePolicy policy = c.Seed % 2 == 0 ? InvalidSamplePolicy.Throw : InvalidSamplePolicy.SkipAndCount;
                var est = new SquareRootEstimator(c.P, SettingsWithDecay(c, policy));
                int k = (int)((uint)(c.Seed / 7) % (uint)(c.N + 1));
                SquareRootReference.Feed(est, c, 0, k);
                if (policy == InvalidSamplePolicy.SkipAndCount)
                {
                    est.Update(new double[c.P], double.NaN);
                }

                byte[] binary = Bytes(est);
                foreach (SnapshotEncoding encoding in new[] { SnapshotEncoding.Binary, SnapshotEncoding.Json })
                {
                    SquareRootEstimator back = Restore(Bytes(est, encoding));
                    SnapshotBytes.AssertSame(binary, Bytes(back), $"{encoding} round trip");
                    SnapshotBytes.AssertSame(Bytes(est, SnapshotEncoding.Json), Bytes(back, SnapshotEncoding.Json), $"{encoding} round trip as JSON");
                    Assert.Equal(est.SampleCount, back.SampleCount);
                    Assert.Equal(est.SkippedSampleCount, back.SkippedSampleCount);
                    Assert.True(est.Settings.SameObjective(back.Settings));
                    Assert.Equal(est.Settings.InvalidSamples, back.Settings.InvalidSamples);
                    Assert.Equal(est.Settings.Prior is null, back.Settings.Prior is null);
                    double[]? expected = Parameters(est, out BreakdownInfo be);
                    double[]? actual = Parameters(back, out BreakdownInfo ba);
                    Assert.Equal(be, ba);
                    SnapshotBytes.AssertBitEqual(expected, actual, $"{encoding} parameters");
                }
            }, Cases);
        }

        /// <summary>
        /// Theorem (restart contract): an estimator saved after k samples (binary or JSON, by case), restored, and fed the remaining samples
        /// gives bit-identical parameters to the one that never stopped, at every later checkpoint, and the same snapshot at the end.
        /// </summary>
        [Fact]
        public void RestoredMidStreamContinuesBitIdentically()
        {
            SquareRootGenerators.Check(SquareRootGenerators.Arbitrary(extraN: 60), 0x5AFE_0004UL, c =>
            {
                InvalidSamplePolicy policy = c.Seed % 2 == 0 ? InvalidSamplePolicy.Throw : InvalidSamplePolicy.SkipAndCount;
                var running = new SquareRootEstimator(c.P, SettingsWithDecay(c, policy));
                int k = (int)((uint)(c.Seed / 5) % (uint)(c.N + 1));
                SquareRootReference.Feed(running, c, 0, k);
                running.TrySolve(out _); // a cached solution must not matter
                SquareRootEstimator restored = Restore(Bytes(running, c.Seed % 3 == 0 ? SnapshotEncoding.Json : SnapshotEncoding.Binary));
                int step = Math.Max(1, (c.N - k) / 5);
                for (int i = k; i < c.N; i++)
                {
                    running.Update(c.X[i], c.Y[i], c.W[i]);
                    restored.Update(c.X[i], c.Y[i], c.W[i]);
                    if ((i - k) % step == 0 || i == c.N - 1)
                    {
                        double[]? expected = Parameters(running, out BreakdownInfo be);
                        double[]? actual = Parameters(restored, out BreakdownInfo ba);
                        Assert.Equal(be, ba);
                        SnapshotBytes.AssertBitEqual(expected, actual, $"after sample {i}");
                    }
                }

                SnapshotBytes.AssertSame(Bytes(running), Bytes(restored), "final state");
            }, Cases);
        }

        private static byte[] Reference(out SquareRootEstimator est)
        {
            est = new SquareRootEstimator(3, new SquareRootSettings { ForgettingFactor = 0.97, Penalty = 0.5, Prior = new[] { 1.0, 2.0, 3.0 }, InvalidSamples = InvalidSamplePolicy.SkipAndCount });
            var rng = new Random(23);
            for (int i = 0; i < 20; i++)
            {
                est.Update(new[] { rng.NextDouble(), rng.NextDouble(), rng.NextDouble() }, rng.NextDouble());
            }

            return Bytes(est);
        }

        /// <summary>
        /// Claim (ReadSnapshot docs): corrupted (bit flips), truncated, extended, foreign-kind, future-version and internally inconsistent
        /// snapshots (valid checksum, but wrong lengths, non-finite or negative values, a non-triangular factor, settings out of range, an
        /// unknown policy, a sum of squares that no longer bounds the factor) throw SnapshotFormatException.
        /// </summary>
        [Fact]
        public void CorruptTruncatedForeignAndInconsistentSnapshotsAreRejected()
        {
            byte[] good = Reference(out _);
            Restore(good); // the unedited snapshot is accepted
            foreach (byte[] bad in SnapshotBytes.Corruptions(good))
            {
                Assert.Throws<SnapshotFormatException>(() => Restore(bad));
            }

            byte[] json = Bytes(Restore(good), SnapshotEncoding.Json);
            for (int len = 0; len < json.Length; len += 41)
            {
                Assert.Throws<SnapshotFormatException>(() => Restore(json.AsSpan(0, len).ToArray()));
            }

            double[] factor = SnapshotBytes.Array(good, "factor");
            var edits = new List<(string Name, object? Value, string? Kind, int? Version)>
            {
                ("", null, "CovarianceFormEstimator", null),
                ("", null, null, 2),
                ("", null, null, 0),
                ("factor", factor.Take(factor.Length - 1).ToArray(), null, null),
                ("factor", factor.Select((v, i) => i == 7 ? double.NaN : v).ToArray(), null, null),
                ("factor", factor.Select((v, i) => i == 5 ? 1.0 : v).ToArray(), null, null), // below the diagonal (c = 5)
                ("factor", factor.Select((v, i) => i == 0 ? -v : v).ToArray(), null, null),
                ("factor", factor.Select(v => v * 10.0).ToArray(), null, null),
                ("prior", new[] { 1.0, 2.0 }, null, null),
                ("prior", new[] { 1.0, double.PositiveInfinity, 3.0 }, null, null),
                ("parameterCount", 4L, null, null),
                ("parameterCount", 0L, null, null),
                ("parameterCount", 1.5, null, null),
                ("forgettingFactor", 1.5, null, null),
                ("forgettingFactor", double.NaN, null, null),
                ("penalty", -1.0, null, null),
                ("decayingPriorWeight", double.PositiveInfinity, null, null),
                ("invalidSamples", "Ignore", null, null),
                ("sampleCount", -1L, null, null),
                ("skippedSampleCount", -3L, null, null),
                ("weightSum", double.NaN, null, null),
                ("discountedCount", -1.0, null, null),
                ("sumOfSquares", 1e-3, null, null),
                ("sumOfSquares", 1e301, null, null),
                ("fitIntercept", null, null, null),
                ("standardize", "yes", null, null),
            };
            foreach (var (name, value, kind, version) in edits)
            {
                byte[] bad = SnapshotBytes.Edit(good, name, value, kind, version);
                Assert.Throws<SnapshotFormatException>(() => Restore(bad));
            }

            Assert.Throws<ArgumentNullException>(() => SquareRootEstimator.ReadSnapshot(null!));
            Assert.Throws<ArgumentNullException>(() => Restore(good).WriteSnapshot(null!));
        }

        /// <summary>Claim (SnapshotEncoding.Json docs): the JSON snapshot is readable text that names the kind and every setting with its value.</summary>
        [Fact]
        public void JsonSnapshotNamesTheSettings()
        {
            Reference(out SquareRootEstimator est);
            string json = Encoding.UTF8.GetString(Bytes(est, SnapshotEncoding.Json));
            foreach (string expected in new[]
            {
                "\"kind\": \"SquareRootEstimator\"", "\"forgettingFactor\"", "0.97", "\"penalty\"", "0.5", "\"decayingPriorWeight\"", "\"prior\"",
                "\"fitIntercept\"", "\"standardize\"", "\"invalidSamples\"", "\"SkipAndCount\"", "\"sampleCount\"", "\"skippedSampleCount\"", "\"factor\"",
            })
            {
                Assert.Contains(expected, json, StringComparison.Ordinal);
            }
        }

        /// <summary>Theorem (DESIGN.md tier 1): an undefined policy is refused by the setting, naming it and the value.</summary>
        [Fact]
        public void UndefinedPolicyIsRefusedNamingTheSetting()
        {
            var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new SquareRootSettings { InvalidSamples = (InvalidSamplePolicy)3 });
            Assert.Equal(nameof(SquareRootSettings.InvalidSamples), ex.ParamName);
            Assert.Contains("3", ex.Message, StringComparison.Ordinal);
        }
    }
}
