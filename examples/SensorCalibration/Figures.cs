using System;
using System.Collections.Generic;
using System.Globalization;
using System.IO;
using System.Linq;
using OnlineRidge;
using OnlineRidge.Examples;
using ScottPlot;

namespace SensorCalibration
{
    /// <summary>The PNG and SVG figures: held-out calibration error, the ridge trace and the GCV curve.</summary>
    internal static partial class Program
    {
        private const string Name = "SensorCalibration";
        private const int Width = 1000;
        private const int Height = 450;

        private static void WriteFigures(Chamber.Data training, Chamber.Data heldOut, RidgeFit ols, RidgeFit ridge, string ridgeLabel)
        {
            var inv = CultureInfo.InvariantCulture;
            int p = TermNames.Length;
            string folder = ExampleOutput.Folder(Name);
            var files = new List<string>();

            // 1. Calibration error on the held-out points against the chamber's true humidity.
            var heldOutPlot = new Plot();
            double[] truth = heldOut.TrueHumidity;
            foreach (var (fit, label) in new[] { (ols, "OLS"), (ridge, ridgeLabel) })
            {
                double[] error = Enumerable.Range(0, heldOut.Count).Select(i => fit.Predict(heldOut.Design.AsSpan(i * p, p)) - truth[i]).ToArray();
                double rms = Math.Sqrt(error.Sum(e => e * e) / error.Length);
                var points = heldOutPlot.Add.ScatterPoints(truth, error);
                points.MarkerSize = 4;
                points.LegendText = string.Create(inv, $"{label}: RMS {rms:F2} %RH vs truth");
            }

            heldOutPlot.Add.HorizontalLine(0.0).Color = Colors.Black;
            heldOutPlot.Title(string.Create(inv, $"Calibration error on {heldOut.Count} held-out points (fitted on {training.Count})"));
            heldOutPlot.XLabel("true relative humidity [%RH]");
            heldOutPlot.YLabel("predicted − true [%RH]");
            heldOutPlot.ShowLegend(Alignment.UpperLeft);
            files.AddRange(Save(heldOutPlot, folder, "calibration-held-out"));

            // 2. Ridge trace and 3. GCV curve, both from one decomposition of the training design.
            var settings = new RidgeSettings { Standardize = true };
            RegularizationPath path = RegularizationPath.Compute(new MatrixView(training.Design, training.Count, p), training.Humidity, settings);
            PenaltyChoice choice = path.ChooseByGeneralizedCrossValidation();
            double[] logPenalty = path.Penalties.Select(Math.Log10).ToArray();
            double[] spread = ColumnSpread(training.Design, training.Count, p);

            var trace = new Plot();
            var coefficients = new double[p];
            var series = new double[p][];
            for (int j = 0; j < p; j++)
            {
                series[j] = new double[path.Count];
            }

            for (int k = 0; k < path.Count; k++)
            {
                path.CopyCoefficientsTo(k, coefficients);
                for (int j = 0; j < p; j++)
                {
                    series[j][k] = coefficients[j] * spread[j];
                }
            }

            for (int j = 0; j < p; j++)
            {
                var line = trace.Add.ScatterLine(logPenalty, series[j]);
                line.LineWidth = 2;
                line.LegendText = TermNames[j];
            }

            MarkChoice(trace, choice);
            trace.Title("Ridge trace: standardized coefficients θⱼ·sⱼ against the penalty");
            trace.XLabel("penalty λ (standardized units, log scale)");
            trace.YLabel("θⱼ·sⱼ [%RH per column spread]");
            LogAxis(trace.Axes.Bottom);
            trace.ShowLegend(Alignment.UpperRight);
            files.AddRange(Save(trace, folder, "ridge-trace"));

            var gcv = new Plot();
            var gcvLine = gcv.Add.ScatterLine(logPenalty, path.GeneralizedCrossValidation.Select(Math.Log10).ToArray());
            gcvLine.LineWidth = 2;
            gcvLine.LegendText = "GCV n·RSS/(n − df)²";
            if (path.LeaveOneOut is { } loo)
            {
                var looLine = gcv.Add.ScatterLine(logPenalty, loo.Select(Math.Log10).ToArray());
                looLine.LineWidth = 2;
                looLine.LinePattern = LinePattern.Dashed;
                looLine.LegendText = "exact leave-one-out mean squared error";
            }

            MarkChoice(gcv, choice);
            gcv.Title("Choosing the penalty on the training data: GCV (and leave-one-out for comparison)");
            gcv.XLabel("penalty λ (standardized units, log scale)");
            gcv.YLabel("score [(%RH)², log scale]");
            LogAxis(gcv.Axes.Bottom);
            LogAxis(gcv.Axes.Left);
            gcv.ShowLegend(Alignment.UpperCenter);
            files.AddRange(Save(gcv, folder, "gcv-curve"));

            string? published = ExampleOutput.PublishToDocs(Name, Path.Combine(folder, "ridge-trace.png"), "sensor-calibration.png");

            Console.WriteLine();
            Console.WriteLine(string.Create(inv,
                $"Regularization path ({path.Count} log-spaced penalties): GCV is lowest at λ = {choice.Penalty:0.###E+0} (score {choice.Value:F3}{(choice.OnGridEdge ? ", on the grid edge" : string.Empty)}), effective dof {path.EffectiveDegreesOfFreedom[choice.Index]:F1}."));
            Console.WriteLine("Files written to " + folder + ":");
            foreach (string file in files)
            {
                Console.WriteLine("  " + Path.GetFileName(file));
            }

            if (published is not null)
            {
                Console.WriteLine("README image updated: " + published);
            }
        }

        private static void MarkChoice(Plot plot, PenaltyChoice choice)
        {
            var marker = plot.Add.VerticalLine(Math.Log10(choice.Penalty));
            marker.Color = Colors.Black;
            marker.LinePattern = LinePattern.Dotted;
            marker.LegendText = string.Create(CultureInfo.InvariantCulture, $"lowest GCV, λ = {choice.Penalty:0.##E+0}");
        }

        /// <summary>Labels an axis that carries log₁₀ of the data as powers of ten, with log-spaced minor ticks.</summary>
        private static void LogAxis(ScottPlot.IAxis axis)
        {
            axis.TickGenerator = new ScottPlot.TickGenerators.NumericAutomatic
            {
                MinorTickGenerator = new ScottPlot.TickGenerators.LogMinorTickGenerator(),
                IntegerTicksOnly = true,
                LabelFormatter = v => string.Create(CultureInfo.InvariantCulture, $"1e{v:0}"),
            };
        }

        /// <summary>Population standard deviation of each design column, to put the raw-unit coefficients on one scale.</summary>
        private static double[] ColumnSpread(double[] design, int n, int p)
        {
            var sd = new double[p];
            for (int j = 0; j < p; j++)
            {
                double mean = 0.0;
                for (int i = 0; i < n; i++)
                {
                    mean += design[(i * p) + j];
                }

                mean /= n;
                double ss = 0.0;
                for (int i = 0; i < n; i++)
                {
                    double d = design[(i * p) + j] - mean;
                    ss += d * d;
                }

                sd[j] = Math.Sqrt(ss / n);
            }

            return sd;
        }

        private static string[] Save(Plot plot, string folder, string name)
        {
            string png = Path.Combine(folder, name + ".png");
            string svg = Path.Combine(folder, name + ".svg");
            plot.SavePng(png, Width, Height);
            plot.SaveSvg(svg, Width, Height);
            return new[] { png, svg };
        }
    }
}
