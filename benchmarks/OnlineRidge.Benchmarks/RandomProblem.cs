using System;

namespace OnlineRidge.Benchmarks
{
    /// <summary>
    /// A reproducible random regression problem: n rows of p regressors with unequal scales and neighbouring columns correlated
    /// (so the design is moderately conditioned, as real sensor channels are), outputs from known coefficients plus Gaussian noise.
    /// </summary>
    internal sealed class RandomProblem
    {
        private RandomProblem(int rows, int columns, double[] x, double[] y)
        {
            Rows = rows;
            Columns = columns;
            X = x;
            Y = y;
        }

        /// <summary>Number of rows n.</summary>
        public int Rows { get; }

        /// <summary>Number of regressor columns p.</summary>
        public int Columns { get; }

        /// <summary>Regressors, row-major n × p.</summary>
        public double[] X { get; }

        /// <summary>Outputs, length n.</summary>
        public double[] Y { get; }

        /// <summary>Creates the problem; the same arguments give the same numbers on every run.</summary>
        /// <param name="rows">n.</param>
        /// <param name="columns">p.</param>
        /// <param name="seed">Seed of the generator.</param>
        /// <returns>The problem.</returns>
        public static RandomProblem Create(int rows, int columns, int seed)
        {
            var random = new Random(seed);
            var theta = new double[columns];
            var scale = new double[columns];
            for (int j = 0; j < columns; j++)
            {
                theta[j] = Gaussian(random);
                scale[j] = Math.Pow(10.0, (2.0 * random.NextDouble()) - 1.0);
            }

            var x = new double[rows * columns];
            var y = new double[rows];
            for (int i = 0; i < rows; i++)
            {
                double previous = 0.0;
                double yi = 0.5;
                for (int j = 0; j < columns; j++)
                {
                    double z = (0.6 * previous) + (0.8 * Gaussian(random));
                    previous = z;
                    double v = (scale[j] * z) + 1.0;
                    x[(i * columns) + j] = v;
                    yi += theta[j] * v;
                }

                y[i] = yi + (0.1 * Gaussian(random));
            }

            return new RandomProblem(rows, columns, x, y);
        }

        private static double Gaussian(Random random)
        {
            // Box–Muller; 1 − U keeps the logarithm finite.
            double u1 = 1.0 - random.NextDouble();
            double u2 = random.NextDouble();
            return Math.Sqrt(-2.0 * Math.Log(u1)) * Math.Cos(2.0 * Math.PI * u2);
        }
    }
}
