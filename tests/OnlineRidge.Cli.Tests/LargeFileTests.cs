using System;
using System.Diagnostics;
using System.Globalization;
using System.IO;
using System.Text;
using System.Threading;
using Xunit;
using Xunit.Sdk;

namespace OnlineRidge.Cli.Tests
{
    [CollectionDefinition(nameof(MemoryMeasurement), DisableParallelization = true)]
    public sealed class MemoryMeasurement
    {
    }

    /// <summary>
    /// A generated file of 10⁶ rows through a recursive form in bounded memory: the bytes the run allocates and the peak managed heap
    /// during it stay under fixed bounds that do not depend on the number of rows (checked at 10⁵ and 10⁶ rows). Runs alone, so the
    /// process-wide heap is the tool's.
    /// </summary>
    [Collection(nameof(MemoryMeasurement))]
    public class LargeFileTests
    {
        private const long AllocationBound = 4L << 20;   // 4 MiB for the whole run, whatever the number of rows
        private const long PeakHeapBound = 16L << 20;    // 16 MiB of managed heap above the level before the run

        private readonly ITestOutputHelper output;

        public LargeFileTests(ITestOutputHelper output) => this.output = output;

        /// <summary>Invented ARX process y(t) = 1.5y(t−1) − 0.7y(t−2) + u(t−1) + 0.5u(t−2) + e(t), written with 6 decimals.</summary>
        private static void Generate(string path, int n)
        {
            var rng = new Random(42);
            using var w = new StreamWriter(path, false, new UTF8Encoding(false), 1 << 16);
            w.Write("t,u,y\n");
            double y1 = 0, y2 = 0, u1 = 0, u2 = 0;
            for (int t = 0; t < n; t++)
            {
                double u = rng.NextDouble() < 0.5 ? -1 : 1;
                double y = (1.5 * y1) - (0.7 * y2) + u1 + (0.5 * u2) + (0.05 * CliHarness.Gauss(rng));
                w.Write(string.Create(CultureInfo.InvariantCulture, $"{t},{u},{y:F6}\n"));
                y2 = y1;
                y1 = y;
                u2 = u1;
                u1 = u;
            }
        }

        private static (long Allocated, long PeakHeap, double Seconds, string Stdout) Measure(CliHarness h, int n, string estimator = "square-root")
        {
            string data = h.PathOf($"big{n}.csv");
            Generate(data, n);
            GC.Collect();
            GC.WaitForPendingFinalizers();
            GC.Collect();
            long baseline = GC.GetTotalMemory(true);
            long peak = baseline;
            using var stop = new ManualResetEventSlim();
            var sampler = new Thread(() =>
            {
                while (!stop.Wait(2))
                {
                    long m = GC.GetTotalMemory(false);
                    if (m > Interlocked.Read(ref peak))
                    {
                        Interlocked.Exchange(ref peak, m);
                    }
                }
            }) { IsBackground = true };
            sampler.Start();
            var clock = Stopwatch.StartNew();
            long before = GC.GetAllocatedBytesForCurrentThread();
            var (exit, stdout, stderr) = CliHarness.Run("--data", data, "--target", "y", "--output-order", "2", "--input", "u:2:1", "--estimator", estimator, "--every", "1000", "--out", h.PathOf($"big{n}"));
            long allocated = GC.GetAllocatedBytesForCurrentThread() - before;
            double seconds = clock.Elapsed.TotalSeconds;
            stop.Set();
            sampler.Join();
            Assert.True(exit == 0, stderr);
            Assert.Equal(1 + (n - 2) / 1000, File.ReadAllLines(h.PathOf($"big{n}.trajectory.csv")).Length);
            File.Delete(data);
            return (allocated, Interlocked.Read(ref peak) - baseline, seconds, stdout);
        }

        [Fact]
        public void MillionRowsRunInBoundedMemory()
        {
            using var h = new CliHarness();
            var small = Measure(h, 100_000);
            var large = Measure(h, 1_000_000);
            output.WriteLine($"10^5 rows: allocated {small.Allocated:N0} B, peak heap +{small.PeakHeap:N0} B, {small.Seconds:F2} s");
            output.WriteLine($"10^6 rows: allocated {large.Allocated:N0} B, peak heap +{large.PeakHeap:N0} B, {large.Seconds:F2} s");
            output.WriteLine(large.Stdout);
            Assert.InRange(small.Allocated, 0, AllocationBound);
            Assert.InRange(large.Allocated, 0, AllocationBound);
            Assert.InRange(large.PeakHeap, 0, PeakHeapBound);

            // The invented system is recovered (Ljung's sign convention for the past outputs).
            var est = CliHarness.ReadEstimateCsv(h.PathOf("big1000000.estimate.csv"));
            Assert.Equal(-1.5, est["-y(t-1)"][0], 2);
            Assert.Equal(0.7, est["-y(t-2)"][0], 2);
            Assert.Equal(1.0, est["u(t-1)"][0], 2);
            Assert.Equal(0.5, est["u(t-2)"][0], 2);
        }

        /// <summary>Every recursive form streams without per-row allocation: ten times the rows allocate at most 64 KiB more.</summary>
        [Theory]
        [InlineData("square-root")]
        [InlineData("information")]
        [InlineData("covariance")]
        public void RecursiveFormsAllocateNothingPerRow(string estimator)
        {
            using var h = new CliHarness();
            Measure(h, 10_000, estimator); // warm-up: one-off JIT and tiering allocations must not count against the small run
            var small = Measure(h, 10_000, estimator);
            var large = Measure(h, 100_000, estimator);
            Assert.InRange(large.Allocated - small.Allocated, -(64L << 10), 64L << 10);
        }
    }
}
