using System;
using System.Collections.Generic;
using System.IO;

namespace OnlineRidge.Cli
{
    /// <summary>
    /// The parameter trajectory as a line plot (PNG or SVG, through ScottPlot). Keeps at most <see cref="Capacity"/> points per series
    /// whatever the file length: when full, every other point is dropped and the stride doubles, so memory stays constant and the kept
    /// points stay evenly spaced.
    /// </summary>
    internal sealed class TrajectoryPlot
    {
        public const int Capacity = 4096;

        private readonly int series;
        private readonly double[] rows = new double[Capacity];
        private readonly double[] values;
        private int count;
        private long offered;
        private long stride = 1;

        public TrajectoryPlot(int parameterCount)
        {
            series = parameterCount + 1;
            values = new double[Capacity * series];
        }

        /// <summary>The rows of the kept points (a copy; for tests).</summary>
        public double[] KeptRows => rows.AsSpan(0, count).ToArray();

        public static bool IsSupported(string path) =>
            path.EndsWith(".png", StringComparison.OrdinalIgnoreCase) || path.EndsWith(".svg", StringComparison.OrdinalIgnoreCase);

        /// <summary>Offers one trajectory point (row, intercept, θ); kept or not by the current stride. No allocation.</summary>
        public void Add(long row, double intercept, ReadOnlySpan<double> theta)
        {
            long index = offered++;
            if (index % stride != 0)
            {
                return;
            }

            if (count == Capacity)
            {
                for (int k = 0; k < Capacity / 2; k++)
                {
                    rows[k] = rows[2 * k];
                    Array.Copy(values, 2 * k * series, values, k * series, series);
                }

                count = Capacity / 2;
                stride *= 2;
                if (index % stride != 0)
                {
                    return;
                }
            }

            rows[count] = row;
            values[count * series] = intercept;
            theta.CopyTo(values.AsSpan((count * series) + 1, series - 1));
            count++;
        }

        /// <summary>Renders the kept points to <paramref name="path"/> (format by its extension: .png or .svg).</summary>
        public void Render(string path, string title, IReadOnlyList<string> terms, bool intercept)
        {
            try
            {
                var plot = new ScottPlot.Plot();
                var xs = rows.AsSpan(0, count).ToArray();
                for (int s = intercept ? 0 : 1; s < series; s++)
                {
                    var ys = new double[count];
                    for (int k = 0; k < count; k++)
                    {
                        ys[k] = values[(k * series) + s];
                    }

                    var line = plot.Add.Scatter(xs, ys);
                    line.MarkerSize = 0;
                    line.LegendText = s == 0 ? "(intercept)" : terms[s - 1];
                }

                plot.Title(title);
                plot.XLabel("regressor row");
                plot.YLabel("estimate");
                plot.ShowLegend();
                if (path.EndsWith(".svg", StringComparison.OrdinalIgnoreCase))
                {
                    plot.SaveSvg(path, 900, 500);
                }
                else
                {
                    plot.SavePng(path, 900, 500);
                }
            }
            catch (Exception e) when (e is TypeInitializationException or DllNotFoundException or EntryPointNotFoundException)
            {
                throw new IOException("the plot could not be rendered: the native SkiaSharp library did not load (" + e.GetBaseException().Message + ").", e);
            }
        }
    }
}
