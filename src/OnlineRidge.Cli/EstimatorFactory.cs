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
        };

        /// <summary>All names, batch first.</summary>
        public static IReadOnlyCollection<string> Names => new[] { Batch }.Concat(Recursive.Keys).ToArray();

        public static bool IsKnown(string name) => name == Batch || Recursive.ContainsKey(name);

        public static RecursiveForm Create(string name, RecursiveRequest request) =>
            Recursive.TryGetValue(name, out var make) ? make(request) : throw new UsageException($"--estimator {name} is unknown; use one of: {string.Join(", ", Names)}.");
    }
}
