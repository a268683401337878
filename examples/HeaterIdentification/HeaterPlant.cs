using System;

namespace HeaterIdentification
{
    /// <summary>
    /// The simulated tank heater. All constants are invented. Sampled at 1 Hz; the water responds with two time constants
    /// (poles 0.9 and 0.7: a1 = −1.6, a2 = 0.63). The heater's power at a given duty cycle falls as its element warms
    /// (resistance rises about 0.8 % per kelvin of water temperature rise) and as it ages (10 % over the run), so b1 and b2 drift.
    /// </summary>
    internal static class HeaterPlant
    {
        /// <summary>Standard deviation of the equation error e(t), kelvin.</summary>
        public const double NoiseSd = 0.03;

        private const double A1 = -1.6;
        private const double A2 = 0.63;
        private const double B1Nominal = 0.50;
        private const double B2Nominal = 0.30;
        private const double ResistanceTemperatureCoefficient = 0.008;
        private const double AgingOverRun = 0.10;

        /// <summary>Operating schedule: stepping (random duty-cycle steps) or idle (duty cycle held at a constant level).</summary>
        public static readonly Segment[] Schedule =
        {
            new(0, 1_500, double.NaN),
            new(1_500, 2_700, 0.65),
            new(2_700, 3_700, double.NaN),
            new(3_700, 5_200, 0.25),
            new(5_200, 6_000, double.NaN),
        };

        public static bool IsIdle(int t)
        {
            foreach (var s in Schedule)
            {
                if (t >= s.Start && t < s.End)
                {
                    return !double.IsNaN(s.IdleLevel);
                }
            }

            return false;
        }

        public static Data Simulate(Random random, int steps)
        {
            var y = new double[steps];
            var u = new double[steps];
            var truth = new double[steps][];
            double level = 0.5;
            int hold = 0;
            for (int t = 0; t < steps; t++)
            {
                // Input first: u(t) acts from t + 1 on (nk = 1).
                double idleLevel = IdleLevelAt(t);
                if (!double.IsNaN(idleLevel))
                {
                    level = idleLevel;
                    hold = 0;
                }
                else if (hold-- <= 0)
                {
                    level = 0.2 + (0.6 * random.NextDouble());
                    hold = 2 + random.Next(12); // 3–14 s per step: fast enough to tell b1 from b2
                }

                u[t] = level;

                double previous = t >= 1 ? y[t - 1] : 0.0;
                double gain = 1.0 / ((1.0 + (ResistanceTemperatureCoefficient * previous)) * (1.0 + (AgingOverRun * t / steps)));
                double[] theta = { A1, A2, B1Nominal * gain, B2Nominal * gain };
                truth[t] = theta;

                double y1 = t >= 1 ? y[t - 1] : 0.0;
                double y2 = t >= 2 ? y[t - 2] : 0.0;
                double u1 = t >= 1 ? u[t - 1] : 0.0;
                double u2 = t >= 2 ? u[t - 2] : 0.0;
                y[t] = (-theta[0] * y1) - (theta[1] * y2) + (theta[2] * u1) + (theta[3] * u2) + (NoiseSd * Gaussian(random));
            }

            return new Data(y, u, truth);
        }

        private static double IdleLevelAt(int t)
        {
            foreach (var s in Schedule)
            {
                if (t >= s.Start && t < s.End)
                {
                    return s.IdleLevel;
                }
            }

            return double.NaN;
        }

        private static double Gaussian(Random random)
        {
            double u1 = 1.0 - random.NextDouble();
            double u2 = random.NextDouble();
            return Math.Sqrt(-2.0 * Math.Log(u1)) * Math.Cos(2.0 * Math.PI * u2);
        }

        /// <summary>One stretch of the schedule; <see cref="IdleLevel"/> is NaN while stepping.</summary>
        public readonly record struct Segment(int Start, int End, double IdleLevel);

        /// <summary>Output y (temperature rise, K), input u (duty cycle) and the true parameters [a1, a2, b1, b2] at each time.</summary>
        public sealed record Data(double[] Output, double[] Input, double[][] Truth);
    }
}
