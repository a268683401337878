using System;
using System.IO;
using System.Linq;
using Xunit;

namespace OnlineRidge.Cli.Tests
{
    /// <summary>The trajectory plot: real PNG and SVG files (rendered headless through ScottPlot/SkiaSharp), staged like every output.</summary>
    public class PlotTests
    {
        private static string MakeData(CliHarness h)
        {
            var rng = new Random(8);
            return h.WriteCsv("d.csv", new[] { "a", "y" }, Enumerable.Range(0, 500).Select(i =>
            {
                double a = rng.NextDouble();
                return new[] { a, 1 + (2 * a) + (0.1 * CliHarness.Gauss(rng)) };
            }));
        }

        [Theory]
        [InlineData("t.png")]
        [InlineData("t.svg")]
        public void TrajectoryPlotIsWrittenAtomically(string name)
        {
            using var h = new CliHarness();
            string data = MakeData(h);
            var (exit, _, stderr) = CliHarness.Run("--data", data, "--target", "y", "--regressors", "a", "--estimator", "square-root", "--forgetting", "0.99", "--plot", h.PathOf(name));
            Assert.True(exit == 0, stderr);
            Assert.Equal(new[] { "d.csv", name }, h.Files());
            byte[] bytes = File.ReadAllBytes(h.PathOf(name));
            if (name.EndsWith(".png", StringComparison.Ordinal))
            {
                Assert.Equal(new byte[] { 0x89, (byte)'P', (byte)'N', (byte)'G' }, bytes.Take(4).ToArray());
            }
            else
            {
                Assert.Contains("<svg", System.Text.Encoding.UTF8.GetString(bytes), StringComparison.Ordinal);
            }
        }

        [Fact]
        public void PlotNeedsARecursiveEstimatorAndAKnownFormat()
        {
            Assert.Equal(CliApp.ExitUsage, CliHarness.Run("--data", "x.csv", "--target", "y", "--regressors", "a", "--plot", "t.png").Exit);
            var (exit, _, stderr) = CliHarness.Run("--data", "x.csv", "--target", "y", "--regressors", "a", "--estimator", "square-root", "--plot", "t.jpg");
            Assert.Equal(CliApp.ExitUsage, exit);
            Assert.Contains("must end in .png or .svg", stderr, StringComparison.Ordinal);
        }

        /// <summary>Decimation keeps at most Capacity points, evenly spaced by a power-of-two stride, always including the first.</summary>
        [Fact]
        public void PlotKeepsABoundedEvenlySpacedSubset()
        {
            var plot = new TrajectoryPlot(1);
            for (int i = 0; i < 10_000; i++)
            {
                plot.Add(i, 0, new[] { (double)i });
            }

            double[] rows = plot.KeptRows;
            Assert.InRange(rows.Length, TrajectoryPlot.Capacity / 2, TrajectoryPlot.Capacity);
            Assert.Equal(Enumerable.Range(0, rows.Length).Select(k => 4.0 * k), rows); // 10 000 points → stride 4 → 2500 kept
        }
    }
}
