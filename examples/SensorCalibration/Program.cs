using System;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using OnlineRidge;

namespace SensorCalibration
{
    /// <summary>
    /// Calibrating a capacitive humidity probe in a climate chamber (an invented scenario, data simulated below with a fixed seed).
    /// The probe reports raw counts that depend on relative humidity and, a little, on temperature; the calibration maps
    /// (raw counts, temperature) back to humidity with a generous model: a degree-6 polynomial in the raw counts plus temperature terms,
    /// all in raw units. Its columns are nearly collinear and span some 27 orders of magnitude, and the chamber run is short,
    /// so ordinary least squares follows the noise; ridge shrinks the poorly determined directions.
    /// </summary>
    internal static partial class Program
    {
        private const int Seed = 2_026;
        private const int TrainingPoints = 24;
        private const int HeldOutPoints = 400;
        private const int Degree = 6;

        private static readonly double[] Penalties = { 0.0, 1e-4, 1e-3, 1e-2, 1e-1, 1.0 };

        private static readonly string[] TermNames = BuildTermNames();

        private static int Main()
        {
            var random = new Random(Seed);
            var training = Chamber.Run(random, TrainingPoints);
            var heldOut = Chamber.Run(random, HeldOutPoints);
            var inv = CultureInfo.InvariantCulture;

            Console.WriteLine(string.Create(inv,
                $"Humidity probe calibration: {TrainingPoints} chamber set points for fitting, {HeldOutPoints} held-out points for checking."));
            Console.WriteLine(string.Create(inv,
                $"Model: RH = b0 + c1·r + … + c{Degree}·r^{Degree} + d1·T + d2·T·r + d3·T², r = raw counts (≈ 2·10⁴ to 3.6·10⁴), T in °C."));
            Console.WriteLine();

            var fits = new List<(string Label, RidgeFit Fit, double Gcv, double TrainRms, double HeldOutRms)>();
            foreach (double penalty in Penalties)
            {
                var settings = new RidgeSettings { Penalty = penalty, Standardize = true };
                RidgeFit fit = BatchRidge.Fit(new MatrixView(training.Design, training.Count, TermNames.Length), training.Humidity, settings);
                string label = penalty == 0.0 ? "OLS (penalty 0)" : string.Create(inv, $"ridge {penalty:0.####}");
                fits.Add((label, fit, Gcv(fit), Rms(fit, training), Rms(fit, heldOut)));
            }

            // The penalty a user could pick without the held-out data: smallest generalized cross-validation score on the training run.
            int chosen = 1 + fits.Skip(1).Select((f, k) => (f.Gcv, k)).Min().k;

            Console.WriteLine("| fit | solver | condition | eff. dof | GCV (train) | RMS train %RH | RMS held-out %RH |");
            Console.WriteLine("|---|---|---:|---:|---:|---:|---:|");
            for (int k = 0; k < fits.Count; k++)
            {
                var f = fits[k];
                string mark = k == chosen ? " ◀ lowest GCV" : string.Empty;
                Console.WriteLine(string.Create(inv,
                    $"| {f.Label}{mark} | {f.Fit.SolverUsed} | {f.Fit.ConditionEstimate:0.0E+0} | {f.Fit.EffectiveDegreesOfFreedom:F1} | {f.Gcv:F3} | {f.TrainRms:F3} | {f.HeldOutRms:F3} |"));
            }

            Console.WriteLine();
            var ols = fits[0].Fit;
            var ridge = fits[chosen].Fit;
            Console.WriteLine(string.Create(inv, $"Coefficients in raw units, OLS vs {fits[chosen].Label}:"));
            Console.WriteLine();
            Console.WriteLine(string.Create(inv, $"| term | OLS | {fits[chosen].Label} |"));
            Console.WriteLine("|---|---:|---:|");
            Console.WriteLine(string.Create(inv, $"| 1 | {ols.Intercept,12:0.0000E+0} | {ridge.Intercept,12:0.0000E+0} |"));
            for (int j = 0; j < TermNames.Length; j++)
            {
                Console.WriteLine(string.Create(inv, $"| {TermNames[j]} | {ols.Coefficients[j],12:0.0000E+0} | {ridge.Coefficients[j],12:0.0000E+0} |"));
            }

            Console.WriteLine();
            double olsHeldOut = fits[0].HeldOutRms;
            double ridgeHeldOut = fits[chosen].HeldOutRms;
            Console.WriteLine(string.Create(inv,
                $"Reading: OLS fits the {TrainingPoints} training points closest ({fits[0].TrainRms:F3} %RH) but uses all {ols.EffectiveDegreesOfFreedom:F0} degrees of freedom, partly on noise;"));
            Console.WriteLine(string.Create(inv,
                $"ridge ({fits[chosen].Label}, chosen by GCV on the training data alone) spends {ridge.EffectiveDegreesOfFreedom:F1}, fits the training points a little worse (bias) and"));
            Console.WriteLine(string.Create(inv,
                $"predicts the held-out points {(ridgeHeldOut < olsHeldOut ? "better" : "no better")}: {ridgeHeldOut:F3} vs {olsHeldOut:F3} %RH RMS (the reference hygrometer alone scatters {Chamber.ReferenceNoise:F1} %RH)."));

            WriteFigures(training, heldOut, ols, ridge, fits[chosen].Label);

            Console.WriteLine();
            Console.WriteLine("Caution: a calibration feeding a control loop must be validated on independent points before the loop is closed on it, and supervised in service.");
            return 0;
        }

        /// <summary>Generalized cross-validation score n·RSS/(n − df)² (Craven and Wahba 1979), from the fit's effective degrees of freedom.</summary>
        private static double Gcv(RidgeFit fit)
        {
            double n = fit.SampleCount;
            double slack = n - fit.EffectiveDegreesOfFreedom;
            return n * fit.ResidualSumOfSquares / (slack * slack);
        }

        private static double Rms(RidgeFit fit, Chamber.Data data)
        {
            double sum = 0.0;
            int p = TermNames.Length;
            for (int i = 0; i < data.Count; i++)
            {
                double e = fit.Predict(data.Design.AsSpan(i * p, p)) - data.Humidity[i];
                sum += e * e;
            }

            return Math.Sqrt(sum / data.Count);
        }

        private static string[] BuildTermNames()
        {
            var names = new List<string>();
            for (int k = 1; k <= Degree; k++)
            {
                names.Add(k == 1 ? "r" : string.Create(CultureInfo.InvariantCulture, $"r^{k}"));
            }

            names.Add("T");
            names.Add("T·r");
            names.Add("T²");
            return names.ToArray();
        }

        /// <summary>The simulated climate chamber and probe. All constants are invented.</summary>
        private static class Chamber
        {
            /// <summary>Standard deviation of the reference hygrometer, %RH.</summary>
            public const double ReferenceNoise = 0.8;

            /// <summary>Standard deviation of the probe's raw reading, counts.</summary>
            private const double CountNoise = 12.0;

            /// <summary>Runs the chamber through <paramref name="points"/> random set points (10–90 %RH, 5–45 °C).</summary>
            public static Data Run(Random random, int points)
            {
                int p = TermNames.Length;
                var design = new double[points * p];
                var humidity = new double[points];
                var truth = new double[points];
                for (int i = 0; i < points; i++)
                {
                    double rh = 10.0 + (80.0 * random.NextDouble());
                    double t = 5.0 + (40.0 * random.NextDouble());
                    double r = RawCounts(rh, t) + (CountNoise * Gaussian(random));
                    humidity[i] = rh + (ReferenceNoise * Gaussian(random));
                    truth[i] = rh;

                    Span<double> row = design.AsSpan(i * p, p);
                    double power = 1.0;
                    for (int k = 0; k < Degree; k++)
                    {
                        power *= r;
                        row[k] = power;
                    }

                    row[Degree] = t;
                    row[Degree + 1] = t * r;
                    row[Degree + 2] = t * t;
                }

                return new Data(design, humidity, truth);
            }

            /// <summary>The probe's response: offset, a slightly bending sensitivity, and a temperature-dependent gain and offset.</summary>
            private static double RawCounts(double rh, double t)
            {
                double dt = t - 25.0;
                return 18_000.0 + (170.0 * rh * (1.0 + (0.0025 * dt))) + (0.4 * rh * rh) - (0.002 * rh * rh * rh) + (30.0 * dt);
            }

            private static double Gaussian(Random random)
            {
                double u1 = 1.0 - random.NextDouble();
                double u2 = random.NextDouble();
                return Math.Sqrt(-2.0 * Math.Log(u1)) * Math.Cos(2.0 * Math.PI * u2);
            }

            /// <summary>Design rows, reference-hygrometer humidities and the chamber's true humidities of one run.</summary>
            public sealed record Data(double[] Design, double[] Humidity, double[] TrueHumidity)
            {
                /// <summary>Number of points.</summary>
                public int Count => Humidity.Length;
            }
        }
    }
}
