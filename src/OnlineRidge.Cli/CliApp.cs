using System;
using System.Collections.Generic;
using System.Diagnostics;
using System.Globalization;
using System.IO;
using System.Linq;
using System.Threading;

namespace OnlineRidge.Cli
{
    /// <summary>The tool: parse the command line, stream the CSV rows into the chosen estimator, write the outputs atomically.</summary>
    internal static class CliApp
    {
        public const int ExitOk = 0;
        public const int ExitUsage = 1;
        public const int ExitData = 2;
        public const int ExitBreakdown = 3;
        public const int ExitCancelled = 130;

        private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

        /// <summary>Runs the tool; returns the exit code. <paramref name="stderrIsTerminal"/> enables the progress bar.</summary>
        public static int Run(IReadOnlyList<string> args, TextWriter stdout, TextWriter stderr, bool stderrIsTerminal = false, CancellationToken cancel = default)
        {
            CliOptions options;
            try
            {
                options = CliOptions.Parse(args);
                if (options.ShowHelp)
                {
                    stdout.Write(CliOptions.HelpText(EstimatorFactory.Names));
                    return ExitOk;
                }

                if (!EstimatorFactory.IsKnown(options.Estimator))
                {
                    throw new UsageException($"--estimator {options.Estimator} is unknown; use one of: {string.Join(", ", EstimatorFactory.Names)}.");
                }
            }
            catch (UsageException e)
            {
                stderr.WriteLine($"error: {e.Message}");
                stderr.WriteLine("Run with --help for the options.");
                return ExitUsage;
            }

            try
            {
                return Execute(options, stdout, stderr, stderrIsTerminal, cancel);
            }
            catch (UsageException e)
            {
                stderr.WriteLine($"error: {e.Message}");
                return ExitUsage;
            }
            catch (DataException e)
            {
                stderr.WriteLine($"error: {e.Message}");
                stderr.WriteLine("No output was written.");
                return ExitData;
            }
            catch (RidgeBreakdownException e)
            {
                stderr.WriteLine($"error: the estimator broke down: {e.Message}");
                stderr.WriteLine("No output was written. A penalty (--penalty) or the qr/svd solver may help.");
                return ExitBreakdown;
            }
            catch (OperationCanceledException)
            {
                stderr.WriteLine("cancelled; no output was written.");
                return ExitCancelled;
            }
            catch (IOException e)
            {
                stderr.WriteLine($"error: {e.Message}");
                return ExitData;
            }
            catch (UnauthorizedAccessException e)
            {
                stderr.WriteLine($"error: {e.Message}");
                return ExitUsage;
            }
        }

        private static int Execute(CliOptions o, TextWriter stdout, TextWriter stderr, bool stderrIsTerminal, CancellationToken cancel)
        {
            var model = RegressorModel.Create(o);
            var columns = model.Columns.ToList();
            int weightIndex = -1;
            if (o.WeightColumn is not null)
            {
                weightIndex = columns.Count;
                columns.Add(o.WeightColumn);
            }

            using var outputs = new StagedOutputs();
            using var csv = new CsvSamples(o.DataPath, o.Separator, columns);
            bool batch = o.Estimator == EstimatorFactory.Batch;
            int p = model.RegressorCount;

            RecursiveForm? form = batch ? null : EstimatorFactory.Create(o.Estimator, new RecursiveRequest(p, o.Forgetting, o.Penalty, o.Intercept, o.Standardize));
            if (o.ChoosePenaltyByGcv && form is { ChooseByGcv: null })
            {
                throw new UsageException($"--penalty gcv is not available for --estimator {o.Estimator}; use batch or a form that offers it.");
            }

            TrajectoryPlot? plot = o.PlotPath is null ? null : new TrajectoryPlot(p);
            StagedFile? plotFile = o.PlotPath is null ? null : outputs.Add(o.PlotPath, open: false);
            Sink sink = batch
                ? new BatchSink(p)
                : new RecursiveSink(
                    form!,
                    o.OutPrefix is null ? null : outputs.Add(o.OutPrefix + ".trajectory.csv"),
                    plot,
                    model.Terms,
                    o.Every);

            var values = new double[columns.Count];
            var x = new double[p];
            var progress = new Progress(stderr, csv.TotalBytes, enabled: stderrIsTerminal && !o.Quiet && csv.TotalBytes >= Progress.MinimumBytes);
            var clock = Stopwatch.StartNew();
            long samples = 0;
            while (csv.Next(values))
            {
                samples++;
                double w = 1.0;
                if (weightIndex >= 0)
                {
                    w = values[weightIndex];
                    if (w < 0)
                    {
                        throw new DataException($"{csv.Source} line {csv.Line}, column '{o.WeightColumn}': weight {w.ToString("R", Inv)} is negative.");
                    }
                }

                if (model.TryBuild(values, x))
                {
                    sink.Accept(x, values[0], w, csv.Line);
                }

                if ((samples & 4095) == 0)
                {
                    cancel.ThrowIfCancellationRequested();
                    progress.Report(samples, csv.Position);
                }
            }

            progress.Finish();
            double seconds = clock.Elapsed.TotalSeconds;
            if (sink.Rows == 0)
            {
                throw new DataException($"{csv.Source}: no regressor rows ({samples} samples read{(model.WarmUpSamples > 0 ? $", {model.WarmUpSamples} needed to fill the lags" : string.Empty)}).");
            }

            var report = new EstimateReport
            {
                Estimator = o.Estimator,
                Source = csv.Source,
                SamplesRead = samples,
                Rows = sink.Rows,
                WarmUpSamples = model.WarmUpSamples,
                Terms = model.Terms,
                ForgettingFactor = o.Forgetting,
                Standardize = o.Standardize && (form?.Standardizes ?? true),
                Intercept = o.Intercept,
                Level = o.Level,
            };

            var settings = new RidgeSettings
            {
                Penalty = o.Penalty,
                ForgettingFactor = o.Forgetting,
                FitIntercept = o.Intercept,
                Standardize = o.Standardize,
                Solver = o.Solver,
            };
            sink.Finish(settings, o.ChoosePenaltyByGcv, report);

            if (plot is not null)
            {
                plot.Render(plotFile!.TempPath, $"parameter trajectory ({o.Estimator}, forgetting factor {o.Forgetting.ToString("G6", CultureInfo.InvariantCulture)})", model.Terms, o.Intercept);
            }

            if (o.OutPrefix is not null)
            {
                var csvOut = outputs.Add(o.OutPrefix + ".estimate.csv");
                report.WriteCsv(csvOut.Writer);
                var json = outputs.Add(o.OutPrefix + ".estimate.json");
                report.WriteJson(json.BaseStream);
            }

            outputs.CommitAll();

            report.WriteSummary(stdout);
            stdout.WriteLine(string.Format(Inv, "read {0} samples in {1:F2} s ({2:N0} rows/s)", samples, seconds, samples / Math.Max(seconds, 1e-9)));
            foreach (string f in outputs.FinalPaths)
            {
                stdout.WriteLine($"wrote {f}");
            }

            return ExitOk;
        }
    }

    /// <summary>Turns the selected column values of one row into a regressor vector: the columns themselves, or an ARX row.</summary>
    internal sealed class RegressorModel
    {
        private readonly ArxRegressor? arx;
        private readonly double[] inputs;

        private RegressorModel(string[] columns, string[] terms, ArxRegressor? arx, int inputCount)
        {
            Columns = columns;
            Terms = terms;
            this.arx = arx;
            inputs = new double[inputCount];
        }

        /// <summary>The CSV columns read, target first.</summary>
        public IReadOnlyList<string> Columns { get; }

        /// <summary>The names of the regressors, in order.</summary>
        public IReadOnlyList<string> Terms { get; }

        public int RegressorCount => Terms.Count;

        public int WarmUpSamples => arx?.WarmUpSamples ?? 0;

        public static RegressorModel Create(CliOptions o)
        {
            if (!o.IsArx)
            {
                var cols = new[] { o.Target }.Concat(o.Regressors).ToArray();
                return new RegressorModel(cols, o.Regressors.ToArray(), null, 0);
            }

            int na = o.OutputOrder ?? 0;
            ArxRegressor arx;
            try
            {
                arx = new ArxRegressor(na, o.ArxInputs.Select(i => i.Order).ToArray(), o.ArxInputs.Select(i => i.Delay).ToArray());
            }
            catch (ArgumentException e)
            {
                throw new UsageException("the ARX model is invalid: " + e.Message);
            }

            var terms = new List<string>();
            for (int j = 1; j <= na; j++)
            {
                terms.Add($"-{o.Target}(t-{j})");
            }

            foreach (var input in o.ArxInputs)
            {
                for (int j = 0; j < input.Order; j++)
                {
                    int lag = input.Delay + j;
                    terms.Add(lag == 0 ? $"{input.Column}(t)" : $"{input.Column}(t-{lag})");
                }
            }

            var columns = new[] { o.Target }.Concat(o.ArxInputs.Select(i => i.Column)).ToArray();
            return new RegressorModel(columns, terms.ToArray(), arx, o.ArxInputs.Count);
        }

        /// <summary>Builds x from the row values (target first); false while an ARX model is still filling its lags.</summary>
        public bool TryBuild(ReadOnlySpan<double> values, Span<double> x)
        {
            if (arx is null)
            {
                values.Slice(1, x.Length).CopyTo(x);
                return true;
            }

            values.Slice(1, inputs.Length).CopyTo(inputs);
            return arx.TryPush(values[0], inputs, x);
        }
    }

    /// <summary>A progress line on a terminal: percentage of the file, rows and rows per second, redrawn at most four times a second.</summary>
    internal sealed class Progress
    {
        public const long MinimumBytes = 32L << 20;

        private readonly TextWriter writer;
        private readonly long total;
        private readonly bool enabled;
        private readonly Stopwatch clock = Stopwatch.StartNew();
        private long lastDraw;
        private bool drawn;

        public Progress(TextWriter writer, long total, bool enabled)
        {
            this.writer = writer;
            this.total = total;
            this.enabled = enabled;
        }

        public void Report(long rows, long position)
        {
            if (!enabled || clock.ElapsedMilliseconds - lastDraw < 250)
            {
                return;
            }

            lastDraw = clock.ElapsedMilliseconds;
            double fraction = total > 0 && position >= 0 ? Math.Min(1.0, (double)position / total) : 0.0;
            int filled = (int)(fraction * 30);
            double rate = rows / Math.Max(clock.Elapsed.TotalSeconds, 1e-9);
            writer.Write(string.Format(CultureInfo.InvariantCulture, "\r{0,3:F0}% [{1}{2}] {3:N0} rows, {4:N0} rows/s   ", fraction * 100, new string('#', filled), new string('.', 30 - filled), rows, rate));
            drawn = true;
        }

        public void Finish()
        {
            if (drawn)
            {
                writer.Write("\r" + new string(' ', 79) + "\r");
            }
        }
    }
}
