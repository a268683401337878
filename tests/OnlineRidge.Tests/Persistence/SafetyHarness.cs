using System;
using System.Collections.Generic;
using System.IO;
using System.Linq;
using System.Text;
using OnlineRidge.Persistence;
using OnlineRidge.Tests.Properties;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Persistence
{
    /// <summary>
    /// How the safety properties drive one estimator type: construction from a generated case and a policy, sample updates (x, y, w),
    /// snapshots, and the results whose bits must agree (parameters, covariance, moments...). A form without a separate output (the
    /// streaming moments) folds y into its vector, so a dropout in y is a dropout of its vector too.
    /// </summary>
    internal sealed class SafetyForm<T>
        where T : class
    {
        public required string Kind { get; init; }

        public required Func<SquareRootCase, InvalidSamplePolicy, T> Create { get; init; }

        public required Action<T, double[], double, double> Update { get; init; }

        public required Func<T, double[], double, double, (bool Accepted, BreakdownInfo Breakdown)> TryUpdate { get; init; }

        public required Action<T, Stream, SnapshotEncoding> Write { get; init; }

        public required Func<Stream, T> Read { get; init; }

        public required Func<T, long> SampleCount { get; init; }

        public required Func<T, long> SkippedCount { get; init; }

        /// <summary>Every result a user can read, as doubles (null entries when a read reports a breakdown), in a fixed order.</summary>
        public required Func<T, double[]> Results { get; init; }

        /// <summary>Queries with a caller mistake: (parameter named by the exception, call on the estimator given a valid x).</summary>
        public required Func<T, double[], IEnumerable<(string Parameter, Action Call)>> BadQueries { get; init; }

        /// <summary>The name the argument checks give the regressor vector ("x", or "u" for a form that takes one vector).</summary>
        public string XName { get; init; } = "x";

        /// <summary>Double entries that accept −1 (so the generic "−1 is invalid" edit does not apply to them).</summary>
        public IReadOnlyCollection<string> NegativeAllowed { get; init; } = System.Array.Empty<string>();

        public byte[] Bytes(T est, SnapshotEncoding encoding = SnapshotEncoding.Binary) => SnapshotBytes.Of((s, e) => Write(est, s, e), encoding);

        public T Restore(byte[] bytes) => SnapshotBytes.Read(Read, bytes);

        /// <summary>Feeds samples [from, to) through TryUpdate; breakdowns leave the state as it was and are simply passed over.</summary>
        public void Feed(T est, SquareRootCase c, int from, int to)
        {
            for (int i = from; i < to; i++)
            {
                TryUpdate(est, c.X[i], c.Y[i], c.W[i]);
            }
        }
    }

    /// <summary>The bodies of the safety properties, shared by every form (each form's test class names the theorem and the seed).</summary>
    internal static class SafetyHarness
    {
        private static readonly double[] NonFinite = { double.NaN, double.PositiveInfinity, double.NegativeInfinity };

        private static void AssertUnchanged<T>(SafetyForm<T> form, T est, string parameter, Action call, string label)
            where T : class
        {
            byte[] before = form.Bytes(est);
            ArgumentException ex = Assert.ThrowsAny<ArgumentException>(call);
            Assert.Equal(parameter, ex.ParamName);
            SnapshotBytes.AssertSame(before, form.Bytes(est), label);
        }

        /// <summary>
        /// Under the default policy every bad sample (NaN or ±∞ in x, y or the weight, a negative weight, a wrong length) and every bad query
        /// throws an ArgumentException naming the parameter, and the binary snapshot is identical before and after; under SkipAndCount a
        /// wrong length still throws and changes nothing.
        /// </summary>
        public static void BadInputChangesNothing<T>(SafetyForm<T> form, ulong seed, int cases)
            where T : class
        {
            SquareRootGenerators.Check(SquareRootGenerators.Arbitrary(maxP: 12, extraN: 40), seed, c =>
            {
                T est = form.Create(c, InvalidSamplePolicy.Throw);
                T skipping = form.Create(c, InvalidSamplePolicy.SkipAndCount);
                form.Feed(est, c, 0, c.N / 2);
                form.Feed(skipping, c, 0, c.N / 2);
                int j = (int)((uint)c.Seed % (uint)c.P);
                double[] x = (double[])c.X[c.N - 1].Clone();
                double y = c.Y[c.N - 1];
                foreach (double bad in NonFinite)
                {
                    double[] xb = (double[])x.Clone();
                    xb[j] = bad;
                    AssertUnchanged(form, est, form.XName, () => form.Update(est, xb, y, 1.0), $"x[{j}]={bad}");
                    AssertUnchanged(form, est, form.XName, () => form.TryUpdate(est, xb, y, 1.0), $"try x[{j}]={bad}");
                    AssertUnchanged(form, est, "weight", () => form.Update(est, x, y, bad), $"weight={bad}");
                    if (form.Kind != "StreamingMoments")
                    {
                        AssertUnchanged(form, est, "y", () => form.Update(est, x, bad, 1.0), $"y={bad}");
                    }

                    foreach ((string parameter, Action call) in form.BadQueries(est, xb))
                    {
                        AssertUnchanged(form, est, parameter, call, $"query {parameter} with x[{j}]={bad}");
                    }

                    foreach ((string parameter, Action call) in form.BadQueries(skipping, xb))
                    {
                        AssertUnchanged(form, skipping, parameter, call, $"skipping: query {parameter} with x[{j}]={bad}");
                    }
                }

                AssertUnchanged(form, est, "weight", () => form.Update(est, x, y, -double.Epsilon), "negative weight");
                AssertUnchanged(form, est, "weight", () => form.Update(est, x, y, -2.0), "negative weight");
                foreach (T e in new[] { est, skipping })
                {
                    AssertUnchanged(form, e, form.XName, () => form.Update(e, new double[c.P + 1], y, 1.0), "long x");
                    AssertUnchanged(form, e, form.XName, () => form.TryUpdate(e, new double[c.P + 1], double.NaN, -1.0), "long x with bad values");
                    AssertUnchanged(form, e, "encoding", () => form.Write(e, new MemoryStream(), (SnapshotEncoding)7), "undefined encoding");
                    AssertUnchanged(form, e, "destination", () => form.Write(e, null!, SnapshotEncoding.Binary), "null destination");
                }

                Assert.Equal(0, form.SkippedCount(skipping));
            }, cases);
        }

        /// <summary>
        /// Dropouts (NaN or ±∞ in x or y; NaN, ∞ or negative weights) inserted at random places leave a SkipAndCount estimator in exactly the
        /// state of a default-policy one fed the clean stream — every result and the snapshot bytes (with the skipped count set equal) — and
        /// the skipped count equals the number of dropouts.
        /// </summary>
        public static void SkipAndCountIgnoresExactlyTheDropouts<T>(SafetyForm<T> form, ulong seed, int cases)
            where T : class
        {
            SquareRootGenerators.Check(SquareRootGenerators.Arbitrary(extraN: 80), seed, c =>
            {
                T skipping = form.Create(c, InvalidSamplePolicy.SkipAndCount);
                T clean = form.Create(c, InvalidSamplePolicy.Throw);
                var rng = new Random(c.Seed);
                long dropouts = 0;
                for (int i = 0; i < c.N; i++)
                {
                    while (rng.NextDouble() < 0.2)
                    {
                        double[] x = (double[])c.X[i].Clone();
                        double y = c.Y[i];
                        double w = c.W[i];
                        switch (rng.Next(4))
                        {
                            case 0: x[rng.Next(c.P)] = NonFinite[rng.Next(3)]; break;
                            case 1: y = NonFinite[rng.Next(3)]; break;
                            case 2: w = rng.Next(2) == 0 ? -0.5 - rng.NextDouble() : NonFinite[rng.Next(2)]; break;
                            default: x[rng.Next(c.P)] = double.NaN; y = double.NaN; break;
                        }

                        (bool accepted, BreakdownInfo bd) = form.TryUpdate(skipping, x, y, w);
                        Assert.True(accepted && bd.IsNone, "a dropout is skipped, not reported");
                        dropouts++;
                    }

                    (bool a, BreakdownInfo ba) = form.TryUpdate(skipping, c.X[i], c.Y[i], c.W[i]);
                    (bool b, BreakdownInfo bb) = form.TryUpdate(clean, c.X[i], c.Y[i], c.W[i]);
                    Assert.Equal(b, a);
                    Assert.Equal(bb, ba);
                }

                Assert.Equal(dropouts, form.SkippedCount(skipping));
                Assert.Equal(form.SampleCount(clean), form.SampleCount(skipping));
                SnapshotBytes.AssertBitEqual(form.Results(clean), form.Results(skipping), "results");
                byte[] expected = SnapshotBytes.Edit(form.Bytes(clean), "invalidSamples", "SkipAndCount");
                SnapshotBytes.AssertSame(SnapshotBytes.Edit(expected, "skippedSampleCount", dropouts), form.Bytes(skipping), "state");
            }, cases);
        }

        /// <summary>
        /// A finite sample that would overflow the state is a breakdown, not a dropout, under either policy: TryUpdate returns false with
        /// <paramref name="expected"/>, Update throws RidgeBreakdownException, the snapshot bytes are unchanged and nothing is counted as
        /// skipped. Skipping 10⁵ dropouts allocates 0 bytes and changes only the counter.
        /// </summary>
        public static void OverflowIsReportedNotSkipped<T>(SafetyForm<T> form, InvalidSamplePolicy policy, double[] overflowing, double y, BreakdownKind expected)
            where T : class
        {
            var c = new SquareRootCase(17, overflowing.Length, 40, 0.99, 0.1, 0.0, true, true, SquareRootDesign.Well, 0.1, 0.1, true);
            T est = form.Create(c, policy);
            form.Feed(est, c, 0, c.N);
            byte[] before = form.Bytes(est);
            (bool accepted, BreakdownInfo bd) = form.TryUpdate(est, overflowing, y, 1.0);
            Assert.False(accepted);
            Assert.Equal(expected, bd.Kind);
            Assert.Equal(expected, Assert.Throws<RidgeBreakdownException>(() => form.Update(est, overflowing, y, 1.0)).Info.Kind);
            SnapshotBytes.AssertSame(before, form.Bytes(est), "overflowing sample");
            Assert.Equal(0, form.SkippedCount(est));
            if (policy != InvalidSamplePolicy.SkipAndCount)
            {
                return;
            }

            double[] dropout = (double[])c.X[0].Clone();
            dropout[0] = double.NaN;
            form.Update(est, dropout, 1.0, 1.0);
            // Two measured rounds: the runtime's tiering may allocate once on the calling thread during the first (seen with dynamic PGO);
            // an allocation per skipped sample would show in both.
            long allocated = long.MaxValue;
            for (int round = 0; round < 2; round++)
            {
                long start = GC.GetAllocatedBytesForCurrentThread();
                for (int i = 0; i < 100_000; i++)
                {
                    form.Update(est, dropout, 1.0, 1.0);
                }

                allocated = GC.GetAllocatedBytesForCurrentThread() - start;
            }

            Assert.Equal(0, allocated);
            Assert.Equal(200_001, form.SkippedCount(est));
            SnapshotBytes.AssertSame(before, SnapshotBytes.Edit(form.Bytes(est), "skippedSampleCount", 0L), "skipped samples change only the counter");
        }

        private static T RandomState<T>(SafetyForm<T> form, SquareRootCase c, int k)
            where T : class
        {
            InvalidSamplePolicy policy = c.Seed % 2 == 0 ? InvalidSamplePolicy.Throw : InvalidSamplePolicy.SkipAndCount;
            T est = form.Create(c, policy);
            form.Feed(est, c, 0, k);
            if (policy == InvalidSamplePolicy.SkipAndCount)
            {
                form.TryUpdate(est, new double[c.P], double.NaN, 1.0);
            }

            return est;
        }

        /// <summary>
        /// For random states (random settings, both policies, a random prefix of a random stream) restore(write(e)) written again gives the
        /// same bytes in both encodings, and every result agrees bit for bit.
        /// </summary>
        public static void RoundTripIsBitExact<T>(SafetyForm<T> form, ulong seed, int cases)
            where T : class
        {
            SquareRootGenerators.Check(SquareRootGenerators.Arbitrary(extraN: 60), seed, c =>
            {
                T est = RandomState(form, c, (int)((uint)(c.Seed / 7) % (uint)(c.N + 1)));
                byte[] binary = form.Bytes(est);
                byte[] json = form.Bytes(est, SnapshotEncoding.Json);
                foreach (SnapshotEncoding encoding in new[] { SnapshotEncoding.Binary, SnapshotEncoding.Json })
                {
                    T back = form.Restore(encoding == SnapshotEncoding.Binary ? binary : json);
                    SnapshotBytes.AssertSame(binary, form.Bytes(back), $"{encoding} round trip");
                    SnapshotBytes.AssertSame(json, form.Bytes(back, SnapshotEncoding.Json), $"{encoding} round trip as JSON");
                    Assert.Equal(form.SampleCount(est), form.SampleCount(back));
                    Assert.Equal(form.SkippedCount(est), form.SkippedCount(back));
                    SnapshotBytes.AssertBitEqual(form.Results(est), form.Results(back), $"{encoding} results");
                }
            }, cases);
        }

        /// <summary>
        /// An estimator saved after k samples (binary or JSON by case), restored and fed the rest of the stream gives bit-identical results to
        /// the one that never stopped, at six checkpoints, and the same snapshot at the end.
        /// </summary>
        public static void RestoredMidStreamContinuesBitIdentically<T>(SafetyForm<T> form, ulong seed, int cases)
            where T : class
        {
            SquareRootGenerators.Check(SquareRootGenerators.Arbitrary(extraN: 60), seed, c =>
            {
                int k = (int)((uint)(c.Seed / 5) % (uint)(c.N + 1));
                T running = RandomState(form, c, k);
                form.Results(running); // a cached solution must not matter
                T restored = form.Restore(form.Bytes(running, c.Seed % 3 == 0 ? SnapshotEncoding.Json : SnapshotEncoding.Binary));
                int step = Math.Max(1, (c.N - k) / 5);
                for (int i = k; i < c.N; i++)
                {
                    (bool a, BreakdownInfo ba) = form.TryUpdate(running, c.X[i], c.Y[i], c.W[i]);
                    (bool b, BreakdownInfo bb) = form.TryUpdate(restored, c.X[i], c.Y[i], c.W[i]);
                    Assert.Equal(a, b);
                    Assert.Equal(ba, bb);
                    if ((i - k) % step == 0 || i == c.N - 1)
                    {
                        SnapshotBytes.AssertBitEqual(form.Results(running), form.Results(restored), $"after sample {i}");
                    }
                }

                SnapshotBytes.AssertSame(form.Bytes(running), form.Bytes(restored), "final state");
            }, cases);
        }

        /// <summary>
        /// Corrupted (bit flips), truncated, extended, foreign-kind and unsupported-version snapshots, and snapshots with a valid checksum but
        /// any one entry missing, of the wrong type, of the wrong length (arrays), negative (counts and most doubles) or not a member name
        /// (strings), all throw SnapshotFormatException; the unedited snapshot restores. Plus the form's own semantic edits.
        /// </summary>
        public static void BadSnapshotsAreRejected<T>(SafetyForm<T> form, T est, IEnumerable<(string Name, object Value)> extraEdits)
            where T : class
        {
            byte[] good = form.Bytes(est);
            form.Restore(good);
            foreach (byte[] bad in SnapshotBytes.Corruptions(good))
            {
                Assert.Throws<SnapshotFormatException>(() => form.Restore(bad));
            }

            byte[] json = form.Bytes(est, SnapshotEncoding.Json);
            for (int len = 0; len < json.Length; len += 37)
            {
                Assert.Throws<SnapshotFormatException>(() => form.Restore(json.AsSpan(0, len).ToArray()));
            }

            string foreign = form.Kind == "SquareRootEstimator" ? "StreamingMoments" : "SquareRootEstimator";
            Assert.Throws<SnapshotFormatException>(() => form.Restore(SnapshotBytes.Edit(good, string.Empty, null, kind: foreign)));
            int current = SnapshotCodec.Read(new MemoryStream(good)).KindVersion;
            Assert.Throws<SnapshotFormatException>(() => form.Restore(SnapshotBytes.Edit(good, string.Empty, null, version: current + 1)));
            Assert.Throws<SnapshotFormatException>(() => form.Restore(SnapshotBytes.Edit(good, string.Empty, null, version: 0)));

            StateRecord record = SnapshotCodec.Read(new MemoryStream(good));
            var edits = new List<(string Name, object? Value)>();
            foreach (KeyValuePair<string, object> e in record.Entries)
            {
                edits.Add((e.Key, null));
                switch (e.Value)
                {
                    case double[] a:
                        edits.Add((e.Key, a.Concat(new[] { 1.0 }).ToArray()));
                        edits.Add((e.Key, 1.0));
                        if (a.Length > 0)
                        {
                            edits.Add((e.Key, a.Select((v, i) => i == a.Length - 1 ? double.NaN : v).ToArray()));
                        }

                        break;
                    case long:
                        edits.Add((e.Key, -1L));
                        edits.Add((e.Key, 1.0));
                        break;
                    case double:
                        if (!form.NegativeAllowed.Contains(e.Key))
                        {
                            edits.Add((e.Key, -1.0));
                        }

                        edits.Add((e.Key, "1"));
                        break;
                    case string:
                        edits.Add((e.Key, "Bogus"));
                        edits.Add((e.Key, "1"));
                        break;
                    case bool:
                        edits.Add((e.Key, "true"));
                        break;
                }
            }

            edits.AddRange(extraEdits.Select(e => (e.Name, (object?)e.Value)));
            foreach ((string name, object? value) in edits)
            {
                byte[] bad = SnapshotBytes.Edit(good, name, value);
                var ex = Record.Exception(() => form.Restore(bad));
                Assert.True(ex is SnapshotFormatException, $"edit {name} = {value ?? "(removed)"}: {ex?.GetType().Name ?? "accepted"}");
            }

            Assert.Throws<ArgumentNullException>(() => form.Read(null!));
        }

        /// <summary>The JSON snapshot is readable text naming the kind and every entry (settings included) by name.</summary>
        public static void JsonNamesEveryEntry<T>(SafetyForm<T> form, T est, params string[] values)
            where T : class
        {
            string json = Encoding.UTF8.GetString(form.Bytes(est, SnapshotEncoding.Json));
            Assert.Contains($"\"kind\": \"{form.Kind}\"", json, StringComparison.Ordinal);
            foreach (KeyValuePair<string, object> e in SnapshotCodec.Read(new MemoryStream(form.Bytes(est))).Entries)
            {
                Assert.Contains($"\"{e.Key}\": {{", json, StringComparison.Ordinal);
            }

            foreach (string v in values)
            {
                Assert.Contains(v, json, StringComparison.Ordinal);
            }
        }
    }
}
