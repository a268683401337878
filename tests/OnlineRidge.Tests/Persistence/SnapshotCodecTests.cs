using System;
using System.IO;
using System.Linq;
using System.Text;
using FsCheck.Xunit;
using OnlineRidge.Persistence;
using Xunit;

namespace OnlineRidge.Tests.Persistence
{
    /// <summary>The snapshot container format: bit-exact round trips in both encodings and detection of corruption.</summary>
    public class SnapshotCodecTests
    {
        private static StateRecord Sample(int seed, int length)
        {
            var rng = new Random(seed);
            var values = Enumerable.Range(0, length).Select(_ => BitConverter.Int64BitsToDouble((long)(rng.NextDouble() * long.MaxValue) ^ ((long)rng.Next() << 32))).ToArray();
            values = values.Select(v => double.IsNaN(v) ? 1.5 : v).ToArray();
            if (length > 3)
            {
                values[0] = -0.0;
                values[1] = double.Epsilon;
                values[2] = double.PositiveInfinity;
                values[3] = double.NaN;
            }

            return new StateRecord("test-kind", 3)
                .Add("beta", 0.98)
                .Add("count", (long)seed * 1_000_003)
                .Add("flag", seed % 2 == 0)
                .Add("label", "ä-ü \"quoted\"")
                .Add("state", values);
        }

        private static byte[] Encode(StateRecord r, SnapshotEncoding e)
        {
            using var ms = new MemoryStream();
            SnapshotCodec.Write(r, ms, e);
            return ms.ToArray();
        }

        private static StateRecord Decode(byte[] b) => SnapshotCodec.Read(new MemoryStream(b));

        /// <summary>Theorem: decode(encode(r)) = r bit for bit, in both encodings, for arbitrary doubles (signed zero, subnormals, ±∞, NaN).</summary>
        [Property(MaxTest = 200, Replay = "(3,5)")]
        public void RoundTripIsBitExactInBothEncodings(int seed, byte length)
        {
            var r = Sample(seed, length);
            foreach (var enc in new[] { SnapshotEncoding.Binary, SnapshotEncoding.Json })
            {
                var back = Decode(Encode(r, enc));
                Assert.Equal("test-kind", back.Kind);
                Assert.Equal(3, back.KindVersion);
                Assert.Equal(BitConverter.DoubleToInt64Bits(0.98), BitConverter.DoubleToInt64Bits(back.GetDouble("beta")));
                Assert.Equal((long)seed * 1_000_003, back.GetInt64("count"));
                Assert.Equal(seed % 2 == 0, back.GetBoolean("flag"));
                Assert.Equal("ä-ü \"quoted\"", back.GetString("label"));
                var a = r.GetArray("state");
                var b = back.GetArray("state", a.Length);
                Assert.Equal(a.Select(BitConverter.DoubleToInt64Bits), b.Select(BitConverter.DoubleToInt64Bits));
            }
        }

        [Fact]
        public void AnySingleFlippedBitOfABinarySnapshotIsDetected()
        {
            byte[] good = Encode(Sample(1, 10), SnapshotEncoding.Binary);
            for (int i = 0; i < good.Length; i++)
            {
                for (int bit = 0; bit < 8; bit += 3)
                {
                    var bad = (byte[])good.Clone();
                    bad[i] ^= (byte)(1 << bit);
                    Assert.Throws<SnapshotFormatException>(() => Decode(bad));
                }
            }
        }

        [Fact]
        public void TruncatedAndForeignDataAreRejected()
        {
            byte[] good = Encode(Sample(2, 10), SnapshotEncoding.Binary);
            for (int len = 0; len < good.Length; len += 7)
            {
                Assert.Throws<SnapshotFormatException>(() => Decode(good.AsSpan(0, len).ToArray()));
            }

            Assert.Throws<SnapshotFormatException>(() => Decode(Encoding.ASCII.GetBytes("PK\u0003\u0004 not a snapshot")));
            Assert.Throws<SnapshotFormatException>(() => Decode(Encoding.UTF8.GetBytes("{\"format\":\"something else\"}")));
        }

        [Fact]
        public void AnEditedJsonValueFailsTheChecksum()
        {
            string json = Encoding.UTF8.GetString(Encode(Sample(4, 6), SnapshotEncoding.Json));
            Assert.Contains("\"crc32\"", json, StringComparison.Ordinal);
            string edited = json.Replace("0.98", "0.97", StringComparison.Ordinal);
            Assert.NotEqual(json, edited);
            var ex = Assert.Throws<SnapshotFormatException>(() => Decode(Encoding.UTF8.GetBytes(edited)));
            Assert.Contains("checksum", ex.Message, StringComparison.Ordinal);
        }

        [Fact]
        public void WrongKindAndUnsupportedVersionAreReportedByName()
        {
            var r = Decode(Encode(Sample(5, 4), SnapshotEncoding.Binary));
            Assert.Contains("test-kind", Assert.Throws<SnapshotFormatException>(() => r.Expect("other-kind", 1)).Message, StringComparison.Ordinal);
            Assert.Contains("version 3", Assert.Throws<SnapshotFormatException>(() => r.Expect("test-kind", 2)).Message, StringComparison.Ordinal);
            r.Expect("test-kind", 3);
            Assert.Throws<SnapshotFormatException>(() => r.GetArray("state", 5));
            Assert.Throws<SnapshotFormatException>(() => r.GetDouble("missing"));
            Assert.Throws<SnapshotFormatException>(() => r.GetDouble("count"));
        }
    }
}
