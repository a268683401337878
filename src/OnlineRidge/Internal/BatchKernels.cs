using System;
using System.Threading.Tasks;

namespace OnlineRidge.Internal
{
    /// <summary>
    /// The streaming passes of a batch fit over the weighted rows in solver coordinates: the Gram matrix [Z y]ᵀ[Z y] (Cholesky solver) and
    /// the Householder factor T = [[R, z], [0, ρ]] (QR and SVD solvers). The rows are cut into fixed segments; each segment is accumulated
    /// on its own and the segment results are merged in segment order, so the same input gives the same bits whatever the degree of
    /// parallelism.
    /// </summary>
    /// <remarks>
    /// <para>Segments: <see cref="SegmentRows"/> rows each, a function of the column count only. Serially, a segment's rows go through a
    /// small cache-resident panel; with a degree of parallelism D &gt; 1 the calling thread writes D segments of weighted rows into buffers
    /// (the caller's span cannot be handed to another thread), then D threads accumulate one segment each, and the results are merged in
    /// order. Writing the rows is a small part of the work (c operations per row against c²/2 for the Gram matrix and c² for the factor),
    /// so the speed-up approaches D for wide problems. Extra memory with D &gt; 1: D·(SegmentRows·c + c²) doubles.</para>
    /// <para>Merging: Gram matrices are added; factors are stacked and reduced again by the same Householder kernel (c rows per segment,
    /// ≈ c³ multiply-adds, a few per cent of a segment's work). Accuracy is that of the unsegmented passes (the segmented sums are, if
    /// anything, slightly more accurate).</para>
    /// </remarks>
    internal static class BatchKernels
    {
        /// <summary>Rows per segment for c columns: about 8 MiB of weighted rows, between 1024 and 16384 rows, a multiple of 128.</summary>
        internal static int SegmentRows(int columns)
        {
            int ld = GramKernels.PaddedColumns(columns);
            return Math.Max(1024, Math.Min(16384, (1 << 20) / ld)) / 128 * 128;
        }

        /// <summary>Rows of a Gram panel: about 32 KiB (first-level cache), between 16 and 256 rows.</summary>
        internal static int PanelRows(int ld) => Math.Max(16, Math.Min(256, 4096 / ld));

        /// <summary>Rows per Householder block for c columns: 128, fewer (down to 32) for rows wider than 512 columns so a block stays within 512 KiB.</summary>
        internal static int QrBlockRows(int columns) => Math.Max(32, Math.Min(HouseholderAccumulator.DefaultBlockRows, 65536 / columns / 8 * 8));

        /// <summary>
        /// The Gram matrix of the weighted rows [z, y] in solver coordinates: (q+1)×(q+1) row-major, upper triangle (entries below the
        /// diagonal are unspecified). Cost ≈ n·(q+1)²/2 multiply-adds, one read of the data.
        /// </summary>
        public static double[] Gram(BatchProblem problem, ReadOnlySpan<double> x, ReadOnlySpan<double> y, int degreeOfParallelism)
        {
            var rows = new WeightedRows(problem);
            int c = rows.Columns;
            int ld = GramKernels.PaddedColumns(c);
            int n = problem.Rows;
            int seg = SegmentRows(c);
            int segments = (n + seg - 1) / seg;
            int panelRows = PanelRows(ld);
            var total = new double[ld * ld];
            int d = Math.Max(1, Math.Min(degreeOfParallelism, segments));
            if (d == 1)
            {
                var panel = new double[panelRows * ld];
                double[] part = segments == 1 ? total : new double[ld * ld];
                for (int s = 0; s < segments; s++)
                {
                    if (segments > 1)
                    {
                        Array.Clear(part, 0, part.Length);
                    }

                    int next = s * seg;
                    int end = Math.Min(n, next + seg);
                    while (next < end)
                    {
                        int m = rows.Fill(x, y, ref next, end, panel, ld, 1, panelRows);
                        GramKernels.AddPanel(panel, m, ld, part);
                    }

                    if (segments > 1)
                    {
                        Add(total, part);
                    }
                }
            }
            else
            {
                var buffers = new double[d][];
                var parts = new double[d][];
                var counts = new int[d];
                for (int t = 0; t < d; t++)
                {
                    buffers[t] = new double[seg * ld];
                    parts[t] = new double[ld * ld];
                }

                var options = new ParallelOptions { MaxDegreeOfParallelism = d };
                for (int w = 0; w < segments; w += d)
                {
                    int k = Math.Min(d, segments - w);
                    for (int t = 0; t < k; t++)
                    {
                        int next = (w + t) * seg;
                        counts[t] = rows.Fill(x, y, ref next, Math.Min(n, next + seg), buffers[t], ld, 1, seg);
                    }

                    Parallel.For(0, k, options, t =>
                    {
                        double[] part = parts[t];
                        Array.Clear(part, 0, part.Length);
                        double[] buffer = buffers[t];
                        for (int r = 0; r < counts[t]; r += panelRows)
                        {
                            int m = Math.Min(panelRows, counts[t] - r);
                            GramKernels.AddPanel(buffer.AsSpan(r * ld, m * ld), m, ld, part);
                        }
                    });

                    for (int t = 0; t < k; t++)
                    {
                        Add(total, parts[t]);
                    }
                }
            }

            var g = new double[c * c];
            for (int j = 0; j < c; j++)
            {
                Array.Copy(total, j * ld, g, j * c, c);
            }

            return g;
        }

        /// <summary>
        /// The Householder factor T = [[R, z], [0, ρ]] of the weighted rows in solver coordinates ((q+1)×(q+1) row-major, upper triangular,
        /// non-negative diagonal). Cost ≈ n·(q+1)² multiply-adds, one read of the data; orthogonal-class accuracy.
        /// </summary>
        public static double[] Factor(BatchProblem problem, ReadOnlySpan<double> x, ReadOnlySpan<double> y, int degreeOfParallelism)
        {
            var rows = new WeightedRows(problem);
            int c = rows.Columns;
            int n = problem.Rows;
            int b = QrBlockRows(c);
            int seg = SegmentRows(c);
            int segments = (n + seg - 1) / seg;
            int d = Math.Max(1, Math.Min(degreeOfParallelism, segments));
            var merged = segments == 1 ? null : new HouseholderAccumulator(c, b);
            if (d == 1)
            {
                var acc = new HouseholderAccumulator(c, b);
                for (int s = 0; s < segments; s++)
                {
                    acc.Reset();
                    int next = s * seg;
                    int end = Math.Min(n, next + seg);
                    while (next < end)
                    {
                        int m = rows.Fill(x, y, ref next, end, acc.Block.AsSpan(acc.Pending), 1, b, b - acc.Pending);
                        acc.Commit(m);
                    }

                    acc.Flush();
                    if (merged is null)
                    {
                        return acc.Factor;
                    }

                    AddRows(merged, acc.Factor, c);
                }
            }
            else
            {
                int blocks = seg / b;
                var buffers = new double[d][];
                var accumulators = new HouseholderAccumulator[d];
                var counts = new int[d][];
                for (int t = 0; t < d; t++)
                {
                    buffers[t] = new double[blocks * b * c];
                    accumulators[t] = new HouseholderAccumulator(c, b);
                    counts[t] = new int[blocks];
                }

                var options = new ParallelOptions { MaxDegreeOfParallelism = d };
                for (int w = 0; w < segments; w += d)
                {
                    int k = Math.Min(d, segments - w);
                    for (int t = 0; t < k; t++)
                    {
                        int next = (w + t) * seg;
                        int end = Math.Min(n, next + seg);
                        for (int blk = 0; blk < blocks; blk++)
                        {
                            counts[t][blk] = rows.Fill(x, y, ref next, end, buffers[t].AsSpan(blk * b * c, b * c), 1, b, b);
                        }
                    }

                    Parallel.For(0, k, options, t =>
                    {
                        HouseholderAccumulator acc = accumulators[t];
                        acc.Reset();
                        for (int blk = 0; blk < blocks; blk++)
                        {
                            acc.ReduceExternal(buffers[t].AsSpan(blk * b * c, b * c), counts[t][blk]);
                        }

                        acc.Flush();
                    });

                    for (int t = 0; t < k; t++)
                    {
                        AddRows(merged!, accumulators[t].Factor, c);
                    }
                }
            }

            merged!.Flush();
            return merged.Factor;
        }

        private static void Add(double[] total, double[] part)
        {
            for (int i = 0; i < total.Length; i++)
            {
                total[i] += part[i];
            }
        }

        private static void AddRows(HouseholderAccumulator target, double[] factor, int c)
        {
            for (int j = 0; j < c; j++)
            {
                target.AddRow(factor.AsSpan(j * c, c));
            }
        }
    }
}
