using System;
using System.Collections.Generic;
using System.Linq;
using OnlineRidge.Tests.Persistence;
using OnlineRidge.Tests.Properties;
using Xunit;

namespace OnlineRidge.Tests.Recursive
{
    /// <summary>
    /// Long-running safety of <see cref="InformationFormEstimator"/> (DESIGN.md failure tiers; InvalidSamplePolicy; WriteSnapshot/ReadSnapshot
    /// docs), with and without intercept, standardization, squared-forgetting Gram and either penalty regime. References: a second estimator
    /// fed the same clean data, and the binary snapshot as the fingerprint of the whole state.
    /// </summary>
    public class InformationFormSafetyTests
    {
        private const int Cases = 150;

        private static double[] Solve(InformationFormEstimator e, Func<InformationFormEstimator, double[], double> solve)
        {
            var theta = new double[e.ParameterCount];
            try
            {
                double b0 = solve(e, theta);
                return new[] { b0, 0.0 }.Concat(theta).ToArray();
            }
            catch (RidgeBreakdownException ex)
            {
                return new[] { double.NaN, (double)ex.Info.Kind };
            }
        }

        internal static SafetyForm<InformationFormEstimator> Form { get; } = new()
        {
            Kind = "InformationFormEstimator",
            Create = (c, policy) => new InformationFormEstimator(
                c.P,
                new RidgeSettings { Penalty = c.Penalty, ForgettingFactor = c.Beta, FitIntercept = c.Intercept, Standardize = c.Standardize, Prior = c.Prior },
                (c.Seed / 2) % 2 == 0 ? PenaltyRegime.Constant : PenaltyRegime.Decaying,
                c.Seed % 3 == 0,
                policy),
            Update = (e, x, y, w) => e.Update(x, y, w),
            TryUpdate = (e, x, y, w) => (e.TryUpdate(x, y, w, out BreakdownInfo bd), bd),
            Write = (e, s, enc) => e.WriteSnapshot(s, enc),
            Read = InformationFormEstimator.ReadSnapshot,
            SampleCount = e => e.SampleCount,
            SkippedCount = e => e.SkippedSampleCount,
            Results = e =>
            {
                double[] cached = Solve(e, (est, theta) =>
                {
                    est.CopyParametersTo(theta);
                    return est.Intercept;
                });
                double[] other = Solve(e, (est, theta) => est.Solve(est.Settings.Penalty + 0.5, PenaltyRegime.Constant, theta));
                var g2 = new double[e.TracksSquaredForgettingGram ? (e.ParameterCount + 1) * (e.ParameterCount + 1) : 0];
                if (e.TracksSquaredForgettingGram)
                {
                    e.CopySquaredForgettingGramTo(g2);
                }

                return cached.Concat(other).Concat(g2).Concat(new[] { e.WeightSum, e.DiscountedCount }).ToArray();
            },
            BadQueries = (e, badX) => new (string, Action)[]
            {
                ("x", () => e.Predict(badX)),
                ("x", () => e.Predict(new double[e.ParameterCount + 1])),
                ("destination", () => e.CopyParametersTo(new double[e.ParameterCount - 1])),
                ("penaltyValue", () => e.Solve(badX.First(v => !double.IsFinite(v)), PenaltyRegime.Constant, new double[e.ParameterCount])),
                ("penaltyValue", () => e.Solve(-1.0, PenaltyRegime.Constant, new double[e.ParameterCount])),
            },
        };

        private static InformationFormEstimator Reference(bool intercept)
        {
            var est = new InformationFormEstimator(
                3,
                new RidgeSettings { Penalty = 0.25, ForgettingFactor = 0.97, FitIntercept = intercept, Prior = new[] { 1.0, 2.0, 3.0 }, RankTolerance = 1e-9, RefinementSteps = 2 },
                PenaltyRegime.Decaying,
                trackSquaredForgettingGram: true,
                invalidSamples: InvalidSamplePolicy.SkipAndCount);
            var rng = new Random(23);
            for (int i = 0; i < 20; i++)
            {
                est.Update(new[] { rng.NextDouble(), rng.NextDouble(), rng.NextDouble() }, rng.NextDouble());
            }

            return est;
        }

        /// <summary>Theorem (DESIGN.md tier 1): bad samples and bad queries throw naming the parameter; the snapshot bytes are unchanged.</summary>
        [Fact]
        public void BadInputLeavesTheSnapshotBytesUnchanged() => SafetyHarness.BadInputChangesNothing(Form, 0x5AFE_0201UL, Cases);

        /// <summary>Theorem (SkipAndCount docs): dropouts leave exactly the state of the clean stream; the counter equals their number.</summary>
        [Fact]
        public void SkipAndCountIgnoresExactlyTheDropouts() => SafetyHarness.SkipAndCountIgnoresExactlyTheDropouts(Form, 0x5AFE_0202UL, Cases);

        /// <summary>
        /// Theorem (DESIGN.md tier 2): a regressor of 10²⁰⁰ makes the Gram trace overflow — reported as NonFinite under either policy, state
        /// bit-identical, nothing skipped; skipping allocates nothing.
        /// </summary>
        [Theory]
        [InlineData(InvalidSamplePolicy.Throw)]
        [InlineData(InvalidSamplePolicy.SkipAndCount)]
        public void OverflowIsReportedNotSkipped(InvalidSamplePolicy policy) =>
            SafetyHarness.OverflowIsReportedNotSkipped(Form, policy, new[] { 1.0, 1e200, 2.0 }, 1.0, BreakdownKind.NonFinite);

        /// <summary>Theorem (snapshot docs): restore∘write is the identity on the bytes (both encodings) and on every result's bits.</summary>
        [Fact]
        public void SnapshotRoundTripIsBitExact() => SafetyHarness.RoundTripIsBitExact(Form, 0x5AFE_0203UL, Cases);

        /// <summary>Theorem (restart contract): restored mid-stream and fed the rest, the results equal the uninterrupted run's bit for bit.</summary>
        [Fact]
        public void RestoredMidStreamContinuesBitIdentically() => SafetyHarness.RestoredMidStreamContinuesBitIdentically(Form, 0x5AFE_0204UL, Cases);

        /// <summary>Claim (ReadSnapshot docs): corrupt, truncated, foreign and inconsistent snapshots throw SnapshotFormatException (both layouts).</summary>
        [Theory]
        [InlineData(true)]
        [InlineData(false)]
        public void CorruptTruncatedForeignAndInconsistentSnapshotsAreRejected(bool intercept)
        {
            InformationFormEstimator est = Reference(intercept);
            byte[] good = Form.Bytes(est);
            string statistic = intercept ? "moments.comoment" : "gram";
            string trace = intercept ? "moments.trace" : "gramTrace";
            double[] packed = Support.SnapshotBytes.Array(good, statistic);
            SafetyHarness.BadSnapshotsAreRejected(Form, est, new List<(string, object)>
            {
                (statistic, packed.Select((v, i) => i == 0 ? -1.0 : v).ToArray()), // negative diagonal
                (statistic, packed.Select((v, i) => i == 0 ? v * 1e3 : v).ToArray()), // no longer bounded by the trace
                (trace, 1e308),
                ("squaredGram", Support.SnapshotBytes.Array(good, "squaredGram").Select(v => v * 10.0).ToArray()),
                ("rankTolerance", 1.0),
                ("refinementSteps", 11L),
                ("choleskyConditionLimit", 0.5),
                ("solver", "Qr"), // valid RidgeSettings, refused by the information form
                ("regime", "1"),
                ("fitIntercept", !intercept),
            });
        }

        /// <summary>Claim (SnapshotEncoding.Json docs): the JSON names the kind, every setting and state entry, and the values read as text.</summary>
        [Fact]
        public void JsonSnapshotNamesTheSettings() =>
            SafetyHarness.JsonNamesEveryEntry(Form, Reference(true), "\"penalty\"", "0.25", "0.97", "\"Decaying\"", "\"SkipAndCount\"", "\"Auto\"", "\"Sandwich\"", "1E-09");

        /// <summary>Theorem (DESIGN.md tier 1): an undefined policy is refused by the constructor, naming the parameter.</summary>
        [Fact]
        public void UndefinedPolicyIsRefusedNamingTheParameter() =>
            Assert.Equal("invalidSamples", Assert.Throws<ArgumentOutOfRangeException>(() => new InformationFormEstimator(2, null, PenaltyRegime.Constant, false, (InvalidSamplePolicy)(-1))).ParamName);
    }
}
