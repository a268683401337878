using System;
using System.Globalization;
using System.IO;
using OnlineRidge.Internal;

namespace OnlineRidge.Persistence
{
    /// <summary>
    /// What every estimator's WriteSnapshot and ReadSnapshot share: argument checks, the kind check, validation helpers that throw
    /// <see cref="SnapshotFormatException"/>, and the text form of the enumerations (names, so that a JSON snapshot reads as settings).
    /// </summary>
    internal static class SnapshotSupport
    {
        /// <summary>Checks the arguments and writes the record (caller mistakes throw ArgumentException before anything is written).</summary>
        public static void Write(StateRecord record, Stream destination, SnapshotEncoding encoding)
        {
            Guard.NotNull(destination, nameof(destination));
            if (encoding != SnapshotEncoding.Binary && encoding != SnapshotEncoding.Json)
            {
                Guard.ThrowOutOfRange(nameof(encoding), (double)encoding, "must be SnapshotEncoding.Binary or SnapshotEncoding.Json");
            }

            if (!destination.CanWrite)
            {
                Guard.ThrowArgument(nameof(destination), "The destination stream is not writable.");
            }

            SnapshotCodec.Write(record, destination, encoding);
        }

        /// <summary>Reads a record (either encoding) and checks its kind and layout version.</summary>
        public static StateRecord Read(Stream source, string kind, int maxVersion)
        {
            Guard.NotNull(source, nameof(source));
            if (!source.CanRead)
            {
                Guard.ThrowArgument(nameof(source), "The source stream is not readable.");
            }

            StateRecord record = SnapshotCodec.Read(source);
            record.Expect(kind, maxVersion);
            return record;
        }

        /// <summary>Builds settings from snapshot values; a value the settings reject makes the snapshot invalid.</summary>
        public static T Settings<T>(Func<T> create)
        {
            try
            {
                return create();
            }
            catch (ArgumentException ex)
            {
                throw new SnapshotFormatException("the snapshot holds invalid settings: " + ex.Message, ex);
            }
        }

        public static SnapshotFormatException Invalid(string format, params object[] args) =>
            new(string.Format(CultureInfo.InvariantCulture, format, args));

        /// <summary>The entry as a count in [0, long.MaxValue].</summary>
        public static long Count(StateRecord record, string name)
        {
            long v = record.GetInt64(name);
            if (v < 0)
            {
                throw Invalid("snapshot entry '{0}' = {1} is negative", name, v);
            }

            return v;
        }

        /// <summary>The entry as a finite double ≥ 0.</summary>
        public static double NonNegative(StateRecord record, string name)
        {
            double v = record.GetDouble(name);
            if (!(v >= 0.0) || double.IsInfinity(v))
            {
                throw Invalid("snapshot entry '{0}' = {1:R} must be a finite number >= 0", name, v);
            }

            return v;
        }

        /// <summary>The array entry of the given length with every value finite.</summary>
        public static double[] FiniteArray(StateRecord record, string name, int length)
        {
            double[] a = record.GetArray(name, length);
            for (int i = 0; i < a.Length; i++)
            {
                if (!Guard.IsFinite(a[i]))
                {
                    throw Invalid("snapshot entry '{0}'[{1}] = {2:R} is not finite", name, i, a[i]);
                }
            }

            return a;
        }

        /// <summary>The prior entry: an empty array means none (null), otherwise exactly <paramref name="p"/> finite values.</summary>
        public static double[]? Prior(StateRecord record, string name, int p)
        {
            double[] a = record.GetArray(name);
            if (a.Length == 0)
            {
                return null;
            }

            return FiniteArray(record, name, p);
        }

        /// <summary>The prior as stored: empty when none.</summary>
        public static double[] PriorEntry(System.Collections.Generic.IReadOnlyList<double>? prior)
        {
            if (prior is null)
            {
                return Array.Empty<double>();
            }

            var a = new double[prior.Count];
            for (int i = 0; i < a.Length; i++)
            {
                a[i] = prior[i];
            }

            return a;
        }

        /// <summary>The parameter count entry, within [1, max].</summary>
        public static int ParameterCount(StateRecord record, string name, int max)
        {
            long v = record.GetInt64(name);
            if (v < 1 || v > max)
            {
                throw Invalid("snapshot entry '{0}' = {1} must lie in [1, {2}]", name, v, max);
            }

            return (int)v;
        }

        /// <summary>The entry as a defined member of <typeparamref name="T"/>, written by its name (numeric text is rejected).</summary>
        public static T EnumMember<T>(StateRecord record, string name)
            where T : struct, Enum
        {
            string s = record.GetString(name);
            if (Enum.TryParse(s, false, out T value) && string.Equals(value.ToString(), s, StringComparison.Ordinal))
            {
                return value;
            }

            throw Invalid("snapshot entry '{0}' = '{1}' is not a {2} member", name, s, typeof(T).Name);
        }

        public static string PolicyName(InvalidSamplePolicy policy) => policy == InvalidSamplePolicy.SkipAndCount ? "SkipAndCount" : "Throw";

        public static InvalidSamplePolicy Policy(StateRecord record, string name) => record.GetString(name) switch
        {
            "Throw" => InvalidSamplePolicy.Throw,
            "SkipAndCount" => InvalidSamplePolicy.SkipAndCount,
            var s => throw Invalid("snapshot entry '{0}' = '{1}' is not an invalid-sample policy (Throw or SkipAndCount)", name, s),
        };
    }
}
