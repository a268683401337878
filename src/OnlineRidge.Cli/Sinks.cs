using System;
using System.Collections.Generic;
using System.Globalization;
using System.IO;

namespace OnlineRidge.Cli
{
    /// <summary>Where the regressor rows go: the batch store or a recursive estimator.</summary>
    internal abstract class Sink
    {
        public long Rows { get; protected set; }

        public abstract void Accept(ReadOnlySpan<double> x, double y, double weight, int line);

        /// <summary>Computes the final estimate into <paramref name="report"/>.</summary>
        public abstract void Finish(RidgeSettings settings, bool chooseByGcv, EstimateReport report);
    }

    /// <summary>Keeps the rows (8·(p + 2) bytes each) and solves once at the end; the only mode whose memory grows with the file.</summary>
    internal sealed class BatchSink : Sink
    {
        private readonly int p;
        private double[] x;
        private double[] y;
        private double[] w;
        private bool weighted;

        public BatchSink(int p)
        {
            this.p = p;
            x = new double[1024 * p];
            y = new double[1024];
            w = new double[1024];
        }

        public override void Accept(ReadOnlySpan<double> row, double output, double weight, int line)
        {
            if (Rows == y.Length)
            {
                long grown = Math.Min((long)y.Length * 2, Array.MaxLength / p);
                if (grown <= Rows)
                {
                    throw new DataException($"line {line}: too many rows for the batch estimator ({Rows}); use a recursive --estimator.");
                }

                Array.Resize(ref x, (int)(grown * p));
                Array.Resize(ref y, (int)grown);
                Array.Resize(ref w, (int)grown);
            }

            int i = (int)Rows;
            row.CopyTo(x.AsSpan(i * p, p));
            y[i] = output;
            w[i] = weight;
            weighted |= weight != 1.0;
            Rows++;
        }

        public override void Finish(RidgeSettings settings, bool chooseByGcv, EstimateReport report)
        {
            int n = (int)Rows;
            var view = new MatrixView(x.AsSpan(0, n * p), n, p);
            ReadOnlySpan<double> outputs = y.AsSpan(0, n);
            ReadOnlySpan<double> weights = weighted ? w.AsSpan(0, n) : ReadOnlySpan<double>.Empty;
            try
            {
                if (chooseByGcv)
                {
                    var path = RegularizationPath.Compute(view, outputs, settings, weights, leaveOneOut: false);
                    var choice = path.ChooseByGeneralizedCrossValidation();
                    report.PenaltyChoice = choice;
                    settings = new RidgeSettings
                    {
                        Penalty = choice.Penalty,
                        ForgettingFactor = settings.ForgettingFactor,
                        FitIntercept = settings.FitIntercept,
                        Standardize = settings.Standardize,
                        Solver = settings.Solver,
                    };
                }

                var fit = BatchRidge.Fit(view, outputs, settings, weights);
                report.SetBatch(fit, CollinearityDiagnostics.Compute(view, weights, settings.ForgettingFactor));
            }
            catch (ArgumentException e)
            {
                throw new DataException("cannot fit the rows: " + e.Message);
            }
        }
    }

    /// <summary>
    /// Updates a recursive estimator sample by sample and writes the parameter trajectory every k-th row; constant memory, no allocation
    /// per row. Also accumulates the one-step-ahead (a-priori) prediction errors y(t) − ŷ(t | t−1), the honest error measure of a
    /// recursive fit, on the rows where the estimate is read. Rows before a solution exists (fewer samples than parameters) have empty
    /// trajectory fields.
    /// </summary>
    internal sealed class RecursiveSink : Sink
    {
        private readonly RecursiveForm form;
        private readonly IRecursiveEstimator estimator;
        private readonly TextWriter? trajectory;
        private readonly int every;
        private readonly double[] theta;
        private readonly char[] buffer = new char[64];
        private double squaredErrors;
        private double errorWeight;
        private long errorCount;
        private readonly TrajectoryPlot? plot;

        public RecursiveSink(RecursiveForm form, StagedFile? trajectoryFile, TrajectoryPlot? plot, IReadOnlyList<string> terms, int every)
        {
            this.plot = plot;
            this.form = form;
            estimator = form.Estimator;
            this.every = every;
            theta = new double[estimator.ParameterCount];
            if (trajectoryFile is not null)
            {
                trajectory = trajectoryFile.Writer;
                trajectory.Write("row,line,intercept");
                foreach (string t in terms)
                {
                    trajectory.Write(',');
                    trajectory.Write(EstimateReport.CsvField(t));
                }

                trajectory.WriteLine();
            }
        }

        public override void Accept(ReadOnlySpan<double> x, double y, double weight, int line)
        {
            // The estimate is read (a solve, O(p³) for the square-root form) only on every k-th row: just before its update for the
            // one-step-ahead error and just after it for the trajectory.
            bool read = (Rows + 1) % every == 0;
            if (read && Rows > 0 && form.TrySolve())
            {
                double e = y - estimator.Predict(x);
                squaredErrors += weight * e * e;
                errorWeight += weight;
                errorCount++;
            }

            try
            {
                estimator.Update(x, y, weight);
            }
            catch (RidgeBreakdownException e)
            {
                throw new RidgeBreakdownException($"at line {line}: {e.Message}", e);
            }

            Rows++;
            if (read && (trajectory is not null || plot is not null))
            {
                WriteTrajectoryRow(line);
            }
        }

        private void WriteTrajectoryRow(int line)
        {
            bool solved = form.TrySolve();
            if (solved)
            {
                estimator.CopyParametersTo(theta);
                plot?.Add(Rows, estimator.Intercept, theta);
            }

            if (trajectory is not null)
            {
                Write(Rows);
                trajectory.Write(',');
                Write(line);
                if (solved)
                {
                    trajectory.Write(',');
                    Write(estimator.Intercept);
                    for (int j = 0; j < theta.Length; j++)
                    {
                        trajectory.Write(',');
                        Write(theta[j]);
                    }
                }
                else
                {
                    for (int j = 0; j <= theta.Length; j++)
                    {
                        trajectory.Write(',');
                    }
                }

                trajectory.WriteLine();
            }
        }

        public override void Finish(RidgeSettings settings, bool chooseByGcv, EstimateReport report)
        {
            double penalty = settings.Penalty;
            double intercept;
            if (chooseByGcv)
            {
                var choice = form.ChooseByGcv!();
                report.PenaltyChoice = choice;
                penalty = choice.Penalty;
                intercept = form.SolveWithPenalty!(penalty, theta);
            }
            else
            {
                estimator.CopyParametersTo(theta); // throws RidgeBreakdownException when no solution exists
                intercept = estimator.Intercept;
            }

            report.SetRecursive(intercept, theta, errorWeight > 0 ? Math.Sqrt(squaredErrors / errorWeight) : double.NaN, errorCount, penalty, form.Diagnostics(), form.Collinearity?.Invoke());
        }

        private void Write(double v)
        {
            if (v.TryFormat(buffer, out int written, default, CultureInfo.InvariantCulture))
            {
                trajectory!.Write(buffer, 0, written);
            }
        }

        private void Write(long v)
        {
            if (v.TryFormat(buffer, out int written, default, CultureInfo.InvariantCulture))
            {
                trajectory!.Write(buffer, 0, written);
            }
        }
    }
}
