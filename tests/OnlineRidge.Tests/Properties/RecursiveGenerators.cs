using System;
using System.Collections.Generic;
using System.Linq;
using System.Runtime.CompilerServices;
using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;

namespace OnlineRidge.Tests.Properties
{
    /// <summary>How the regressors of a generated problem are drawn.</summary>
    public enum DesignKind
    {
        /// <summary>Independent standard normal columns.</summary>
        WellConditioned,

        /// <summary>Columns sharing one latent factor (correlation up to 1 − 10⁻⁶): ill-conditioned Gram matrices.</summary>
        Correlated,

        /// <summary>Independent columns with scales 10^U(−3, 3): badly scaled.</summary>
        BadlyScaled,

        /// <summary>Columns with means of order 10² to 10⁴ and unit spread: a large mean that centering must remove.</summary>
        Offset,

        /// <summary>Well-conditioned columns, one of them exactly constant (a constant regressor; excluded by standardization with an intercept).</summary>
        ConstantColumn,
    }

    /// <summary>
    /// A recipe for one recursive-estimation problem: sizes, forgetting, penalty, prior scale, weights and design, plus the seed of the
    /// deterministic data it expands to (<see cref="Materialize"/>). FsCheck generates and shrinks recipes (smaller n and p, β = 1, unit
    /// weights, a well-conditioned design); the data of a recipe are a pure function of it, so every failure replays exactly.
    /// <see cref="Flag"/> is a free binary choice for the property (the covariance update form, the penalty regime).
    /// </summary>
    public sealed record RecursiveCase(
        int P,
        int N,
        int Seed,
        double Beta,
        double Penalty,
        double PriorWeight,
        double PriorScale,
        bool UnitWeights,
        double ZeroWeightFraction,
        DesignKind Design,
        double Noise,
        bool Flag)
    {
        public RecursiveData Materialize()
        {
            var rng = new Random(Seed);
            double Normal()
            {
                double u1 = 1.0 - rng.NextDouble();
                double u2 = rng.NextDouble();
                return Math.Sqrt(-2.0 * Math.Log(u1)) * Math.Cos(2.0 * Math.PI * u2);
            }

            var scales = new double[P];
            var offsets = new double[P];
            for (int j = 0; j < P; j++)
            {
                scales[j] = Design == DesignKind.BadlyScaled ? Math.Pow(10.0, (6.0 * rng.NextDouble()) - 3.0) : 1.0;
                offsets[j] = Design == DesignKind.Offset ? Math.Pow(10.0, 2.0 + (2.0 * rng.NextDouble())) * (rng.NextDouble() < 0.5 ? -1 : 1) : 0.0;
            }

            double correlation = Design == DesignKind.Correlated ? 1.0 - Math.Pow(10.0, -1.0 - (5.0 * rng.NextDouble())) : 0.0;
            int constantColumn = Design == DesignKind.ConstantColumn ? rng.Next(P) : -1;
            double constantValue = Math.Round(Normal() * 4.0, 2);
            var truth = Enumerable.Range(0, P).Select(_ => Normal()).ToArray();
            double trueIntercept = Normal();
            var x = new double[N][];
            var y = new double[N];
            var w = new double[N];
            for (int i = 0; i < N; i++)
            {
                double latent = Normal();
                var row = new double[P];
                for (int j = 0; j < P; j++)
                {
                    double z = Normal();
                    if (Design == DesignKind.Correlated)
                    {
                        z = (Math.Sqrt(correlation) * latent) + (Math.Sqrt(1.0 - correlation) * z);
                    }

                    row[j] = j == constantColumn ? constantValue : offsets[j] + (scales[j] * z);
                }

                x[i] = row;
                double signal = trueIntercept;
                for (int j = 0; j < P; j++)
                {
                    signal += truth[j] * row[j] / scales[j];
                }

                y[i] = signal + (Noise * Normal());
                w[i] = UnitWeights ? 1.0 : (rng.NextDouble() < ZeroWeightFraction ? 0.0 : 3.0 * rng.NextDouble());
            }

            var prior = Enumerable.Range(0, P).Select(_ => PriorScale * Normal()).ToArray();
            return new RecursiveData(x, y, w, prior);
        }
    }

    /// <summary>The expanded data of a <see cref="RecursiveCase"/>: rows xᵢ, outputs yᵢ, weights wᵢ (some zero unless unit) and a prior θ₀.</summary>
    public sealed record RecursiveData(double[][] X, double[] Y, double[] W, double[] Prior)
    {
        public int N => Y.Length;

        /// <summary>The first <paramref name="count"/> rows as one row-major array for <see cref="MatrixView"/>.</summary>
        public double[] RowMajor(int count) => X.Take(count).SelectMany(r => r).ToArray();
    }

    /// <summary>
    /// Seeded, shrinkable FsCheck generators for the recursive-estimator properties: p in 1..20 (every SIMD tail), n up to a bound,
    /// β in {1, 0.99, 0.95, 0.9} or uniform in [0.9, 1], weights unit or uniform in [0, 3] with up to 30 % zeros, penalties over
    /// 10⁻⁶..10³ (and 0), prior weights 10⁻³..10 with prior values within a few decades of the data scale (MATH.md §10), and the
    /// designs of <see cref="DesignKind"/>.
    /// </summary>
    public static class RecursiveGenerators
    {
        /// <summary>Cases per property: 500, or 5000 when the environment variable ONLINERIDGE_EXTENDED is 1.</summary>
        public static int CaseCount => Environment.GetEnvironmentVariable("ONLINERIDGE_EXTENDED") == "1" ? 5000 : 500;

        public static Gen<RecursiveCase> Cases(int minN, int maxN, bool allowZeroPenalty = true, IReadOnlyList<DesignKind>? designs = null)
        {
            designs ??= new[] { DesignKind.WellConditioned, DesignKind.Correlated, DesignKind.BadlyScaled, DesignKind.Offset, DesignKind.ConstantColumn };
            Gen<double> beta = Gen.Frequency(
                (3, Gen.Constant(1.0)),
                (1, Gen.Elements(0.99, 0.95, 0.9)),
                (2, Gen.Choose(0, 10000).Select(k => 0.9 + (0.1 * k / 10000.0))));
            Gen<double> penalty = Gen.Frequency(
                (allowZeroPenalty ? 1 : 0, Gen.Constant(0.0)),
                (6, Gen.Choose(-600, 300).Select(k => Math.Pow(10.0, k / 100.0))));
            Gen<double> priorWeight = Gen.Choose(-300, 100).Select(k => Math.Pow(10.0, k / 100.0));
            Gen<double> priorScale = Gen.Elements(0.0, 0.1, 1.0, 10.0);
            Gen<double> noise = Gen.Elements(0.0, 1e-3, 0.1, 1.0);
            return
                from p in Gen.Choose(1, 20)
                from n in Gen.Choose(minN, maxN)
                from seed in Gen.Choose(0, int.MaxValue - 1)
                from b in beta
                from lambda in penalty
                from delta in priorWeight
                from scale in priorScale
                from unit in Gen.Frequency((1, Gen.Constant(true)), (2, Gen.Constant(false)))
                from zeros in Gen.Elements(0.0, 0.1, 0.3)
                from design in Gen.Elements(designs.ToArray())
                from e in noise
                from flag in Gen.Elements(false, true)
                select new RecursiveCase(p, n, seed, b, lambda, delta, scale, unit, zeros, design, e, flag);
        }

        /// <summary>Simpler recipes first: fewer samples, fewer regressors, no forgetting, unit weights, a well-conditioned design.</summary>
        public static IEnumerable<RecursiveCase> Shrink(RecursiveCase c, int minN)
        {
            if (c.N > minN)
            {
                yield return c with { N = Math.Max(minN, c.N / 2) };
                yield return c with { N = c.N - 1 };
            }

            if (c.P > 1)
            {
                yield return c with { P = c.P / 2 };
                yield return c with { P = c.P - 1 };
            }

            if (c.Beta != 1.0)
            {
                yield return c with { Beta = 1.0 };
            }

            if (!c.UnitWeights)
            {
                yield return c with { UnitWeights = true };
            }

            if (c.Design != DesignKind.WellConditioned)
            {
                yield return c with { Design = DesignKind.WellConditioned };
            }

            if (c.Noise != 0.0)
            {
                yield return c with { Noise = 0.0 };
            }
        }

        public static Arbitrary<RecursiveCase> Arbitrary(int minN, int maxN, bool allowZeroPenalty = true, IReadOnlyList<DesignKind>? designs = null) =>
            Arb.From(Cases(minN, maxN, allowZeroPenalty, designs), c => Shrink(c, minN));

        /// <summary>Effective weights aᵢ = β^(n−1−i)·wᵢ of the first <paramref name="n"/> samples (newest has age 0), by Math.Pow per row.</summary>
        public static double[] EffectiveWeights(double[] w, int n, double beta) =>
            Enumerable.Range(0, n).Select(i => w[i] * (beta == 1.0 ? 1.0 : Math.Pow(beta, n - 1 - i))).ToArray();
    }

    /// <summary>
    /// A seeded FsCheck property with <see cref="RecursiveGenerators.CaseCount"/> cases (500 by default, 5000 under ONLINERIDGE_EXTENDED=1).
    /// Give each property its own Replay seed.
    /// </summary>
    public sealed class RecursivePropertyAttribute : PropertyAttribute
    {
        public RecursivePropertyAttribute([CallerFilePath] string? sourceFilePath = null, [CallerLineNumber] int sourceLineNumber = -1)
        {
            // FsCheck's PropertyAttribute has no source-information constructor; the parameters satisfy xUnit3003 and are otherwise unused.
            _ = sourceFilePath;
            _ = sourceLineNumber;
            MaxTest = RecursiveGenerators.CaseCount;
            QuietOnSuccess = true;
        }
    }
}

namespace OnlineRidge.Tests.Properties
{
    using MathNet.Numerics.LinearAlgebra;

    /// <summary>
    /// Reference quantities for the recursive properties, computed from the data with MathNet.Numerics (general-purpose reference) and
    /// LINQ, never from the code under test.
    /// </summary>
    public static class RecursiveReference
    {
        /// <summary>cond₂ of a symmetric matrix, λ_max/λ_min from MathNet's symmetric eigensolver (∞ when λ_min ≤ 0).</summary>
        public static double Condition(Matrix<double> symmetric)
        {
            var ev = symmetric.Evd(Symmetricity.Symmetric).EigenValues.Select(c => c.Real).ToArray();
            double max = ev.Max();
            double min = ev.Min();
            return min > 0 ? max / min : double.PositiveInfinity;
        }

        /// <summary>λ_min and λ_max of a symmetric matrix (MathNet symmetric eigensolver).</summary>
        public static (double Min, double Max) Extremes(Matrix<double> symmetric)
        {
            var ev = symmetric.Evd(Symmetricity.Symmetric).EigenValues.Select(c => c.Real).ToArray();
            return (ev.Min(), ev.Max());
        }

        /// <summary>
        /// Tracks the regime-D information recursion H_k = β·H_{k−1} + w·x·xᵀ, H_0 = Γ₀ (MATH.md §1.1, §2.1) with MathNet, and the path
        /// condition of the covariance form: <see cref="Max"/> = max_{k' ≤ k} cond(H_{k'}) is κ_path of MATH.md §10; <see cref="Path"/> also
        /// includes the one-step information growth max λ_max(H_k)/λ_min(β·H_{k−1}). The growth term bounds 1 + w·xᵀP_{k−1}x, the factor by
        /// which the subtraction P − k·vᵀ cancels; cond(H_k) misses it when the data raise every direction at once (always so for p = 1, where
        /// cond(H_k) = 1 although P shrinks from 1/δ to 1/(δ + x²)). For p ≥ 2 with a δ·I prior the two agree at the first step.
        /// </summary>
        public sealed class PathCondition
        {
            private readonly double beta;
            private double previousMin;

            public PathCondition(Matrix<double> gamma0, double beta)
            {
                this.beta = beta;
                Hessian = gamma0.Clone();
                (double min, double max) = Extremes(Hessian);
                previousMin = min;
                Current = min > 0 ? max / min : double.PositiveInfinity;
                Max = Current;
                Path = Current;
            }

            public Matrix<double> Hessian { get; private set; }

            /// <summary>cond(H_k).</summary>
            public double Current { get; private set; }

            /// <summary>κ_path of MATH.md §10: max_{k' ≤ k} cond(H_{k'}).</summary>
            public double Max { get; private set; }

            /// <summary>max(κ_path, max_{k' ≤ k} λ_max(H_{k'})/λ_min(β·H_{k'−1})).</summary>
            public double Path { get; private set; }

            public void Add(double[] x, double w)
            {
                var u = Vector<double>.Build.DenseOfArray(x);
                Hessian = (beta * Hessian) + (w * u.OuterProduct(u));
                (double min, double max) = Extremes(Hessian);
                Current = min > 0 ? max / min : double.PositiveInfinity;
                double growth = previousMin > 0 ? max / (beta * previousMin) : double.PositiveInfinity;
                previousMin = min;
                Max = Math.Max(Max, Current);
                Path = Math.Max(Path, Math.Max(Current, growth));
            }
        }

        /// <summary>Neumaier-compensated sum (reference sums accurate to about one rounding).</summary>
        public static double Sum(IEnumerable<double> values)
        {
            double s = 0.0;
            double c = 0.0;
            foreach (double v in values)
            {
                double t = s + v;
                c += Math.Abs(s) >= Math.Abs(v) ? (s - t) + v : (v - t) + s;
                s = t;
            }

            return s + c;
        }
    }
}
