using System;
using System.Diagnostics;
using System.IO;
using Xunit;

namespace OnlineRidge.Cli.Tests
{
    /// <summary>Malformed input and command-line mistakes: exit code, a message naming the line and column, and no output left behind.</summary>
    public class MalformedInputTests
    {
        private const string Good = "a,b,y\n1,2,3.5\n2,1,4\n3,5,9.25\n4,4,10\n5,7,13\n";

        private static void AssertNothingWritten(CliHarness h, string input)
        {
            Assert.Equal(new[] { input }, h.Files());
        }

        [Theory]
        [InlineData("a,b,y\n1,2,3\n2,1,4\n3,oops,9\n", "line 4, column 'b' (field 2): 'oops' is not a finite number")]
        [InlineData("a,b,y\n1,2,3\n2,,4\n", "line 3, column 'b' (field 2): '' is not a finite number")]
        [InlineData("a,b,y\n1,2,3\n2,1,NaN\n", "line 3, column 'y' (field 3): 'NaN' is not a finite number")]
        [InlineData("a,b,y\n1,2,3\n2,1,1e999\n", "line 3, column 'y' (field 3)")]
        [InlineData("a,b,y\n1,2,3\n2,1\n", "line 3: the row has 2 fields, the header has 3")]
        [InlineData("a,b,y\n1,2,3\n2,1,4,5\n", "line 3: the row has 4 fields, the header has 3")]
        [InlineData("a,c,y\n1,2,3\n", "line 1: column 'b' is not in the header; the columns are: a, c, y")]
        [InlineData("", "line 1: the file is empty")]
        [InlineData("a,a,b,y\n1,1,2,3\n", "line 1: Col name 'a' found 2 times")]
        [InlineData("a,b,y\n1,2,\"3\n4,5,6\n", "line 2, column 'y' (field 3): '3\\n4,5,6\\n' is not a finite number")]
        public void MalformedFileExitsWithTwoNamesTheLineAndLeavesNoOutput(string text, string message)
        {
            using var h = new CliHarness();
            string data = h.WriteText("in.csv", text);
            var (exit, stdout, stderr) = CliHarness.Run("--data", data, "--target", "y", "--regressors", "a,b", "--out", h.PathOf("out"));
            Assert.Equal(CliApp.ExitData, exit);
            Assert.Contains(message, stderr, StringComparison.Ordinal);
            Assert.Equal(string.Empty, stdout);
            AssertNothingWritten(h, "in.csv");
        }

        /// <summary>A bad field after 20 000 good rows: the trajectory was already being written (recursive) and must vanish too.</summary>
        [Theory]
        [InlineData("batch")]
        [InlineData("square-root")]
        public void ErrorLateInALongRunLeavesNoPartialFile(string estimator)
        {
            using var h = new CliHarness();
            var text = new System.Text.StringBuilder("a,b,y\n");
            for (int i = 0; i < 20000; i++)
            {
                text.Append(System.Globalization.CultureInfo.InvariantCulture, $"{i},{i % 7},{(2 * i) + (i % 7)}\n");
            }

            text.Append("1,2,x\n");
            string data = h.WriteText("long.csv", text.ToString());
            var (exit, _, stderr) = CliHarness.Run("--data", data, "--target", "y", "--regressors", "a,b", "--estimator", estimator, "--every", "100", "--out", h.PathOf("out"));
            Assert.Equal(CliApp.ExitData, exit);
            Assert.Contains("line 20002, column 'y'", stderr, StringComparison.Ordinal);
            AssertNothingWritten(h, "long.csv");
        }

        [Fact]
        public void NegativeWeightIsMalformed()
        {
            using var h = new CliHarness();
            string data = h.WriteText("w.csv", "a,y,w\n1,2,1\n2,3,-1\n");
            var (exit, _, stderr) = CliHarness.Run("--data", data, "--target", "y", "--regressors", "a", "--weights", "w");
            Assert.Equal(CliApp.ExitData, exit);
            Assert.Contains("line 3, column 'w'", stderr, StringComparison.Ordinal);
        }

        [Fact]
        public void TooFewRowsForTheArxLagsIsReported()
        {
            using var h = new CliHarness();
            string data = h.WriteText("s.csv", "u,y\n1,2\n2,3\n");
            var (exit, _, stderr) = CliHarness.Run("--data", data, "--target", "y", "--output-order", "3", "--input", "u:1:1");
            Assert.Equal(CliApp.ExitData, exit);
            Assert.Contains("no regressor rows (2 samples read, 3 needed to fill the lags)", stderr, StringComparison.Ordinal);
        }

        [Theory]
        [InlineData(new[] { "--data", "x.csv", "--target", "y", "--regressors", "a", "--bogus" }, "unknown option '--bogus'")]
        [InlineData(new[] { "--data", "x.csv", "--target", "y" }, "no regressors")]
        [InlineData(new[] { "--target", "y", "--regressors", "a" }, "--data FILE is required")]
        [InlineData(new[] { "--data", "x.csv", "--target", "y", "--regressors", "a", "--forgetting", "1.5" }, "--forgetting 1.5 is invalid")]
        [InlineData(new[] { "--data", "x.csv", "--target", "y", "--regressors", "a", "--penalty", "-1" }, "--penalty -1 is invalid")]
        [InlineData(new[] { "--data", "x.csv", "--target", "y", "--input", "u:2" }, "--input 'u:2' is invalid")]
        [InlineData(new[] { "--data", "x.csv", "--target", "y", "--input", "u:0:1" }, "the ARX model is invalid")]
        [InlineData(new[] { "--data", "x.csv", "--target", "y", "--regressors", "a", "--estimator", "magic" }, "--estimator magic is unknown")]
        [InlineData(new[] { "--data", "x.csv", "--target", "y", "--regressors", "a", "--solver", "lu" }, "--solver lu is unknown")]
        [InlineData(new[] { "--data", "missing.csv", "--target", "y", "--regressors", "a" }, "does not exist")]
        public void CommandLineMistakesExitWithOne(string[] args, string message)
        {
            using var h = new CliHarness();
            var (exit, _, stderr) = CliHarness.Run(args);
            Assert.Equal(CliApp.ExitUsage, exit);
            Assert.Contains(message, stderr, StringComparison.Ordinal);
        }

        [Fact]
        public void HelpExplainsEveryOption()
        {
            using var h = new CliHarness();
            var (exit, stdout, _) = CliHarness.Run("--help");
            Assert.Equal(0, exit);
            foreach (string option in new[] { "--data", "--target", "--regressors", "--output-order", "--input", "--weights", "--estimator", "--forgetting", "--penalty", "--no-standardize", "--no-intercept", "--solver", "--out", "--every", "--level", "--separator", "--quiet" })
            {
                Assert.Contains("  " + option, stdout, StringComparison.Ordinal);
            }

            Assert.Contains("forgetting factor", stdout, StringComparison.Ordinal);
            Assert.Contains("generalized cross-validation", stdout, StringComparison.Ordinal);
        }

        [Fact]
        public void OutputOverwritesAnOldFileOnlyOnSuccess()
        {
            using var h = new CliHarness();
            string good = h.WriteText("good.csv", Good);
            Assert.Equal(0, CliHarness.Run("--data", good, "--target", "y", "--regressors", "a,b", "--out", h.PathOf("r")).Exit);
            string before = File.ReadAllText(h.PathOf("r.estimate.csv"));
            string bad = h.WriteText("bad.csv", "a,b,y\n1,2,3\nz,1,1\n");
            Assert.Equal(CliApp.ExitData, CliHarness.Run("--data", bad, "--target", "y", "--regressors", "a,b", "--out", h.PathOf("r")).Exit);
            Assert.Equal(before, File.ReadAllText(h.PathOf("r.estimate.csv")));
            Assert.Equal(new[] { "bad.csv", "good.csv", "r.estimate.csv", "r.estimate.json" }, h.Files());
        }

        /// <summary>The real executable (a child process): exit code and message on standard error.</summary>
        [Fact]
        public void ChildProcessReportsTheExitCode()
        {
            using var h = new CliHarness();
            string bad = h.WriteText("bad.csv", "a,b,y\n1,2,3\n4,5,six\n");
            string dll = Path.Combine(AppContext.BaseDirectory, "OnlineRidge.Cli.dll");
            var start = new ProcessStartInfo("dotnet") { RedirectStandardError = true, RedirectStandardOutput = true };
            foreach (string a in new[] { dll, "--data", bad, "--target", "y", "--regressors", "a,b", "--out", h.PathOf("o") })
            {
                start.ArgumentList.Add(a);
            }

            using var process = Process.Start(start)!;
            string err = process.StandardError.ReadToEnd();
            process.StandardOutput.ReadToEnd();
            process.WaitForExit();
            Assert.Equal(CliApp.ExitData, process.ExitCode);
            Assert.Contains("line 3, column 'y' (field 3): 'six' is not a finite number", err, StringComparison.Ordinal);
            Assert.Equal(new[] { "bad.csv" }, h.Files());
        }
    }
}
