using System;
using System.Linq;
using BenchmarkDotNet.Configs;
using BenchmarkDotNet.Jobs;
using BenchmarkDotNet.Reports;
using BenchmarkDotNet.Running;
using BenchmarkDotNet.Toolchains.InProcess.Emit;

namespace OnlineRidge.Benchmarks
{
    /// <summary>
    /// Entry point. <c>accuracy</c> prints the NIST StRD digits table; <c>--smoke</c> runs every benchmark once on a small problem
    /// (a check that they run, for CI, not a measurement); anything else goes to BenchmarkDotNet's switcher
    /// (e.g. <c>--filter *BatchFit*</c>, <c>--list flat</c>).
    /// </summary>
    internal static class Program
    {
        private static int Main(string[] args)
        {
            if (args.Length > 0 && string.Equals(args[0], "accuracy", StringComparison.OrdinalIgnoreCase))
            {
                return AccuracyReport.Run(args.Skip(1).ToArray());
            }

            if (args.Contains("--smoke", StringComparer.OrdinalIgnoreCase))
            {
                return RunSmoke();
            }

            var summaries = BenchmarkSwitcher.FromAssembly(typeof(Program).Assembly).Run(args);
            return Failed(summaries.ToArray()) ? 1 : 0;
        }

        private static int RunSmoke()
        {
            // Job.Dry: one launch, one iteration, no pilot or warm-up. In-process, so no project is generated and built.
            BatchFitBenchmarks.Smoke = true;
            BatchStageBenchmarks.Smoke = true;
            BatchSolveBenchmarks.Smoke = true;
            RegularizationPathBenchmarks.Smoke = true;
            RecursiveUpdateBenchmarks.Smoke = true;
            var config = ManualConfig.CreateMinimumViable()
                .AddJob(Job.Dry.WithToolchain(InProcessEmitToolchain.Instance).WithId("Smoke"))
                .WithOptions(ConfigOptions.DisableLogFile);
            var summaries = BenchmarkRunner.Run(
                new[]
                {
                    typeof(BatchFitBenchmarks), typeof(BatchStageBenchmarks), typeof(BatchSolveBenchmarks), typeof(RegularizationPathBenchmarks),
                    typeof(RecursiveUpdateBenchmarks), typeof(RecursiveSolveBenchmarks),
                },
                config);
            return Failed(summaries) ? 1 : 0;
        }

        private static bool Failed(Summary[] summaries) =>
            summaries.Length == 0
            || summaries.Any(s => s.HasCriticalValidationErrors || s.Reports.Length == 0 || s.Reports.Any(r => !r.Success));
    }
}
