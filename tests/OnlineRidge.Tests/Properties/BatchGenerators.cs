using System;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using FsCheck;
using FsCheck.Fluent;

namespace OnlineRidge.Tests.Properties
{
    /// <summary>The shape of a generated design (what makes it easy or hard).</summary>
    public enum BatchDesignKind
    {
        /// <summary>Independent uniform columns on [−1, 1]: well conditioned.</summary>
        Uniform,

        /// <summary>Columns scaled by 10^k (k in −3..3) and shifted by a few scales: badly scaled, large means.</summary>
        BadlyScaled,

        /// <summary>Columns j ≥ 1 equal column 0 plus 10^−k noise (k in 1..5): strongly collinear, cond(H) up to about 10¹¹.</summary>
        Collinear,

        /// <summary>The first min(p, 5) columns are powers t, t², … of t on [0, 1] (a Vandermonde-type design); the rest uniform.</summary>
        Polynomial,
    }

    /// <summary>How the sample weights are drawn.</summary>
    public enum WeightKind
    {
        /// <summary>No weights passed (unit weights).</summary>
        Unit,

        /// <summary>Uniform on [0, 3], about 15 % exact zeros.</summary>
        Continuous,

        /// <summary>Integers 0..3 (about a quarter zeros).</summary>
        Counts,
    }

    /// <summary>
    /// One generated batch problem: n × p design (row-major), outputs, weights, penalty, forgetting factor, flags and prior.
    /// Immutable; the With… methods return modified copies (used by shrinking and by properties that need a special case).
    /// </summary>
    public sealed class BatchCase
    {
        public BatchCase(int n, int p, double[] x, double[] y, double[] weights, WeightKind weightKind, BatchDesignKind design, double penalty, double beta, bool intercept, bool standardize, double[]? prior)
        {
            N = n;
            P = p;
            X = x;
            Y = y;
            Weights = weights;
            WeightKind = weightKind;
            Design = design;
            Penalty = penalty;
            Beta = beta;
            Intercept = intercept;
            Standardize = standardize;
            Prior = prior;
        }

        public int N { get; }

        public int P { get; }

        /// <summary>Row-major n × p.</summary>
        public double[] X { get; }

        public double[] Y { get; }

        /// <summary>Length n, or empty for unit weights.</summary>
        public double[] Weights { get; }

        public WeightKind WeightKind { get; }

        public BatchDesignKind Design { get; }

        public double Penalty { get; }

        public double Beta { get; }

        public bool Intercept { get; }

        public bool Standardize { get; }

        public double[]? Prior { get; }

        public MatrixView View => new(X, N, P);

        /// <summary>The weight of row i as passed (1 for unit weights).</summary>
        public double Weight(int i) => Weights.Length == 0 ? 1.0 : Weights[i];

        public int PositiveRows => Enumerable.Range(0, N).Count(i => Weight(i) > 0.0);

        public RidgeSettings Settings(RidgeSolver solver, int refinementSteps = 3) => new()
        {
            RefinementSteps = refinementSteps,
            Penalty = Penalty,
            ForgettingFactor = Beta,
            FitIntercept = Intercept,
            Standardize = Standardize,
            Prior = Prior,
            Solver = solver,
        };

        public BatchCase WithPenalty(double penalty) => new(N, P, X, Y, Weights, WeightKind, Design, penalty, Beta, Intercept, Standardize, Prior);

        public BatchCase WithBeta(double beta) => new(N, P, X, Y, Weights, WeightKind, Design, Penalty, beta, Intercept, Standardize, Prior);

        public BatchCase WithStandardize(bool standardize) => new(N, P, X, Y, Weights, WeightKind, Design, Penalty, Beta, Intercept, standardize, Prior);

        public BatchCase WithPrior(double[]? prior) => new(N, P, X, Y, Weights, WeightKind, Design, Penalty, Beta, Intercept, Standardize, prior);

        public BatchCase WithWeights(double[] weights, WeightKind kind) => new(N, P, X, Y, weights, kind, Design, Penalty, Beta, Intercept, Standardize, Prior);

        public BatchCase WithData(double[] x, double[] y) => new(N, P, x, y, Weights, WeightKind, Design, Penalty, Beta, Intercept, Standardize, Prior);

        /// <summary>The first <paramref name="rows"/> rows.</summary>
        public BatchCase TakeRows(int rows) => new(
            rows, P, X.Take(rows * P).ToArray(), Y.Take(rows).ToArray(), Weights.Length == 0 ? Weights : Weights.Take(rows).ToArray(),
            WeightKind, Design, Penalty, Beta, Intercept, Standardize, Prior);

        /// <summary>Without the last column.</summary>
        public BatchCase DropLastColumn()
        {
            int q = P - 1;
            var x = new double[N * q];
            for (int i = 0; i < N; i++)
            {
                Array.Copy(X, i * P, x, i * q, q);
            }

            return new(N, q, x, Y, Weights, WeightKind, Design, Penalty, Beta, Intercept, Standardize, Prior?.Take(q).ToArray());
        }

        public override string ToString() => string.Format(
            CultureInfo.InvariantCulture,
            "BatchCase(n={0}, p={1}, design={2}, weights={3} ({4} positive), lambda={5:R}, beta={6:R}, intercept={7}, standardize={8}, prior={9}, x[0..]={10}, y[0..]={11})",
            N, P, Design, WeightKind, PositiveRows, Penalty, Beta, Intercept, Standardize,
            Prior is null ? "none" : "[" + string.Join(", ", Prior.Select(v => v.ToString("G6", CultureInfo.InvariantCulture))) + "]",
            string.Join(", ", X.Take(Math.Min(6, X.Length)).Select(v => v.ToString("G6", CultureInfo.InvariantCulture))),
            string.Join(", ", Y.Take(Math.Min(4, Y.Length)).Select(v => v.ToString("G6", CultureInfo.InvariantCulture))));
    }

    /// <summary>
    /// FsCheck generators of batch problems (seeded through the property's Replay, shrinkable): p in 1..20 (every SIMD tail),
    /// n from p + 3 up to 200 (growing with the FsCheck size), weights in [0, 3] with zeros, penalty across ten decades, forgetting
    /// factor 1 or in [0.95, 0.999], with and without intercept, standardization and prior, and well- and ill-conditioned designs.
    /// Every draw comes from FsCheck's random source, so a Replay seed reproduces a case exactly.
    /// </summary>
    public static class BatchGenerators
    {
        public const int MaxRows = 200;

        /// <summary>Uniform on [−1, 1] with 2⁻²⁰ resolution, from FsCheck's integer generator.</summary>
        public static Gen<double> Unit => Gen.Choose(-(1 << 20), 1 << 20).Select(k => k / (double)(1 << 20));

        public static Gen<BatchCase> Case =>
            Gen.Sized(size =>
                from p in Gen.Choose(1, 20)
                from extra in Gen.Choose(0, Math.Min(MaxRows - p - 3, 10 + (2 * size)))
                let n = p + 3 + extra
                from design in Gen.Elements(BatchDesignKind.Uniform, BatchDesignKind.Uniform, BatchDesignKind.BadlyScaled, BatchDesignKind.Collinear, BatchDesignKind.Polynomial)
                from cells in Gen.ArrayOf(Unit, n * p)
                from exponents in Gen.ArrayOf(Gen.Choose(-3, 3), p)
                from offsets in Gen.ArrayOf(Unit, p)
                from collinearity in Gen.Choose(1, 5)
                from truth in Gen.ArrayOf(Unit, p + 1)
                from noiseLevel in Gen.Elements(0.0, 1e-3, 0.1, 1.0)
                from noise in Gen.ArrayOf(Unit, n)
                from weightKind in Gen.Elements(WeightKind.Unit, WeightKind.Continuous, WeightKind.Counts)
                from rawWeights in Gen.ArrayOf(Gen.Choose(0, 1000), n)
                from penaltyDecade in Gen.Choose(-6, 4)
                from penaltyMantissa in Gen.Choose(10, 99)
                from forgetting in Gen.Elements(1.0, 1.0, 1.0, 0.95, 0.98, 0.99, 0.995, 0.999)
                from intercept in Gen.Elements(true, false)
                from standardize in Gen.Elements(true, false)
                from hasPrior in Gen.Elements(true, false, false)
                from priorCells in Gen.ArrayOf(Unit, p)
                select Build(n, p, design, cells, exponents, offsets, collinearity, truth, noiseLevel, noise, weightKind, rawWeights,
                    penaltyMantissa / 10.0 * Math.Pow(10.0, penaltyDecade), forgetting, intercept, standardize, hasPrior ? priorCells : null));

        /// <summary>The FsCheck arbitrary (generator plus shrinker) picked up by [Property(Arbitrary = ...)].</summary>
        public static Arbitrary<BatchCase> BatchCase() => Arb.From(Case, Shrink);

        /// <summary>
        /// Shrinks towards smaller, simpler cases: half the rows, one row fewer, one column fewer, no prior, no forgetting, unit weights,
        /// penalty 1. Every candidate keeps at least p + 3 rows with p + 2 of positive weight (so zero-penalty fits stay determined).
        /// </summary>
        public static IEnumerable<BatchCase> Shrink(BatchCase c)
        {
            var candidates = new List<BatchCase>();
            if (c.N / 2 >= c.P + 3)
            {
                candidates.Add(c.TakeRows(c.N / 2));
            }

            if (c.N - 1 >= c.P + 3)
            {
                candidates.Add(c.TakeRows(c.N - 1));
            }

            if (c.P > 1)
            {
                candidates.Add(c.DropLastColumn());
            }

            if (c.Prior is not null)
            {
                candidates.Add(c.WithPrior(null));
            }

            if (c.Beta != 1.0)
            {
                candidates.Add(c.WithBeta(1.0));
            }

            if (c.WeightKind != WeightKind.Unit)
            {
                candidates.Add(c.WithWeights(Array.Empty<double>(), WeightKind.Unit));
            }

            if (c.Penalty != 1.0 && c.Penalty != 0.0)
            {
                candidates.Add(c.WithPenalty(1.0));
            }

            return candidates.Where(k => k.PositiveRows >= k.P + 2);
        }

        private static BatchCase Build(
            int n, int p, BatchDesignKind design, double[] cells, int[] exponents, double[] offsets, int collinearity, double[] truth,
            double noiseLevel, double[] noise, WeightKind weightKind, int[] rawWeights, double penalty, double beta, bool intercept,
            bool standardize, double[]? priorCells)
        {
            var x = (double[])cells.Clone();
            var scale = Enumerable.Repeat(1.0, p).ToArray();
            switch (design)
            {
                case BatchDesignKind.BadlyScaled:
                    for (int j = 0; j < p; j++)
                    {
                        scale[j] = Math.Pow(10.0, exponents[j]);
                        for (int i = 0; i < n; i++)
                        {
                            x[(i * p) + j] = scale[j] * (cells[(i * p) + j] + (5.0 * offsets[j]));
                        }
                    }

                    break;
                case BatchDesignKind.Collinear:
                    double delta = Math.Pow(10.0, -collinearity);
                    for (int i = 0; i < n; i++)
                    {
                        for (int j = 1; j < p; j++)
                        {
                            x[(i * p) + j] = cells[i * p] + (delta * cells[(i * p) + j]);
                        }
                    }

                    break;
                case BatchDesignKind.Polynomial:
                    int degree = Math.Min(p, 5);
                    for (int i = 0; i < n; i++)
                    {
                        double t = 0.5 * (cells[i * p] + 1.0);
                        double power = 1.0;
                        for (int j = 0; j < degree; j++)
                        {
                            power *= t;
                            x[(i * p) + j] = power;
                        }
                    }

                    break;
                default:
                    break;
            }

            var y = new double[n];
            for (int i = 0; i < n; i++)
            {
                double s = intercept ? 3.0 * truth[p] : 0.0;
                for (int j = 0; j < p; j++)
                {
                    s += 2.0 * truth[j] / scale[j] * x[(i * p) + j];
                }

                y[i] = s + (noiseLevel * noise[i]);
            }

            double[] weights = weightKind switch
            {
                WeightKind.Unit => Array.Empty<double>(),
                WeightKind.Continuous => rawWeights.Select(k => k < 150 ? 0.0 : 3.0 * (k - 150) / 850.0).ToArray(),
                _ => rawWeights.Select(k => (double)(k % 4)).ToArray(),
            };

            // Keep the problem determined without a penalty: at least p + 2 rows of positive weight (the newest rows are given weight 1).
            if (weights.Length > 0)
            {
                for (int i = n - 1; i >= 0 && weights.Count(w => w > 0.0) < p + 2; i--)
                {
                    if (weights[i] == 0.0)
                    {
                        weights[i] = 1.0;
                    }
                }
            }

            double[]? prior = priorCells?.Select((v, j) => 2.0 * v / scale[j]).ToArray();
            return new BatchCase(n, p, x, y, weights, weightKind, design, penalty, beta, intercept, standardize, prior);
        }
    }
}
