using System;
using System.Collections.Generic;
using System.Linq;
using OnlineRidge.Standardization;
using OnlineRidge.Tests.Persistence;
using Xunit;

namespace OnlineRidge.Tests.Standardization
{
    /// <summary>
    /// Long-running safety of <see cref="StreamingMoments"/> (DESIGN.md failure tiers; InvalidSamplePolicy; WriteSnapshot/ReadSnapshot docs)
    /// over the vectors u = (x, y) of the generated cases. References: a second state fed the same clean data, and the binary snapshot.
    /// </summary>
    public class StreamingMomentsSafetyTests
    {
        private const int Cases = 150;

        internal static SafetyForm<StreamingMoments> Form { get; } = CreateForm();

        private static SafetyForm<StreamingMoments> CreateForm()
        {
            double[] buffer = Array.Empty<double>();
            double[] Vector(double[] x, double y)
            {
                if (buffer.Length != x.Length + 1)
                {
                    buffer = new double[x.Length + 1];
                }

                x.CopyTo(buffer, 0);
                buffer[x.Length] = y;
                return buffer;
            }

            return new SafetyForm<StreamingMoments>
            {
                Kind = "StreamingMoments",
                XName = "u",
                Create = (c, policy) => new StreamingMoments(c.P + 1, c.Beta, policy),
                Update = (m, x, y, w) => m.Update(Vector(x, y), w),
                TryUpdate = (m, x, y, w) => (m.TryUpdate(Vector(x, y), w, out BreakdownInfo bd), bd),
                Write = (m, s, enc) => m.WriteSnapshot(s, enc),
                Read = StreamingMoments.ReadSnapshot,
                SampleCount = m => m.SampleCount,
                SkippedCount = m => m.SkippedSampleCount,
                Results = m =>
                {
                    var means = new double[m.Dimension];
                    var sd = new double[m.Dimension];
                    var comoment = new double[m.Dimension * m.Dimension];
                    m.CopyMeansTo(means);
                    m.CopyStandardDeviationsTo(sd);
                    m.CopyComomentTo(comoment);
                    return means.Concat(sd).Concat(comoment).Concat(new[] { m.WeightSum }).ToArray();
                },
                BadQueries = (m, _) => new (string, Action)[]
                {
                    ("destination", () => m.CopyMeansTo(new double[m.Dimension - 1])),
                    ("destination", () => m.CopyComomentTo(new double[(m.Dimension * m.Dimension) - 1])),
                    ("index", () => m.Mean(-1)),
                    ("column", () => m.Comoment(0, m.Dimension)),
                },
            };
        }

        private static StreamingMoments Reference()
        {
            var m = new StreamingMoments(3, 0.97, InvalidSamplePolicy.SkipAndCount);
            var rng = new Random(23);
            for (int i = 0; i < 20; i++)
            {
                m.Update(new[] { rng.NextDouble(), 10.0 + rng.NextDouble(), rng.NextDouble() }, 0.5 + rng.NextDouble());
            }

            return m;
        }

        /// <summary>Theorem (DESIGN.md tier 1): bad vectors, weights and queries throw naming the parameter; the snapshot bytes are unchanged.</summary>
        [Fact]
        public void BadInputLeavesTheSnapshotBytesUnchanged() => SafetyHarness.BadInputChangesNothing(Form, 0x5AFE_0301UL, Cases);

        /// <summary>Theorem (SkipAndCount docs): dropouts leave exactly the state of the clean stream; the counter equals their number.</summary>
        [Fact]
        public void SkipAndCountIgnoresExactlyTheDropouts() => SafetyHarness.SkipAndCountIgnoresExactlyTheDropouts(Form, 0x5AFE_0302UL, Cases);

        /// <summary>
        /// Theorem (DESIGN.md tier 2): a component of 10²⁰⁰ makes the co-moment trace overflow — reported as NonFinite under either policy,
        /// state bit-identical, nothing skipped; skipping allocates nothing.
        /// </summary>
        [Theory]
        [InlineData(InvalidSamplePolicy.Throw)]
        [InlineData(InvalidSamplePolicy.SkipAndCount)]
        public void OverflowIsReportedNotSkipped(InvalidSamplePolicy policy) =>
            SafetyHarness.OverflowIsReportedNotSkipped(Form, policy, new[] { 1.0, 1e200, 2.0 }, 1.0, BreakdownKind.NonFinite);

        /// <summary>Theorem (snapshot docs): restore∘write is the identity on the bytes (both encodings) and on every result's bits.</summary>
        [Fact]
        public void SnapshotRoundTripIsBitExact() => SafetyHarness.RoundTripIsBitExact(Form, 0x5AFE_0303UL, Cases);

        /// <summary>Theorem (restart contract): restored mid-stream and fed the rest, the results equal the uninterrupted run's bit for bit.</summary>
        [Fact]
        public void RestoredMidStreamContinuesBitIdentically() => SafetyHarness.RestoredMidStreamContinuesBitIdentically(Form, 0x5AFE_0304UL, Cases);

        /// <summary>Claim (ReadSnapshot docs): corrupt, truncated, foreign and inconsistent snapshots throw SnapshotFormatException.</summary>
        [Fact]
        public void CorruptTruncatedForeignAndInconsistentSnapshotsAreRejected()
        {
            StreamingMoments m = Reference();
            double[] packed = Support.SnapshotBytes.Array(Form.Bytes(m), "comoment");
            SafetyHarness.BadSnapshotsAreRejected(Form, m, new List<(string, object)>
            {
                ("comoment", packed.Select((v, i) => i == 0 ? -1.0 : v).ToArray()),
                ("comoment", packed.Select(v => v * 10.0).ToArray()),
                ("trace", 1e308),
                ("dimension", 4L),
                ("forgettingFactor", 0.0),
                ("means", new[] { 1.0, double.PositiveInfinity, 3.0 }),
            });
        }

        /// <summary>Claim (SnapshotEncoding.Json docs): the JSON names the kind, every setting and state entry, and the values read as text.</summary>
        [Fact]
        public void JsonSnapshotNamesTheSettings() => SafetyHarness.JsonNamesEveryEntry(Form, Reference(), "\"forgettingFactor\"", "0.97", "\"SkipAndCount\"");

        /// <summary>Theorem (DESIGN.md tier 1): an undefined policy is refused by the constructor, naming the parameter.</summary>
        [Fact]
        public void UndefinedPolicyIsRefusedNamingTheParameter() =>
            Assert.Equal("invalidSamples", Assert.Throws<ArgumentOutOfRangeException>(() => new StreamingMoments(2, 1.0, (InvalidSamplePolicy)5)).ParamName);
    }
}
