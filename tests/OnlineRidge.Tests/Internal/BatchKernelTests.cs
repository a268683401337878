using System;
using System.Linq;
using OnlineRidge.Internal;
using Xunit;

namespace OnlineRidge.Tests.Internal
{
    /// <summary>
    /// The batch kernels (Gram panel update, weighted rows, blocked Householder factor, segmented passes) against plain scalar references
    /// written here, over every column count from 1 to past the widest tile (12 columns) and the 512-bit vector length plus one, so every
    /// vector body and tail runs. Reference identity for the factor: TᵀT = AᵀA for the stacked rows A (Golub and Van Loan 2013, §5.2).
    /// </summary>
    public class BatchKernelTests
    {
        private const double Eps = 2.220446049250313e-16;

        public static TheoryData<int> ColumnCounts() => new(Enumerable.Range(1, 30));

        private static double[] RandomRows(int rows, int columns, int seed)
        {
            var rng = new Random(seed);
            var a = new double[rows * columns];
            for (int i = 0; i < a.Length; i++)
            {
                a[i] = (rng.NextDouble() * 2.0) - 1.0 + (0.25 * (i % columns));
            }

            return a;
        }

        /// <summary>Plain reference: G[j, k] = start[j, k] + Σᵣ A[r, j]·A[r, k], rows in order.</summary>
        private static double[] ReferenceGram(double[] a, int rows, int columns, Func<int, int, double>? start = null)
        {
            var g = new double[columns * columns];
            for (int j = 0; j < columns; j++)
            {
                for (int k = 0; k < columns; k++)
                {
                    g[(j * columns) + k] = start is null ? 0.0 : start(j, k);
                }
            }

            for (int r = 0; r < rows; r++)
            {
                for (int j = 0; j < columns; j++)
                {
                    for (int k = 0; k < columns; k++)
                    {
                        g[(j * columns) + k] += a[(r * columns) + j] * a[(r * columns) + k];
                    }
                }
            }

            return g;
        }

        private static double[] Pad(double[] a, int rows, int columns, int ld)
        {
            var z = new double[rows * ld];
            for (int r = 0; r < rows; r++)
            {
                Array.Copy(a, r * columns, z, r * ld, columns);
            }

            return z;
        }

        [Theory]
        [MemberData(nameof(ColumnCounts))]
        public void PanelGramMatchesPlainSums(int columns)
        {
            int ld = GramKernels.PaddedColumns(columns);
            foreach (int rows in new[] { 1, 3, 17, 64 })
            {
                double[] a = RandomRows(rows, columns, (100 * columns) + rows);
                double[] z = Pad(a, rows, columns, ld);
                double[] reference = ReferenceGram(a, rows, columns, (j, k) => 0.5 * (((j * ld) + k) % 7));

                // Start from a non-zero G: the kernel adds to it.
                var g = new double[ld * ld];
                var scalar = new double[ld * ld];
                for (int i = 0; i < g.Length; i++)
                {
                    g[i] = scalar[i] = 0.5 * (i % 7);
                }

                GramKernels.AddPanel(z, rows, ld, g);
                GramKernels.AddPanelScalar(z, rows, ld, scalar);
                for (int j = 0; j < columns; j++)
                {
                    for (int k = j; k < columns; k++)
                    {
                        double expected = reference[(j * columns) + k];
                        double bound = 4.0 * (rows + 1) * Eps * (Math.Abs(expected) + (rows * 4.0 * (1 + (0.25 * columns)) * (1 + (0.25 * columns))));
                        Assert.True(Math.Abs(g[(j * ld) + k] - expected) <= bound, $"vector path c={columns} rows={rows} ({j},{k}): {g[(j * ld) + k]} vs {expected}");

                        // The portable path is the plain loop: same products, same order, same roundings, hence the same bits.
                        Assert.Equal(expected, scalar[(j * ld) + k]);
                    }
                }

                // Padding stays zero in the upper part beyond the used columns.
                for (int j = 0; j < columns; j++)
                {
                    for (int k = columns; k < ld; k++)
                    {
                        Assert.Equal(0.5 * (((j * ld) + k) % 7), g[(j * ld) + k]);
                    }
                }
            }
        }

        [Theory]
        [MemberData(nameof(ColumnCounts))]
        public void HouseholderFactorReproducesTheGramMatrix(int columns)
        {
            foreach (int rows in new[] { 1, 5, 8, 130, 300 })
            {
                double[] a = RandomRows(rows, columns, (7 * columns) + rows);
                double[] reference = ReferenceGram(a, rows, columns);
                foreach (int blockRows in new[] { 8, 13, 128 })
                {
                    var acc = new HouseholderAccumulator(columns, blockRows);
                    for (int r = 0; r < rows; r++)
                    {
                        acc.AddRow(a.AsSpan(r * columns, columns));
                    }

                    acc.Flush();
                    double[] t = acc.Factor;
                    double norm2 = 0.0;
                    foreach (double v in a)
                    {
                        norm2 += v * v;
                    }

                    for (int j = 0; j < columns; j++)
                    {
                        Assert.True(t[(j * columns) + j] >= 0.0, "diagonal must be non-negative");
                        for (int k = 0; k < j; k++)
                        {
                            Assert.Equal(0.0, t[(j * columns) + k]);
                        }

                        for (int k = j; k < columns; k++)
                        {
                            double tt = 0.0;
                            for (int i = 0; i <= j; i++)
                            {
                                tt += t[(i * columns) + j] * t[(i * columns) + k];
                            }

                            double bound = 50.0 * (columns + Math.Sqrt(rows)) * Eps * norm2;
                            Assert.True(Math.Abs(tt - reference[(j * columns) + k]) <= bound, $"c={columns} rows={rows} block={blockRows} ({j},{k}): {tt} vs {reference[(j * columns) + k]}");
                        }
                    }
                }
            }
        }

        [Theory]
        [InlineData(1)]
        [InlineData(4)]
        [InlineData(9)]
        [InlineData(17)]
        public void ExternalBlocksGiveTheSameBitsAsBufferedRows(int columns)
        {
            const int BlockRows = 16;
            const int Rows = 75;
            double[] a = RandomRows(Rows, columns, columns);
            var buffered = new HouseholderAccumulator(columns, BlockRows);
            for (int r = 0; r < Rows; r++)
            {
                buffered.AddRow(a.AsSpan(r * columns, columns));
            }

            buffered.Flush();
            var external = new HouseholderAccumulator(columns, BlockRows);
            var block = new double[columns * BlockRows];
            for (int r0 = 0; r0 < Rows; r0 += BlockRows)
            {
                int m = Math.Min(BlockRows, Rows - r0);
                for (int r = 0; r < m; r++)
                {
                    for (int k = 0; k < columns; k++)
                    {
                        block[(k * BlockRows) + r] = a[((r0 + r) * columns) + k];
                    }
                }

                external.ReduceExternal(block, m);
            }

            external.Flush();
            Assert.Equal(buffered.Factor, external.Factor);
        }

        [Fact]
        public void ZeroAndTinyAndHugeRowsAreHandled()
        {
            // Entries whose squares underflow or overflow take the scaled norm; zero columns need no reflection.
            foreach (double magnitude in new[] { 0.0, 1e-200, 1e200 })
            {
                var acc = new HouseholderAccumulator(3, 4);
                for (int r = 0; r < 6; r++)
                {
                    acc.AddRow(new[] { magnitude * (r + 1), 0.0, magnitude * (r % 2) });
                }

                acc.Flush();
                double expected = magnitude * Math.Sqrt(1 + 4 + 9 + 16 + 25 + 36);
                Assert.True(Math.Abs(acc.Factor[0] - expected) <= 1e-14 * expected, $"{acc.Factor[0]} vs {expected}");
                Assert.True(acc.Factor.All(v => !double.IsNaN(v) && !double.IsInfinity(v)));
                Assert.Equal(0.0, acc.Factor[4]);
            }
        }

        private static (BatchProblem Problem, double[] X, double[] Y) Problem(int n, int p, bool excludeOne, double beta, int seed)
        {
            var rng = new Random(seed);
            var x = new double[n * p];
            var y = new double[n];
            var w = new double[n];
            for (int i = 0; i < n; i++)
            {
                double s = 0.0;
                for (int j = 0; j < p; j++)
                {
                    double v = excludeOne && j == p / 2 ? 3.0 : (Math.Pow(10.0, (j % 3) - 1) * (rng.NextDouble() - 0.5)) + j;
                    x[(i * p) + j] = v;
                    s += v * (j + 1);
                }

                y[i] = s + rng.NextDouble();
                w[i] = i % 11 == 3 ? 0.0 : 0.5 + rng.NextDouble();
            }

            var settings = new RidgeSettings { Penalty = 0.5, ForgettingFactor = beta };
            var pr = BatchProblem.Create(new MatrixView(x, n, p), y, w, settings);
            return (pr, x, y);
        }

        [Theory]
        [MemberData(nameof(ColumnCounts))]
        public void WeightedRowsMatchTheProblemDefinition(int p)
        {
            foreach (bool excludeOne in p > 2 ? new[] { false, true } : new[] { false })
            {
                var (pr, x, y) = Problem(40, p, excludeOne, 0.97, p);
                Assert.Equal(excludeOne ? p - 1 : p, pr.Q);
                var rows = new WeightedRows(pr);
                int c = rows.Columns;
                foreach (bool columnMajor in new[] { false, true })
                {
                    int capacity = 64;
                    var dest = new double[capacity * c];
                    int next = 0;
                    int count = rows.Fill(x, y, ref next, pr.Rows, dest, columnMajor ? 1 : c, columnMajor ? capacity : 1, capacity);
                    Assert.Equal(pr.Rows, next);
                    Assert.Equal(pr.Weights.Count(a => a > 0.0), count);
                    var expected = new double[c];
                    int r = 0;
                    for (int i = 0; i < pr.Rows; i++)
                    {
                        if (pr.Weights[i] == 0.0)
                        {
                            continue;
                        }

                        pr.WeightedRow(new MatrixView(x, pr.Rows, p), y, i, expected);
                        for (int k = 0; k < c; k++)
                        {
                            double actual = dest[columnMajor ? (k * capacity) + r : (r * c) + k];
                            Assert.True(Math.Abs(actual - expected[k]) <= 4 * Eps * Math.Abs(expected[k]), $"row {i} col {k}: {actual} vs {expected[k]}");
                        }

                        r++;
                    }
                }

                // Stops at maxRows and resumes where it stopped.
                var small = new double[3 * c];
                int at = 0;
                int total = 0;
                while (at < pr.Rows)
                {
                    int m = rows.Fill(x, y, ref at, pr.Rows, small, c, 1, 3);
                    Assert.InRange(m, 0, 3);
                    total += m;
                }

                Assert.Equal(pr.Weights.Count(a => a > 0.0), total);
            }
        }

        [Theory]
        [InlineData(1)]
        [InlineData(5)]
        [InlineData(12)]
        [InlineData(33)]
        public void SegmentedPassesGiveTheSameBitsForEveryDegreeOfParallelism(int p)
        {
            int seg = BatchKernels.SegmentRows(p + 1);
            int n = (3 * seg) + 17;
            var (pr, x, y) = Problem(n, p, false, 1.0, 40 + p);
            double[] gram1 = BatchKernels.Gram(pr, x, y, 1);
            double[] factor1 = BatchKernels.Factor(pr, x, y, 1);
            foreach (int d in new[] { 2, 3, 8 })
            {
                Assert.Equal(gram1, BatchKernels.Gram(pr, x, y, d));
                Assert.Equal(factor1, BatchKernels.Factor(pr, x, y, d));
            }

            // And the two passes agree: TᵀT = G (upper triangles).
            int c = p + 1;
            double scale = 0.0;
            for (int j = 0; j < c; j++)
            {
                scale = Math.Max(scale, gram1[(j * c) + j]);
            }

            for (int j = 0; j < c; j++)
            {
                for (int k = j; k < c; k++)
                {
                    double tt = 0.0;
                    for (int i = 0; i <= j; i++)
                    {
                        tt += factor1[(i * c) + j] * factor1[(i * c) + k];
                    }

                    Assert.True(Math.Abs(tt - gram1[(j * c) + k]) <= 1e-10 * scale, $"({j},{k}): {tt} vs {gram1[(j * c) + k]}");
                }
            }
        }

        [Fact]
        public void FitsWithParallelismHaveTheSameBits()
        {
            const int P = 6;
            int n = (2 * BatchKernels.SegmentRows(P + 1)) + 5;
            var (_, x, y) = Problem(n, P, false, 1.0, 99);
            foreach (RidgeSolver solver in new[] { RidgeSolver.Cholesky, RidgeSolver.Qr, RidgeSolver.Svd })
            {
                var serial = BatchRidge.Fit(new MatrixView(x, n, P), y, new RidgeSettings { Solver = solver, Penalty = 2.0 });
                var parallel = BatchRidge.Fit(new MatrixView(x, n, P), y, new RidgeSettings { Solver = solver, Penalty = 2.0, MaxDegreeOfParallelism = 2 });
                Assert.Equal(serial.Coefficients, parallel.Coefficients);
                Assert.Equal(serial.Intercept, parallel.Intercept);
            }
        }

        [Fact]
        public void MaxDegreeOfParallelismIsValidatedAndCopied()
        {
            Assert.Throws<ArgumentOutOfRangeException>(() => new RidgeSettings { MaxDegreeOfParallelism = 0 });
            var s = new RidgeSettings { MaxDegreeOfParallelism = 2, Penalty = 1.0 };
            Assert.Equal(2, s.WithPenalty(3.0).MaxDegreeOfParallelism);
            Assert.Equal(1, RidgeSettings.Default.MaxDegreeOfParallelism);
        }
    }
}
