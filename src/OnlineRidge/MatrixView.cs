using System;
using OnlineRidge.Internal;

namespace OnlineRidge
{
    /// <summary>
    /// A read-only view of a dense row-major matrix held in caller memory (rows of regressors, one sample per row).
    /// No copy is made; the caller must keep the memory unchanged while the view is in use.
    /// </summary>
    /// <remarks>Construction is O(1) and allocates nothing. A ref struct: it lives on the stack only. Thread-safe to read.</remarks>
    public readonly ref struct MatrixView
    {
        private readonly ReadOnlySpan<double> data;

        /// <summary>Creates a view of <paramref name="rows"/> × <paramref name="columns"/> values stored row after row.</summary>
        /// <param name="rowMajor">The values, row-major; its length must be exactly rows × columns.</param>
        /// <param name="rows">Number of rows (samples), at least 0.</param>
        /// <param name="columns">Number of columns (regressors), at least 1.</param>
        /// <exception cref="ArgumentException">The length does not match, or a count is out of range.</exception>
        public MatrixView(ReadOnlySpan<double> rowMajor, int rows, int columns)
        {
            if (rows < 0)
            {
                Guard.ThrowOutOfRange(nameof(rows), rows, "must be >= 0");
            }

            if (columns < 1)
            {
                Guard.ThrowOutOfRange(nameof(columns), columns, "must be >= 1");
            }

            if ((long)rows * columns != rowMajor.Length)
            {
                Guard.ThrowLength(nameof(rowMajor), rowMajor.Length, rows * columns);
            }

            data = rowMajor;
            Rows = rows;
            Columns = columns;
        }

        /// <summary>Number of rows (samples).</summary>
        public int Rows { get; }

        /// <summary>Number of columns (regressors).</summary>
        public int Columns { get; }

        /// <summary>The entry in row <paramref name="row"/> and column <paramref name="column"/> (zero-based, bounds checked).</summary>
        /// <param name="row">Row index.</param>
        /// <param name="column">Column index.</param>
        public double this[int row, int column]
        {
            get
            {
                if ((uint)column >= (uint)Columns)
                {
                    Guard.ThrowOutOfRange(nameof(column), column, "column index out of range");
                }

                return data[(row * Columns) + column];
            }
        }

        /// <summary>Row <paramref name="row"/> as a span of length <see cref="Columns"/>.</summary>
        /// <param name="row">Zero-based row index.</param>
        /// <returns>The row, without a copy.</returns>
        public ReadOnlySpan<double> Row(int row) => data.Slice(row * Columns, Columns);

        /// <summary>All values, row-major.</summary>
        public ReadOnlySpan<double> RowMajor => data;
    }
}
