using System;
using System.Collections.Generic;
using System.IO;
using System.Linq;
using ScottPlot;

namespace HeaterIdentification
{
    /// <summary>The PNG and SVG figures: parameter trajectories with ±2 SE bands and the truth, and the one-step prediction error; idle stretches shaded.</summary>
    internal static class Plots
    {
        private const int Width = 1000;
        private const int Height = 420;
        private static readonly int[] GainIndices = { 2, 3 };
        private static readonly int[] PoleIndices = { 0, 1 };

        public static IReadOnlyList<string> Write(string folder, HeaterPlant.Data plant, Trajectories history, int start)
        {
            var files = new List<string>();
            double[] time = Enumerable.Range(start, plant.Output.Length - start).Select(t => (double)t).ToArray();

            files.AddRange(Save(ParameterPlot(plant, history, time, GainIndices, "Gain parameters b1, b2 (drift with element temperature and age)", Alignment.LowerRight), folder, "heater-gain-parameters"));
            files.AddRange(Save(ParameterPlot(plant, history, time, PoleIndices, "Pole parameters a1, a2 (constant in the plant)", Alignment.MiddleRight), folder, "heater-pole-parameters"));

            var error = new Plot();
            ShadeIdle(error);
            var line = error.Add.ScatterLine(time, time.Select(t => history.PredictionError[(int)t]).ToArray());
            line.LineWidth = 1;
            line.LegendText = "one-step prediction error y(t) − ŷ(t|t−1)";
            error.Title("One-step prediction error (shaded: input idle)");
            error.XLabel("time [s]");
            error.YLabel("error [K]");
            error.Axes.SetLimitsY(-0.2, 0.2);
            error.ShowLegend(Alignment.UpperRight);
            files.AddRange(Save(error, folder, "heater-prediction-error"));

            var io = new Plot();
            ShadeIdle(io);
            var yLine = io.Add.ScatterLine(time, time.Select(t => plant.Output[(int)t]).ToArray());
            yLine.LegendText = "temperature rise y [K]";
            var uLine = io.Add.ScatterLine(time, time.Select(t => 20.0 * plant.Input[(int)t]).ToArray());
            uLine.LegendText = "duty cycle u × 20";
            uLine.LineWidth = 1;
            io.Title("Heater input and output (shaded: input idle)");
            io.XLabel("time [s]");
            io.ShowLegend(Alignment.UpperRight);
            files.AddRange(Save(io, folder, "heater-input-output"));
            return files;
        }

        private static Plot ParameterPlot(HeaterPlant.Data plant, Trajectories history, double[] time, int[] indices, string title, Alignment legend)
        {
            string[] names = { "a1", "a2", "b1", "b2" };
            var plot = new Plot();
            ShadeIdle(plot);
            foreach (int j in indices)
            {
                double[] estimate = time.Select(t => history.Theta[j][(int)t]).ToArray();
                // Zero-width band where σ̂ is not yet defined (ν < 1 in the first few samples): one NaN would blank the whole polygon.
                double[] lower = time.Select(t => history.Theta[j][(int)t] - (2.0 * Finite(history.StandardError[j][(int)t]))).ToArray();
                double[] upper = time.Select(t => history.Theta[j][(int)t] + (2.0 * Finite(history.StandardError[j][(int)t]))).ToArray();
                Color color = plot.Add.GetNextColor();
                var band = plot.Add.FillY(time, upper, lower);
                band.FillColor = color.WithAlpha(0.3);
                band.LineColor = Colors.Transparent;
                band.LegendText = "±2 SE";
                var est = plot.Add.ScatterLine(time, estimate);
                est.Color = color;
                est.LineWidth = 1.5f;
                est.LegendText = names[j] + " estimate";
                var truth = plot.Add.ScatterLine(time, time.Select(t => plant.Truth[(int)t][j]).ToArray());
                truth.Color = Colors.Black;
                truth.LinePattern = LinePattern.Dashed;
                truth.LineWidth = 1.5f;
                truth.LegendText = names[j] + " true";
            }

            plot.Title(title + "; shaded: input idle");
            plot.XLabel("time [s]");
            plot.YLabel("parameter");
            plot.ShowLegend(legend);
            return plot;
        }

        private static double Finite(double value) => double.IsFinite(value) ? value : 0.0;

        private static void ShadeIdle(Plot plot)
        {
            foreach (var s in HeaterPlant.Schedule.Where(s => !double.IsNaN(s.IdleLevel)))
            {
                var span = plot.Add.HorizontalSpan(s.Start, s.End);
                span.FillColor = Colors.Gray.WithAlpha(0.15);
                span.LineColor = Colors.Transparent;
            }
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
