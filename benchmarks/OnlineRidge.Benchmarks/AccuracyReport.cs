using System;
using System.Collections.Generic;
using System.Diagnostics;
using System.Globalization;
using System.Linq;
using System.Text;
using OnlineRidge.Tests.Support;

namespace OnlineRidge.Benchmarks
{
    /// <summary>
    /// The <c>accuracy</c> command: ordinary least squares (penalty 0) on the 11 NIST StRD linear datasets with each solver,
    /// standardization off and on, as a Markdown table of digits (log relative error against the certified values, NIST's definition,
    /// capped at 15), then each solver's median fit time on one mid-size random problem. <c>--detail</c> adds the digits per quantity.
    /// </summary>
    internal static class AccuracyReport
    {
        private const int TimingRows = 20_000;
        private const int TimingColumns = 16;
        private const int TimingRuns = 21;
        private const int WarmupRuns = 40;
        private const int TimingSeed = 4_711;

        private static readonly RidgeSolver[] Solvers = { RidgeSolver.Cholesky, RidgeSolver.Qr, RidgeSolver.Svd, RidgeSolver.Auto };

        internal static int Run(string[] args)
        {
            bool detail = args.Contains("--detail", StringComparer.OrdinalIgnoreCase);
            var inv = CultureInfo.InvariantCulture;
            var summary = new StringBuilder();
            var details = new StringBuilder();

            summary.AppendLine("Digits of agreement with the NIST StRD certified values (ordinary least squares, penalty 0): the minimum LRE over");
            summary.AppendLine("coefficients, standard errors, residual standard deviation and R²; 15 is a perfect match in double precision.");
            summary.AppendLine("raw = Standardize off, std = Standardize on; \"refused\" = the solver reported the ill-conditioning instead of answering;");
            summary.AppendLine("for Auto the solver it chose is in brackets; κ is the SVD solver's exact condition number of the standardized design.");
            summary.AppendLine("With penalty 0 the solvers scale the columns internally either way, so raw and std are expected to agree.");
            summary.AppendLine();
            summary.Append("| Dataset | κ (std) |");
            foreach (var solver in Solvers)
            {
                summary.Append(inv, $" {Name(solver)} raw | {Name(solver)} std |");
            }

            summary.AppendLine();
            summary.Append("|---|---:|");
            summary.AppendLine(string.Concat(Enumerable.Repeat("---:|", Solvers.Length * 2)));

            details.AppendLine("| Dataset | Solver | Standardize | coefficients | standard errors | residual SD | R² | solver used | κ estimate |");
            details.AppendLine("|---|---|---|---:|---:|---:|---:|---|---:|");

            foreach (string name in NistDataset.Names)
            {
                var ds = NistDataset.Load(name);
                string kappa = "–";
                var cells = new List<string>();
                foreach (var solver in Solvers)
                {
                    foreach (bool standardize in new[] { false, true })
                    {
                        var settings = new RidgeSettings { Solver = solver, FitIntercept = ds.HasIntercept, Standardize = standardize };
                        if (!BatchRidge.TryFit(new MatrixView(ds.X, ds.Rows, ds.Columns), ds.Y, settings, default, out RidgeFit? fit, out BreakdownInfo breakdown))
                        {
                            cells.Add("refused");
                            details.AppendLine(inv, $"| {name} | {Name(solver)} | {standardize} | refused: {breakdown} | | | | | |");
                            continue;
                        }

                        var d = ds.Digits(fit);
                        double min = Math.Min(Math.Min(d.Coefficients, d.StandardErrors), Math.Min(d.ResidualSd, d.RSquared));
                        string cell = min.ToString("F1", inv);
                        if (solver == RidgeSolver.Auto)
                        {
                            cell += $" ({Name(fit.SolverUsed)})";
                        }

                        cells.Add(cell);
                        if (solver == RidgeSolver.Svd && standardize)
                        {
                            kappa = fit.ConditionEstimate.ToString("0.0E+0", inv);
                        }

                        details.AppendLine(inv,
                            $"| {name} | {Name(solver)} | {standardize} | {d.Coefficients:F1} | {d.StandardErrors:F1} | {d.ResidualSd:F1} | {d.RSquared:F1} | {Name(fit.SolverUsed)} | {fit.ConditionEstimate:0.0E+0} |");
                    }
                }

                summary.AppendLine(inv, $"| {name} | {kappa} | {string.Join(" | ", cells)} |");
            }

            Console.WriteLine(summary.ToString());
            if (detail)
            {
                Console.WriteLine(details.ToString());
            }

            PrintTimings();
            return 0;
        }

        private static void PrintTimings()
        {
            var inv = CultureInfo.InvariantCulture;
            var problem = RandomProblem.Create(TimingRows, TimingColumns, TimingSeed);
            Console.WriteLine(string.Create(inv,
                $"Median fit time on a random problem, n = {TimingRows}, p = {TimingColumns}, penalty 1, standardized, intercept ({TimingRuns} runs each, interleaved, after {WarmupRuns} warm-up runs; Stopwatch;"));
            Console.WriteLine("indicative only: for measurements run the BenchmarkDotNet suite, and compare ratios rather than absolute times).");
            Console.WriteLine();
            Console.WriteLine("| Solver | median ms | relative to Cholesky | solver used |");
            Console.WriteLine("|---|---:|---:|---|");
            // Warm every solver up past the JIT's tiering first, then time them round-robin, so that neither compilation nor a
            // neighbour's load on a shared machine falls on one solver only.
            var settings = Solvers.Select(BatchFitBenchmarks.Settings).ToArray();
            var used = new RidgeSolver[Solvers.Length];
            for (int w = 0; w < WarmupRuns; w++)
            {
                for (int s = 0; s < Solvers.Length; s++)
                {
                    used[s] = Fit(problem, settings[s]).SolverUsed;
                }
            }

            var times = new double[Solvers.Length][];
            for (int s = 0; s < Solvers.Length; s++)
            {
                times[s] = new double[TimingRuns];
            }

            for (int r = 0; r < TimingRuns; r++)
            {
                for (int s = 0; s < Solvers.Length; s++)
                {
                    long start = Stopwatch.GetTimestamp();
                    _ = Fit(problem, settings[s]);
                    times[s][r] = (Stopwatch.GetTimestamp() - start) * 1000.0 / Stopwatch.Frequency;
                }
            }

            double baseline = double.NaN;
            for (int s = 0; s < Solvers.Length; s++)
            {
                Array.Sort(times[s]);
                double median = times[s][TimingRuns / 2];
                if (Solvers[s] == RidgeSolver.Cholesky)
                {
                    baseline = median;
                }

                Console.WriteLine(string.Create(inv, $"| {Name(Solvers[s])} | {median:F2} | {median / baseline:F2} | {Name(used[s])} |"));
            }
        }

        private static RidgeFit Fit(RandomProblem problem, RidgeSettings settings) =>
            BatchRidge.Fit(new MatrixView(problem.X, problem.Rows, problem.Columns), problem.Y, settings);

        private static string Name(RidgeSolver solver) => solver switch
        {
            RidgeSolver.Cholesky => "Cholesky",
            RidgeSolver.Qr => "QR",
            RidgeSolver.Svd => "SVD",
            _ => "Auto",
        };
    }
}
