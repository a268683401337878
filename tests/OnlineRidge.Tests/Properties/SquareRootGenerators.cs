using System;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using FsCheck;
using FsCheck.Fluent;

namespace OnlineRidge.Tests.Properties
{
    /// <summary>How the regressor columns of a generated problem are built.</summary>
    public enum SquareRootDesign
    {
        /// <summary>Independent Gaussian columns, spreads in [0.5, 2], means in [−2, 2]: cond(X) of order 1–10.</summary>
        Well = 0,

        /// <summary>Columns = a common Gaussian factor + δ·noise, δ = 10^U(−4, −1): strongly collinear, cond(X) up to about 10⁴·√p.</summary>
        Collinear = 1,

        /// <summary>Independent columns with spreads 10^U(−2, 2) and means of the same scale.</summary>
        BadlyScaled = 2,

        /// <summary>Monomials tʲ of t ∈ [0, 1] (p ≤ 8): the classic ill-conditioned design of MATH.md §3.4.</summary>
        Polynomial = 3,
    }

    /// <summary>
    /// One generated problem for the square-root estimator's property tests: the shape (p, n, β, penalties, intercept, standardization,
    /// design, zero-weight fraction, noise, prior) is drawn by FsCheck and shrinks; the data are a deterministic function of the shape and
    /// <see cref="Seed"/> (System.Random with a fixed seed), so a failing case replays from its printed description alone.
    /// </summary>
    public sealed class SquareRootCase
    {
        private double[][]? x;
        private double[]? y;
        private double[]? w;
        private double[]? prior;

        public SquareRootCase(int seed, int p, int n, double beta, double penalty, double decayingPriorWeight, bool intercept, bool standardize,
            SquareRootDesign design, double zeroFraction, double noise, bool hasPrior)
        {
            Seed = seed;
            P = p;
            N = n;
            Beta = beta;
            Penalty = penalty;
            DecayingPriorWeight = decayingPriorWeight;
            Intercept = intercept;
            Standardize = standardize;
            Design = design;
            ZeroFraction = zeroFraction;
            Noise = noise;
            HasPrior = hasPrior;
        }

        public int Seed { get; }

        public int P { get; }

        public int N { get; }

        public double Beta { get; }

        public double Penalty { get; }

        public double DecayingPriorWeight { get; }

        public bool Intercept { get; }

        public bool Standardize { get; }

        public SquareRootDesign Design { get; }

        public double ZeroFraction { get; }

        public double Noise { get; }

        public bool HasPrior { get; }

        /// <summary>Rows of regressors (n × p).</summary>
        public double[][] X
        {
            get
            {
                Generate();
                return x!;
            }
        }

        public double[] Y
        {
            get
            {
                Generate();
                return y!;
            }
        }

        /// <summary>Sample weights in [0, 3], a fraction exactly 0; at least p + 2 positive.</summary>
        public double[] W
        {
            get
            {
                Generate();
                return w!;
            }
        }

        /// <summary>θ₀, or null when <see cref="HasPrior"/> is false.</summary>
        public double[]? Prior
        {
            get
            {
                Generate();
                return prior;
            }
        }

        /// <summary>q = fl(√β): the forgetting the square-root state applies per step (MATH.md §3.2).</summary>
        public double Q => Math.Sqrt(Beta);

        public SquareRootSettings Settings(double? penalty = null, double? decayingPriorWeight = null) => new()
        {
            ForgettingFactor = Beta,
            Penalty = penalty ?? Penalty,
            DecayingPriorWeight = decayingPriorWeight ?? DecayingPriorWeight,
            FitIntercept = Intercept,
            Standardize = Standardize,
            Prior = Prior,
        };

        public SquareRootCase With(int? p = null, int? n = null, double? beta = null, double? penalty = null, double? decayingPriorWeight = null,
            bool? intercept = null, bool? standardize = null, SquareRootDesign? design = null, double? zeroFraction = null, double? noise = null, bool? hasPrior = null) =>
            new(Seed, p ?? P, n ?? N, beta ?? Beta, penalty ?? Penalty, decayingPriorWeight ?? DecayingPriorWeight, intercept ?? Intercept,
                standardize ?? Standardize, design ?? Design, zeroFraction ?? ZeroFraction, noise ?? Noise, hasPrior ?? HasPrior);

        public override string ToString() => string.Format(CultureInfo.InvariantCulture,
            "SquareRootCase(seed={0}, p={1}, n={2}, beta={3:R}, penalty={4:R}, decayingPriorWeight={5:R}, intercept={6}, standardize={7}, design={8}, zeroFraction={9:R}, noise={10:R}, prior={11})",
            Seed, P, N, Beta, Penalty, DecayingPriorWeight, Intercept, Standardize, Design, ZeroFraction, Noise, HasPrior);

        private void Generate()
        {
            if (x is not null)
            {
                return;
            }

            var rng = new Random(Seed);
            double Gauss()
            {
                double u1 = 1.0 - rng.NextDouble();
                double u2 = rng.NextDouble();
                return Math.Sqrt(-2.0 * Math.Log(u1)) * Math.Cos(2.0 * Math.PI * u2);
            }

            int p = P;
            int n = N;
            var mean = new double[p];
            var spread = new double[p];
            for (int j = 0; j < p; j++)
            {
                double s = Design == SquareRootDesign.BadlyScaled ? Math.Pow(10.0, -2.0 + (4.0 * rng.NextDouble())) : 0.5 + (1.5 * rng.NextDouble());
                spread[j] = s;
                mean[j] = (Intercept ? -2.0 + (4.0 * rng.NextDouble()) : 0.0) * s;
            }

            double delta = Math.Pow(10.0, -4.0 + (3.0 * rng.NextDouble()));
            var rows = new double[n][];
            for (int i = 0; i < n; i++)
            {
                var row = new double[p];
                double common = Gauss();
                double t = rng.NextDouble();
                for (int j = 0; j < p; j++)
                {
                    row[j] = Design switch
                    {
                        SquareRootDesign.Collinear => mean[j] + common + (delta * Gauss()),
                        SquareRootDesign.Polynomial => Math.Pow(t, j + 1),
                        _ => mean[j] + (spread[j] * Gauss()),
                    };
                }

                rows[i] = row;
            }

            var thetaStar = new double[p];
            for (int j = 0; j < p; j++)
            {
                thetaStar[j] = Gauss() / (Design == SquareRootDesign.BadlyScaled ? spread[j] : 1.0);
            }

            double b0 = Intercept ? 3.0 * Gauss() : 0.0;
            var ys = new double[n];
            for (int i = 0; i < n; i++)
            {
                double s = b0;
                for (int j = 0; j < p; j++)
                {
                    s += rows[i][j] * thetaStar[j];
                }

                ys[i] = s + (Noise * Gauss());
            }

            var ws = new double[n];
            int positive = 0;
            for (int i = 0; i < n; i++)
            {
                ws[i] = rng.NextDouble() < ZeroFraction ? 0.0 : 0.05 + (2.95 * rng.NextDouble());
                positive += ws[i] > 0.0 ? 1 : 0;
            }

            // Enough samples of positive weight for every unpenalized problem, from the end backwards (deterministic).
            for (int i = n - 1; i >= 0 && positive < P + 2; i--)
            {
                if (ws[i] == 0.0)
                {
                    ws[i] = 1.0;
                    positive++;
                }
            }

            double[]? pr = null;
            if (HasPrior)
            {
                pr = new double[p];
                for (int j = 0; j < p; j++)
                {
                    pr[j] = thetaStar[j] + (Gauss() / (Design == SquareRootDesign.BadlyScaled ? spread[j] : 1.0));
                }
            }

            x = rows;
            y = ys;
            w = ws;
            prior = pr;
        }
    }

    /// <summary>Seeded, shrinkable FsCheck generators of <see cref="SquareRootCase"/> and the run configuration of the square-root properties.</summary>
    public static class SquareRootGenerators
    {
        /// <summary>Cases per property: 500, or 5000 when the environment variable ONLINERIDGE_EXTENDED is 1.</summary>
        public static int CaseCount => Environment.GetEnvironmentVariable("ONLINERIDGE_EXTENDED") == "1" ? 5000 : 500;

        private static Gen<double> Unit => Gen.Choose(0, 1_000_000).Select(k => k / 1_000_000.0);

        /// <summary>
        /// p in [minP, maxP] (default 1..20, every SIMD tail), n in [2p + 6, 2p + 6 + extraN], β = 1 (one case in three) or U[0.9, 1),
        /// penalty 0 (one in four) or 10^U(−6, 3), decaying prior weight 10^U(−2, 2) when <paramref name="decaying"/> (else 0), intercept and
        /// standardization on or off, all four designs, zero-weight fraction in [0, 0.3], noise 0, 10⁻⁶, 0.1 or 1, prior present or not.
        /// </summary>
        public static Gen<SquareRootCase> Cases(int minP = 1, int maxP = 20, int extraN = 150, bool decaying = false, bool forgetting = true) =>
            from seed in Gen.Choose(0, int.MaxValue)
            from p in Gen.Choose(minP, maxP)
            from extra in Gen.Choose(0, extraN)
            from betaKind in Gen.Choose(0, 2)
            from betaU in Unit
            from penaltyKind in Gen.Choose(0, 3)
            from penaltyU in Unit
            from decayU in Unit
            from intercept in Gen.Elements(true, false)
            from standardize in Gen.Elements(true, false)
            from design in Gen.Frequency((5, Gen.Constant(SquareRootDesign.Well)), (2, Gen.Constant(SquareRootDesign.Collinear)),
                (2, Gen.Constant(SquareRootDesign.BadlyScaled)), (1, Gen.Constant(SquareRootDesign.Polynomial)))
            from zeroU in Unit
            from noise in Gen.Elements(0.0, 1e-6, 0.1, 1.0)
            from hasPrior in Gen.Elements(true, false)
            let pp = design == SquareRootDesign.Polynomial ? Math.Min(p, 8) : p
            select new SquareRootCase(
                seed,
                pp,
                (2 * pp) + 6 + extra,
                forgetting && betaKind > 0 ? 0.9 + (0.1 * betaU * 0.999999) : 1.0,
                penaltyKind == 0 ? 0.0 : Math.Pow(10.0, -6.0 + (9.0 * penaltyU)),
                decaying ? Math.Pow(10.0, -2.0 + (4.0 * decayU)) : 0.0,
                intercept,
                standardize,
                design,
                0.3 * zeroU,
                noise,
                hasPrior);

        /// <summary>Shrinks toward smaller, simpler problems: fewer samples and regressors, no forgetting, no penalty, plain options.</summary>
        public static IEnumerable<SquareRootCase> Shrink(SquareRootCase c)
        {
            int minN = (2 * c.P) + 6;
            if (c.N > minN)
            {
                yield return c.With(n: minN + ((c.N - minN) / 2));
            }

            if (c.P > 1)
            {
                yield return c.With(p: c.P - 1, n: c.N - 2);
            }

            if (c.Beta != 1.0)
            {
                yield return c.With(beta: 1.0);
            }

            if (c.Penalty != 0.0 && c.Penalty != 1.0)
            {
                yield return c.With(penalty: 1.0);
            }

            if (c.DecayingPriorWeight != 0.0 && c.DecayingPriorWeight != 1.0)
            {
                yield return c.With(decayingPriorWeight: 1.0);
            }

            if (c.Design != SquareRootDesign.Well)
            {
                yield return c.With(design: SquareRootDesign.Well);
            }

            if (c.ZeroFraction != 0.0)
            {
                yield return c.With(zeroFraction: 0.0);
            }

            if (c.Intercept)
            {
                yield return c.With(intercept: false);
            }

            if (c.Standardize)
            {
                yield return c.With(standardize: false);
            }

            if (c.HasPrior)
            {
                yield return c.With(hasPrior: false);
            }
        }

        public static Arbitrary<SquareRootCase> Arbitrary(int minP = 1, int maxP = 20, int extraN = 150, bool decaying = false, bool forgetting = true) =>
            Arb.From(Cases(minP, maxP, extraN, decaying, forgetting), Shrink);

        /// <summary>
        /// Runs <paramref name="body"/> (which throws on failure) on <see cref="CaseCount"/> cases (or <paramref name="cases"/>) from a fixed
        /// seed (a property's own <paramref name="seed"/>), throwing with the shrunk counterexample on failure.
        /// </summary>
        public static void Check(Arbitrary<SquareRootCase> arbitrary, ulong seed, Action<SquareRootCase> body, int? cases = null)
        {
            Config config = Config.QuickThrowOnFailure
                .WithMaxTest(cases ?? CaseCount)
                .WithReplay(new Replay(new Rnd(seed, 0x9E3779B97F4A7C15UL), null));
            Prop.ForAll(arbitrary, body).Check(config);
        }

        /// <summary>Shuffles indices 0..n−1 with a seeded Fisher–Yates permutation.</summary>
        public static int[] Permutation(int n, int seed)
        {
            var rng = new Random(seed);
            int[] perm = Enumerable.Range(0, n).ToArray();
            for (int i = n - 1; i > 0; i--)
            {
                int k = rng.Next(i + 1);
                (perm[i], perm[k]) = (perm[k], perm[i]);
            }

            return perm;
        }
    }
}
