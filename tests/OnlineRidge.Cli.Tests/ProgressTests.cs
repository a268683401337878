using System;
using System.Globalization;
using System.IO;
using System.Threading;
using Xunit;

namespace OnlineRidge.Cli.Tests
{
    /// <summary>The progress line: drawn only when enabled (terminal and a long file), with rows per second, and erased at the end.</summary>
    public class ProgressTests
    {
        [Fact]
        public void DrawsRowsPerSecondOnlyWhenEnabled()
        {
            var on = new StringWriter(CultureInfo.InvariantCulture);
            var progress = new Progress(on, 1000, enabled: true);
            Thread.Sleep(300);
            progress.Report(500, 500);
            progress.Finish();
            Assert.Contains("50%", on.ToString(), StringComparison.Ordinal);
            Assert.Contains("500 rows", on.ToString(), StringComparison.Ordinal);
            Assert.Contains("rows/s", on.ToString(), StringComparison.Ordinal);
            Assert.EndsWith("\r", on.ToString(), StringComparison.Ordinal);

            var off = new StringWriter(CultureInfo.InvariantCulture);
            var silent = new Progress(off, 1000, enabled: false);
            Thread.Sleep(300);
            silent.Report(500, 500);
            silent.Finish();
            Assert.Equal(string.Empty, off.ToString());
        }

        [Fact]
        public void SmallFileOnATerminalShowsNoProgress()
        {
            using var h = new CliHarness();
            string data = h.WriteText("s.csv", "a,y\n1,2\n2,4.1\n3,5.9\n");
            var stdout = new StringWriter(CultureInfo.InvariantCulture);
            var stderr = new StringWriter(CultureInfo.InvariantCulture);
            Assert.Equal(0, CliApp.Run(new[] { "--data", data, "--target", "y", "--regressors", "a" }, stdout, stderr, stderrIsTerminal: true, TestContext.Current.CancellationToken));
            Assert.Equal(string.Empty, stderr.ToString());
        }
    }
}
