using System;
#if NET
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
#endif

namespace OnlineRidge.Internal
{
    /// <summary>
    /// Weighted column statistics of a row-major n×p matrix, computed in passes over whole rows (the matrix is read row after row, never
    /// down a column, so each pass streams the data once however wide it is).
    /// </summary>
    /// <remarks>
    /// Every column's sum receives its terms in row order with separate multiply and add (no fused multiply-add), so the results have
    /// exactly the bits of the plain column-by-column loops; the vector path (four columns per 256-bit vector) and the portable path agree
    /// bit for bit. Cost per pass: about 2 operations per entry, one read of the data.
    /// </remarks>
    internal static class ColumnMoments
    {
        /// <summary>
        /// Weighted means with one correction pass (two-pass accuracy): m⁰ⱼ = Σ aᵢxᵢⱼ / W, then mⱼ = m⁰ⱼ + Σ aᵢ(xᵢⱼ − m⁰ⱼ) / W.
        /// </summary>
        public static void WeightedMeans(ReadOnlySpan<double> x, int n, int p, ReadOnlySpan<double> a, double weightSum, Span<double> mean)
        {
            var sum = new double[p];
            for (int i = 0; i < n; i++)
            {
                AddScaled(sum, a[i], x.Slice(i * p, p));
            }

            var m0 = new double[p];
            for (int j = 0; j < p; j++)
            {
                m0[j] = sum[j] / weightSum;
            }

            Array.Clear(sum, 0, p);
            for (int i = 0; i < n; i++)
            {
                AddScaledDifference(sum, a[i], x.Slice(i * p, p), m0);
            }

            for (int j = 0; j < p; j++)
            {
                mean[j] = m0[j] + (sum[j] / weightSum);
            }
        }

        /// <summary>
        /// Spread sⱼ = √(Σ aᵢ(xᵢⱼ − mⱼ)² / W) of every column, computed as Mⱼ·√(Σ aᵢ((xᵢⱼ − mⱼ)/Mⱼ)² / W) with Mⱼ the largest |xᵢⱼ − mⱼ|
        /// over rows of positive weight, so that it cannot overflow (rows of zero weight are left out of both sums); 0 for a column with Mⱼ = 0.
        /// </summary>
        public static void WeightedSpreads(ReadOnlySpan<double> x, int n, int p, ReadOnlySpan<double> a, ReadOnlySpan<double> mean, double weightSum, Span<double> spread)
        {
            var largest = new double[p];
            for (int i = 0; i < n; i++)
            {
                if (a[i] > 0.0)
                {
                    MaxAbsDifference(largest, x.Slice(i * p, p), mean);
                }
            }

            var sum = new double[p];
            for (int i = 0; i < n; i++)
            {
                // Rows of zero weight take no part: their values are not bounded by Mⱼ, and 0·∞ would be NaN.
                if (a[i] > 0.0)
                {
                    AddWeightedSquares(sum, a[i], x.Slice(i * p, p), mean, largest);
                }
            }

            for (int j = 0; j < p; j++)
            {
                spread[j] = largest[j] == 0.0 ? 0.0 : largest[j] * Math.Sqrt(sum[j] / weightSum);
            }
        }

        // sum[j] += a·x[j]
        private static void AddScaled(double[] sum, double a, ReadOnlySpan<double> x)
        {
            int j = 0;
#if NET
            if (Vector256.IsHardwareAccelerated)
            {
                ref double s = ref MemoryMarshal.GetArrayDataReference(sum);
                ref double xr = ref MemoryMarshal.GetReference(x);
                Vector256<double> va = Vector256.Create(a);
                for (; j + 4 <= x.Length; j += 4)
                {
                    nuint u = (nuint)j;
                    (Vector256.LoadUnsafe(ref s, u) + (va * Vector256.LoadUnsafe(ref xr, u))).StoreUnsafe(ref s, u);
                }
            }
#endif
            for (; j < x.Length; j++)
            {
                sum[j] += a * x[j];
            }
        }

        // sum[j] += a·(x[j] − m[j])
        private static void AddScaledDifference(double[] sum, double a, ReadOnlySpan<double> x, double[] m)
        {
            int j = 0;
#if NET
            if (Vector256.IsHardwareAccelerated)
            {
                ref double s = ref MemoryMarshal.GetArrayDataReference(sum);
                ref double xr = ref MemoryMarshal.GetReference(x);
                ref double mr = ref MemoryMarshal.GetArrayDataReference(m);
                Vector256<double> va = Vector256.Create(a);
                for (; j + 4 <= x.Length; j += 4)
                {
                    nuint u = (nuint)j;
                    (Vector256.LoadUnsafe(ref s, u) + (va * (Vector256.LoadUnsafe(ref xr, u) - Vector256.LoadUnsafe(ref mr, u)))).StoreUnsafe(ref s, u);
                }
            }
#endif
            for (; j < x.Length; j++)
            {
                sum[j] += a * (x[j] - m[j]);
            }
        }

        // largest[j] = max(largest[j], |x[j] − m[j]|)
        private static void MaxAbsDifference(double[] largest, ReadOnlySpan<double> x, ReadOnlySpan<double> m)
        {
            int j = 0;
#if NET
            if (Vector256.IsHardwareAccelerated)
            {
                ref double l = ref MemoryMarshal.GetArrayDataReference(largest);
                ref double xr = ref MemoryMarshal.GetReference(x);
                ref double mr = ref MemoryMarshal.GetReference(m);
                for (; j + 4 <= x.Length; j += 4)
                {
                    nuint u = (nuint)j;
                    Vector256.Max(Vector256.LoadUnsafe(ref l, u), Vector256.Abs(Vector256.LoadUnsafe(ref xr, u) - Vector256.LoadUnsafe(ref mr, u))).StoreUnsafe(ref l, u);
                }
            }
#endif
            for (; j < x.Length; j++)
            {
                largest[j] = Math.Max(largest[j], Math.Abs(x[j] - m[j]));
            }
        }

        // sum[j] += a·d·d with d = (x[j] − m[j]) / largest[j]  (evaluated as (a·d)·d, as the column loop did)
        private static void AddWeightedSquares(double[] sum, double a, ReadOnlySpan<double> x, ReadOnlySpan<double> m, double[] largest)
        {
            int j = 0;
#if NET
            if (Vector256.IsHardwareAccelerated)
            {
                ref double s = ref MemoryMarshal.GetArrayDataReference(sum);
                ref double xr = ref MemoryMarshal.GetReference(x);
                ref double mr = ref MemoryMarshal.GetReference(m);
                ref double lr = ref MemoryMarshal.GetArrayDataReference(largest);
                Vector256<double> va = Vector256.Create(a);
                for (; j + 4 <= x.Length; j += 4)
                {
                    nuint u = (nuint)j;
                    Vector256<double> d = (Vector256.LoadUnsafe(ref xr, u) - Vector256.LoadUnsafe(ref mr, u)) / Vector256.LoadUnsafe(ref lr, u);
                    (Vector256.LoadUnsafe(ref s, u) + (va * d * d)).StoreUnsafe(ref s, u);
                }
            }
#endif
            for (; j < x.Length; j++)
            {
                double d = (x[j] - m[j]) / largest[j];
                sum[j] += a * d * d;
            }
        }
    }
}
