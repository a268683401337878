using System;
using System.Collections.Generic;
using System.IO;
using System.Linq;
using OnlineRidge.Persistence;
using Xunit;

namespace OnlineRidge.Tests.Support
{
    /// <summary>
    /// Snapshot helpers for the persistence and safety tests: the binary snapshot as a state fingerprint, bit-for-bit comparisons, and
    /// surgery on a decoded record (replace, remove, re-kind) re-encoded with a valid checksum, so that the estimator's own validation — not
    /// the checksum — must catch the inconsistency.
    /// </summary>
    internal static class SnapshotBytes
    {
        public static byte[] Of(Action<Stream, SnapshotEncoding> write, SnapshotEncoding encoding = SnapshotEncoding.Binary)
        {
            using var ms = new MemoryStream();
            write(ms, encoding);
            return ms.ToArray();
        }

        public static T Read<T>(Func<Stream, T> read, byte[] bytes)
        {
            using var ms = new MemoryStream(bytes);
            return read(ms);
        }

        /// <summary>The decoded record of a snapshot with entry <paramref name="name"/> replaced by <paramref name="value"/> (null: removed), re-encoded.</summary>
        public static byte[] Edit(byte[] snapshot, string name, object? value, string? kind = null, int? version = null)
        {
            StateRecord r = SnapshotCodec.Read(new MemoryStream(snapshot));
            var edited = new StateRecord(kind ?? r.Kind, version ?? r.KindVersion);
            bool found = false;
            foreach (KeyValuePair<string, object> e in r.Entries)
            {
                if (e.Key == name)
                {
                    found = true;
                    if (value is not null)
                    {
                        edited.AddEntry(name, value);
                    }
                }
                else
                {
                    edited.AddEntry(e.Key, e.Value);
                }
            }

            Assert.True(found || name.Length == 0, "no entry " + name);
            using var ms = new MemoryStream();
            SnapshotCodec.Write(edited, ms, SnapshotEncoding.Binary);
            return ms.ToArray();
        }

        /// <summary>The array entry of a snapshot (for building edits).</summary>
        public static double[] Array(byte[] snapshot, string name) => (double[])SnapshotCodec.Read(new MemoryStream(snapshot)).GetArray(name).Clone();

        public static void AssertSame(byte[] expected, byte[] actual, string label)
        {
            if (!expected.AsSpan().SequenceEqual(actual))
            {
                int at = 0;
                while (at < Math.Min(expected.Length, actual.Length) && expected[at] == actual[at])
                {
                    at++;
                }

                Assert.Fail($"{label}: snapshot bytes differ (lengths {expected.Length} and {actual.Length}, first difference at byte {at})");
            }
        }

        public static void AssertBitEqual(double[]? expected, double[]? actual, string label)
        {
            Assert.Equal(expected is null, actual is null);
            if (expected is null || actual is null)
            {
                return;
            }

            Assert.True(expected.Select(BitConverter.DoubleToInt64Bits).SequenceEqual(actual.Select(BitConverter.DoubleToInt64Bits)),
                $"{label}: [{string.Join(", ", expected.Select(v => v.ToString("R", System.Globalization.CultureInfo.InvariantCulture)))}] vs [{string.Join(", ", actual.Select(v => v.ToString("R", System.Globalization.CultureInfo.InvariantCulture)))}]");
        }

        /// <summary>Single bit flips at a spread of positions and truncations at a spread of lengths, each of which must be rejected.</summary>
        public static IEnumerable<byte[]> Corruptions(byte[] good)
        {
            int step = Math.Max(1, good.Length / 97);
            for (int i = 0; i < good.Length; i += step)
            {
                var bad = (byte[])good.Clone();
                bad[i] ^= (byte)(1 << (i % 8));
                yield return bad;
            }

            for (int len = 0; len < good.Length; len += step)
            {
                yield return good.AsSpan(0, len).ToArray();
            }

            yield return good.Concat(new byte[] { 0 }).ToArray();
        }
    }
}
