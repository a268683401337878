using System;
#if NET
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
#endif

namespace OnlineRidge.Internal
{
    /// <summary>
    /// Writes rows of the batch design in solver coordinates, multiplied by the square root of their effective weight:
    /// zᵢₖ = √aᵢ·(xᵢⱼ − mⱼ)·(1/Sⱼ) over the active columns j = Active[k], and zᵢ_q = √aᵢ·(yᵢ − m_y). Rows of zero weight are skipped.
    /// </summary>
    /// <remarks>
    /// Multiplies by the reciprocal of the scale (one extra rounding of relative size ε per entry, far below the backward error of any
    /// solver) so that the vector path needs no division. When every column is active the columns are processed four at a time with
    /// 256-bit vectors; the operations (subtract, multiply, multiply) and their order are the same as in the scalar loop, so both paths give
    /// identical bits. Cost ≈ 3 operations per entry, one read of the row.
    /// </remarks>
    internal sealed class WeightedRows
    {
        private readonly double[] mean;
        private readonly double[] inverseScale;
        private readonly int[] active;
        private readonly double[] weights;
        private readonly double meanY;
        private readonly int p;
        private readonly int q;
        private readonly bool allActive;

        public WeightedRows(BatchProblem problem)
        {
            p = problem.Columns;
            active = problem.Active;
            q = active.Length;
            weights = problem.Weights;
            meanY = problem.MeanY;
            mean = new double[q];
            inverseScale = new double[q];
            allActive = q == p;
            for (int k = 0; k < q; k++)
            {
                int j = active[k];
                mean[k] = problem.MeanX[j];
                inverseScale[k] = 1.0 / problem.Scale[j];
                allActive &= j == k;
            }
        }

        /// <summary>Number of output columns c = q + 1.</summary>
        public int Columns => q + 1;

        /// <summary>
        /// Writes up to <paramref name="maxRows"/> weighted rows, taken from rows <paramref name="next"/> .. <paramref name="end"/> − 1 of the
        /// data, into <paramref name="destination"/> (entry (r, k) at r·rowStride + k·columnStride) and advances <paramref name="next"/>
        /// past the rows consumed.
        /// </summary>
        /// <returns>The number of rows written.</returns>
        public int Fill(ReadOnlySpan<double> x, ReadOnlySpan<double> y, ref int next, int end, Span<double> destination, int rowStride, int columnStride, int maxRows)
        {
            int count = 0;
            int i = next;
            for (; i < end && count < maxRows; i++)
            {
                double a = weights[i];
                if (a == 0.0)
                {
                    continue;
                }

                double s = Math.Sqrt(a);
                ReadOnlySpan<double> xi = x.Slice(i * p, p);
                Span<double> row = destination.Slice(count * rowStride);
                int k = 0;
                if (allActive && columnStride == 1)
                {
#if NET
                    if (Vector256.IsHardwareAccelerated)
                    {
                        ref double xr = ref MemoryMarshal.GetReference(xi);
                        ref double mr = ref MemoryMarshal.GetArrayDataReference(mean);
                        ref double sr = ref MemoryMarshal.GetArrayDataReference(inverseScale);
                        ref double dr = ref MemoryMarshal.GetReference(row);
                        Vector256<double> vs = Vector256.Create(s);
                        for (; k + 4 <= q; k += 4)
                        {
                            nuint u = (nuint)k;
                            Vector256<double> d = (Vector256.LoadUnsafe(ref xr, u) - Vector256.LoadUnsafe(ref mr, u)) * Vector256.LoadUnsafe(ref sr, u) * vs;
                            d.StoreUnsafe(ref dr, u);
                        }
                    }
#endif
                    for (; k < q; k++)
                    {
                        row[k] = (xi[k] - mean[k]) * inverseScale[k] * s;
                    }
                }
                else
                {
                    for (; k < q; k++)
                    {
                        row[k * columnStride] = (xi[active[k]] - mean[k]) * inverseScale[k] * s;
                    }
                }

                row[q * columnStride] = (y[i] - meanY) * s;
                count++;
            }

            next = i;
            return count;
        }
    }
}
