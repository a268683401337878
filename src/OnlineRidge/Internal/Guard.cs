using System;
using System.Diagnostics.CodeAnalysis;
using System.Globalization;

namespace OnlineRidge.Internal
{
    /// <summary>Precondition checks that throw through small non-inlined helpers, so hot methods stay small.</summary>
    internal static class Guard
    {
        [DoesNotReturn]
        public static void ThrowArgument(string paramName, string message) =>
            throw new ArgumentException(message, paramName);

        [DoesNotReturn]
        public static void ThrowOutOfRange(string paramName, double value, string rule) =>
            throw new ArgumentOutOfRangeException(paramName, value, string.Format(CultureInfo.InvariantCulture, "{0} = {1:R} is invalid: {2}.", paramName, value, rule));

        [DoesNotReturn]
        public static void ThrowNonFinite(string paramName, int index, double value) =>
            throw new ArgumentException(string.Format(CultureInfo.InvariantCulture, "{0}[{1}] = {2:R} is not a finite number.", paramName, index, value), paramName);

        [DoesNotReturn]
        public static void ThrowLength(string paramName, int actual, int expected) =>
            throw new ArgumentException(string.Format(CultureInfo.InvariantCulture, "{0} has length {1}; expected {2}.", paramName, actual, expected), paramName);

        [DoesNotReturn]
        public static void ThrowBreakdown(BreakdownInfo info) => throw new RidgeBreakdownException(info);

        /// <summary>Rejects NaN, infinities and negative values.</summary>
        public static void NonNegativeFinite(double value, string paramName)
        {
            if (!(value >= 0.0) || double.IsInfinity(value))
            {
                ThrowOutOfRange(paramName, value, "must be a finite number >= 0");
            }
        }

        /// <summary>Rejects a forgetting factor outside (0, 1] (and NaN).</summary>
        public static void ForgettingFactor(double beta, string paramName)
        {
            if (!(beta > 0.0 && beta <= 1.0))
            {
                ThrowOutOfRange(paramName, beta, "a forgetting factor must lie in (0, 1]");
            }
        }

        /// <summary>A copy of an optional vector setting (null stays null), rejecting any non-finite entry with the setting's name.</summary>
        public static double[]? FiniteCopy(System.Collections.Generic.IReadOnlyList<double>? value, string paramName)
        {
            if (value is null)
            {
                return null;
            }

            var copy = new double[value.Count];
            for (int i = 0; i < copy.Length; i++)
            {
                copy[i] = value[i];
            }

            AllFinite(copy, paramName);
            return copy;
        }

        /// <summary>Rejects any non-finite entry.</summary>
        public static void AllFinite(ReadOnlySpan<double> values, string paramName)
        {
            if (AreAllFinite(values))
            {
                return;
            }

            for (int i = 0; i < values.Length; i++)
            {
                if (!IsFinite(values[i]))
                {
                    ThrowNonFinite(paramName, i, values[i]);
                }
            }
        }

        /// <summary>Rejects a sample weight that is negative, NaN or infinite.</summary>
        public static void Weight(double w, string paramName)
        {
            if (!(w >= 0.0) || double.IsInfinity(w))
            {
                ThrowOutOfRange(paramName, w, "a sample weight must be a finite number >= 0");
            }
        }

        /// <summary>Rejects an undefined <see cref="InvalidSamplePolicy"/> value.</summary>
        public static void Policy(InvalidSamplePolicy policy, string paramName)
        {
            if (policy != InvalidSamplePolicy.Throw && policy != InvalidSamplePolicy.SkipAndCount)
            {
                ThrowOutOfRange(paramName, (double)policy, "must be InvalidSamplePolicy.Throw or InvalidSamplePolicy.SkipAndCount");
            }
        }

        /// <summary>
        /// True when the sample (x, y, w) is usable: every entry of x and y finite, w finite and ≥ 0. O(p), no allocation; the length is not
        /// checked here.
        /// </summary>
        public static bool IsUsableSample(ReadOnlySpan<double> x, double y, double w) => IsUsableOutputAndWeight(y, w) && AreAllFinite(x);

        /// <summary>True when y is finite and w is finite and ≥ 0 (the scalar part of <see cref="IsUsableSample"/>). O(1).</summary>
        public static bool IsUsableOutputAndWeight(double y, double w) => IsFinite(y) && w >= 0.0 && !double.IsInfinity(w);

        /// <summary>
        /// True when every value is finite: Σ (vᵢ − vᵢ) is 0 exactly when no vᵢ is ±∞ or NaN (v − v is NaN for those), so one branch-free
        /// pass (vectorized on the net10.0 build) tests the whole span. O(n), no allocation.
        /// </summary>
        public static bool AreAllFinite(ReadOnlySpan<double> values)
        {
            int n = values.Length;
            int i = 0;
            double probe = 0.0;
#if NET
            if (System.Runtime.Intrinsics.Vector256.IsHardwareAccelerated && n >= 4)
            {
                ref double r = ref System.Runtime.InteropServices.MemoryMarshal.GetReference(values);
                System.Runtime.Intrinsics.Vector256<double> acc = System.Runtime.Intrinsics.Vector256<double>.Zero;
                for (; i + 4 <= n; i += 4)
                {
                    System.Runtime.Intrinsics.Vector256<double> v = System.Runtime.Intrinsics.Vector256.LoadUnsafe(ref r, (nuint)i);
                    acc += v - v;
                }

                probe = GramUpdateKernels.SumOfLanes(acc);
            }
#endif
            for (; i < n; i++)
            {
                double v = values[i];
                probe += v - v;
            }

            return probe == 0.0;
        }

        public static void NotNull([NotNull] object? value, string paramName)
        {
            if (value is null)
            {
                ThrowNull(paramName);
            }
        }

        [DoesNotReturn]
        private static void ThrowNull(string paramName) => throw new ArgumentNullException(paramName);

        public static void Length(int actual, int expected, string paramName)
        {
            if (actual != expected)
            {
                ThrowLength(paramName, actual, expected);
            }
        }

        public static bool IsFinite(double value) =>
#if NET
            double.IsFinite(value);
#else
            !double.IsNaN(value) && !double.IsInfinity(value);
#endif
    }
}
