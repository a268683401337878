using System;
using System.Collections.Generic;
using System.Linq;

namespace OnlineRidge.Cli
{
    /// <summary>What a recursive form needs from the command line.</summary>
    internal sealed record RecursiveRequest(int ParameterCount, double ForgettingFactor, double Penalty, bool Intercept, bool Standardize);

    /// <summary>
    /// A recursive estimator as the tool drives it: the common <see cref="IRecursiveEstimator"/> shape, plus a probe that tells whether a
    /// solution can be read now (without throwing; early on there are fewer samples than parameters) and the form's own final diagnostics.
    /// </summary>
    internal sealed class RecursiveForm
    {
        public RecursiveForm(IRecursiveEstimator estimator, Func<bool> trySolve, Func<IReadOnlyList<KeyValuePair<string, double>>> diagnostics)
        {
            Estimator = estimator;
            TrySolve = trySolve;
            Diagnostics = diagnostics;
        }

        public IRecursiveEstimator Estimator { get; }

        public Func<bool> TrySolve { get; }

        public Func<IReadOnlyList<KeyValuePair<string, double>>> Diagnostics { get; }

        /// <summary>Collinearity diagnostics of the (forgetting-weighted) design seen so far, from the state; null when the form cannot.</summary>
        public Func<CollinearityDiagnostics>? Collinearity { get; init; }

        /// <summary>The GCV choice of a constant penalty from the state; null when the form cannot.</summary>
        public Func<PenaltyChoice>? ChooseByGcv { get; init; }

        /// <summary>Solves for a given penalty into the coefficient buffer and returns the intercept; set together with <see cref="ChooseByGcv"/>.</summary>
        public Func<double, double[], double>? SolveWithPenalty { get; init; }

        /// <summary>Whether the penalty acts on standardized coefficients in this form (false where the form has no standardization).</summary>
        public bool Standardizes { get; init; } = true;
    }

    /// <summary>
    /// Gives an estimator without an intercept one: appends the constant regressor 1 to every x (into a buffer allocated once) and reports
    /// its coefficient as the intercept. The form's prior then also covers the intercept.
    /// </summary>
    internal sealed class ConstantColumn : IRecursiveEstimator
    {
        private readonly IRecursiveEstimator inner;
        private readonly double[] x;
        private readonly double[] theta;

        public ConstantColumn(Func<int, IRecursiveEstimator> create, int parameterCount)
        {
            inner = create(parameterCount + 1);
            x = new double[parameterCount + 1];
            theta = new double[parameterCount + 1];
            x[parameterCount] = 1.0;
        }

        public int ParameterCount => x.Length - 1;

        public long SampleCount => inner.SampleCount;

        public long SkippedSampleCount => inner.SkippedSampleCount;

        public double Intercept
        {
            get
            {
                inner.CopyParametersTo(theta);
                return theta[ParameterCount];
            }
        }

        public void Update(ReadOnlySpan<double> regressors, double y) => Update(regressors, y, 1.0);

        public void Update(ReadOnlySpan<double> regressors, double y, double weight) => inner.Update(Extend(regressors), y, weight);

        public double Predict(ReadOnlySpan<double> regressors) => inner.Predict(Extend(regressors));

        public void CopyParametersTo(Span<double> destination)
        {
            inner.CopyParametersTo(theta);
            theta.AsSpan(0, ParameterCount).CopyTo(destination);
        }

        private double[] Extend(ReadOnlySpan<double> regressors)
        {
            if (regressors.Length != ParameterCount)
            {
                throw new ArgumentException($"x has length {regressors.Length}; expected {ParameterCount}.", nameof(regressors));
            }

            regressors.CopyTo(x);
            return x;
        }
    }

    /// <summary>
    /// The estimators the tool offers. "batch" is solved once at the end; every other name maps to a recursive form created through
    /// <see cref="IRecursiveEstimator"/>, so adding a form to the tool is one entry here.
    /// </summary>
    internal static class EstimatorFactory
    {
        public const string Batch = "batch";

        private static readonly Dictionary<string, Func<RecursiveRequest, RecursiveForm>> Recursive = new(StringComparer.Ordinal)
        {
            ["square-root"] = r =>
            {
                var e = new SquareRootEstimator(r.ParameterCount, new SquareRootSettings
                {
                    ForgettingFactor = r.ForgettingFactor,
                    Penalty = r.Penalty,
                    FitIntercept = r.Intercept,
                    Standardize = r.Standardize,
                });
                return new RecursiveForm(e, () => e.TrySolve(out _), () => new[]
                {
                    new KeyValuePair<string, double>("conditionEstimate", e.ConditionEstimate),
                    new KeyValuePair<string, double>("residualSumOfSquares", e.ResidualSumOfSquares),
                    new KeyValuePair<string, double>("weightSum", e.WeightSum),
                    new KeyValuePair<string, double>("discountedCount", e.DiscountedCount),
                    new KeyValuePair<string, double>("effectiveForgettingFactor", e.EffectiveForgettingFactor),
                })
                {
                    Collinearity = r.Intercept ? () => CollinearityDiagnostics.FromState(e) : null,
                    ChooseByGcv = () => RegularizationPath.FromState(e).ChooseByGeneralizedCrossValidation(),
                    SolveWithPenalty = (lambda, theta) => e.SolveWithPenalty(lambda, theta),
                };
            },
            ["information"] = r =>
            {
                var settings = new RidgeSettings
                {
                    ForgettingFactor = r.ForgettingFactor,
                    Penalty = r.Penalty,
                    FitIntercept = r.Intercept,
                    Standardize = r.Standardize,
                };
                var e = new InformationFormEstimator(r.ParameterCount, settings, PenaltyRegime.Constant);
                var probe = new double[r.ParameterCount];
                return new RecursiveForm(e, () => e.TrySolve(r.Penalty, PenaltyRegime.Constant, probe, out _, out _), () => new[]
                {
                    new KeyValuePair<string, double>("weightSum", e.WeightSum),
                    new KeyValuePair<string, double>("discountedCount", e.DiscountedCount),
                });
            },
            ["covariance"] = r =>
            {
                var settings = new CovarianceFormSettings
                {
                    ForgettingFactor = r.ForgettingFactor,
                    PriorWeight = r.Penalty > 0 ? r.Penalty : CovarianceFormSettings.DefaultPriorWeight,
                };
                CovarianceFormEstimator? inner = null;
                IRecursiveEstimator Make(int p) => inner = new CovarianceFormEstimator(p, settings);
                IRecursiveEstimator e = r.Intercept ? new ConstantColumn(Make, r.ParameterCount) : Make(r.ParameterCount);
                return new RecursiveForm(e, () => true, () => new[]
                {
                    new KeyValuePair<string, double>("priorWeight", settings.PriorWeight),
                    new KeyValuePair<string, double>("minimumCost", inner!.MinimumCost),
                })
                {
                    Standardizes = false,
                };
            },
        };

        /// <summary>All names, batch first.</summary>
        public static IReadOnlyCollection<string> Names => new[] { Batch }.Concat(Recursive.Keys).ToArray();

        public static bool IsKnown(string name) => name == Batch || Recursive.ContainsKey(name);

        public static RecursiveForm Create(string name, RecursiveRequest request) =>
            Recursive.TryGetValue(name, out var make) ? make(request) : throw new UsageException($"--estimator {name} is unknown; use one of: {string.Join(", ", Names)}.");
    }
}
