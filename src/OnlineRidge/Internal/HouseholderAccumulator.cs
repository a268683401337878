using System;

namespace OnlineRidge.Internal
{
    /// <summary>
    /// Streams rows [x, y] (c = p + 1 columns) into the upper-triangular factor T = [[R, z], [0, ρ]] of the stacked rows by Householder
    /// reflections applied to blocks of rows (structured QR of [T; block], cf. LAPACK's triangular-pentagonal QR). Each row is read once;
    /// cost ≈ 2·c² multiply-adds per row; memory c² + c·blockRows. After <see cref="Flush"/> the diagonal of T is non-negative.
    /// Backward stable (Golub and Van Loan 2013, §5.2): RᵀR equals the Gram matrix of the rows up to rounding of order ε·‖rows‖².
    /// </summary>
    internal sealed class HouseholderAccumulator
    {
        private readonly int columns;
        private readonly int blockRows;
        private readonly double[] factor;   // c×c row-major, upper triangular
        private readonly double[] block;    // column-major: block[k * blockRows + r]
        private int pending;

        public HouseholderAccumulator(int columns, int blockRows = 128)
        {
            this.columns = columns;
            this.blockRows = blockRows;
            factor = new double[columns * columns];
            block = new double[columns * blockRows];
        }

        /// <summary>Number of columns c.</summary>
        public int Columns => columns;

        /// <summary>The factor T (c×c row-major, upper triangular). Valid after <see cref="Flush"/>.</summary>
        public double[] Factor => factor;

        /// <summary>Buffers one row (length c); reflects the block into the factor when the block is full.</summary>
        public void AddRow(ReadOnlySpan<double> row)
        {
            for (int k = 0; k < columns; k++)
            {
                block[(k * blockRows) + pending] = row[k];
            }

            pending++;
            if (pending == blockRows)
            {
                ReduceBlock();
            }
        }

        /// <summary>Returns the column-major slot for row <c>pending</c> so a caller can write a row without a temporary; call <see cref="CommitRow"/> after.</summary>
        public void SetPending(int column, double value) => block[(column * blockRows) + pending] = value;

        /// <summary>Commits the row written with <see cref="SetPending"/>.</summary>
        public void CommitRow()
        {
            pending++;
            if (pending == blockRows)
            {
                ReduceBlock();
            }
        }

        /// <summary>Reflects any buffered rows into the factor and makes its diagonal non-negative.</summary>
        public void Flush()
        {
            if (pending > 0)
            {
                ReduceBlock();
            }

            for (int j = 0; j < columns; j++)
            {
                int row = j * columns;
                if (factor[row + j] < 0.0)
                {
                    for (int k = j; k < columns; k++)
                    {
                        factor[row + k] = -factor[row + k];
                    }
                }
            }
        }

        private void ReduceBlock()
        {
            int m = pending;
            int c = columns;
            int b = blockRows;
            double[] t = factor;
            double[] v = block;
            for (int j = 0; j < c; j++)
            {
                int cj = j * b;
                double xnorm2 = 0.0;
                double scale = 0.0;
                for (int r = 0; r < m; r++)
                {
                    scale = Math.Max(scale, Math.Abs(v[cj + r]));
                }

                if (scale == 0.0)
                {
                    continue;
                }

                for (int r = 0; r < m; r++)
                {
                    double q = v[cj + r] / scale;
                    xnorm2 += q * q;
                }

                double alpha = t[(j * c) + j];
                double a = alpha / scale;
                double norm = scale * Math.Sqrt((a * a) + xnorm2);
                double beta = alpha >= 0.0 ? -norm : norm;
                double v0 = alpha - beta;
                double tau = (beta - alpha) / beta;
                double inv = 1.0 / v0;
                for (int r = 0; r < m; r++)
                {
                    v[cj + r] *= inv;
                }

                t[(j * c) + j] = beta;
                for (int k = j + 1; k < c; k++)
                {
                    int ck = k * b;
                    double s = t[(j * c) + k];
                    for (int r = 0; r < m; r++)
                    {
                        s += v[cj + r] * v[ck + r];
                    }

                    s *= tau;
                    t[(j * c) + k] -= s;
                    for (int r = 0; r < m; r++)
                    {
                        v[ck + r] -= s * v[cj + r];
                    }
                }
            }

            pending = 0;
        }
    }
}
