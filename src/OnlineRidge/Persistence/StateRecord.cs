using System;
using System.Collections.Generic;
using System.Globalization;

namespace OnlineRidge.Persistence
{
    /// <summary>
    /// The self-describing content of a snapshot: the estimator kind and its state-layout version, and named entries (doubles, integers,
    /// flags, strings, double arrays) in insertion order. Estimators build one to save and read one to restore.
    /// </summary>
    internal sealed class StateRecord
    {
        private readonly List<KeyValuePair<string, object>> entries = new();
        private readonly Dictionary<string, object> byName = new(StringComparer.Ordinal);

        public StateRecord(string kind, int kindVersion)
        {
            Kind = kind;
            KindVersion = kindVersion;
        }

        public string Kind { get; }

        public int KindVersion { get; }

        public IReadOnlyList<KeyValuePair<string, object>> Entries => entries;

        public StateRecord Add(string name, double value) => AddEntry(name, value);

        public StateRecord Add(string name, long value) => AddEntry(name, value);

        public StateRecord Add(string name, bool value) => AddEntry(name, value);

        public StateRecord Add(string name, string value) => AddEntry(name, value);

        /// <summary>Adds a copy of the values.</summary>
        public StateRecord Add(string name, ReadOnlySpan<double> values) => AddEntry(name, values.ToArray());

        internal StateRecord AddEntry(string name, object value)
        {
            if (byName.ContainsKey(name))
            {
                throw new InvalidOperationException("duplicate snapshot entry " + name);
            }

            entries.Add(new KeyValuePair<string, object>(name, value));
            byName.Add(name, value);
            return this;
        }

        public double GetDouble(string name) => Get<double>(name);

        public long GetInt64(string name) => Get<long>(name);

        public int GetInt32(string name)
        {
            long v = Get<long>(name);
            if (v < int.MinValue || v > int.MaxValue)
            {
                throw new SnapshotFormatException(string.Format(CultureInfo.InvariantCulture, "snapshot entry '{0}' = {1} is out of range", name, v));
            }

            return (int)v;
        }

        public bool GetBoolean(string name) => Get<bool>(name);

        public string GetString(string name) => Get<string>(name);

        /// <summary>The array entry, which must have exactly <paramref name="expectedLength"/> values (or any length when negative).</summary>
        public double[] GetArray(string name, int expectedLength = -1)
        {
            double[] a = Get<double[]>(name);
            if (expectedLength >= 0 && a.Length != expectedLength)
            {
                throw new SnapshotFormatException(string.Format(CultureInfo.InvariantCulture, "snapshot entry '{0}' has {1} values; expected {2}", name, a.Length, expectedLength));
            }

            return a;
        }

        /// <summary>Throws unless this record is of <paramref name="kind"/> with a layout version this build can read.</summary>
        public void Expect(string kind, int maxVersion)
        {
            if (!string.Equals(Kind, kind, StringComparison.Ordinal))
            {
                throw new SnapshotFormatException(string.Format(CultureInfo.InvariantCulture, "the snapshot holds a '{0}', not a '{1}'", Kind, kind));
            }

            if (KindVersion < 1 || KindVersion > maxVersion)
            {
                throw new SnapshotFormatException(string.Format(CultureInfo.InvariantCulture, "'{0}' snapshot version {1} is not supported (this build reads 1 to {2})", kind, KindVersion, maxVersion));
            }
        }

        private T Get<T>(string name)
        {
            if (!byName.TryGetValue(name, out object? v))
            {
                throw new SnapshotFormatException("the snapshot has no entry '" + name + "'");
            }

            if (v is T t)
            {
                return t;
            }

            throw new SnapshotFormatException(string.Format(CultureInfo.InvariantCulture, "snapshot entry '{0}' is a {1}, expected {2}", name, v.GetType().Name, typeof(T).Name));
        }
    }
}
