using System;
using System.Collections.Generic;
using System.Linq;

namespace OnlineRidge.Cli
{
    /// <summary>What a recursive form needs from the command line.</summary>
    internal sealed record RecursiveRequest(int ParameterCount, double ForgettingFactor, double Penalty, bool Intercept, bool Standardize);

    /// <summary>
    /// The estimators the tool offers. "batch" is solved once at the end; every other name maps to a recursive form created through
    /// <see cref="IRecursiveEstimator"/>, so adding a form to the tool is one entry here.
    /// </summary>
    internal static class EstimatorFactory
    {
        public const string Batch = "batch";

        private static readonly Dictionary<string, Func<RecursiveRequest, IRecursiveEstimator>> Recursive = new(StringComparer.Ordinal)
        {
        };

        /// <summary>All names, batch first.</summary>
        public static IReadOnlyCollection<string> Names => new[] { Batch }.Concat(Recursive.Keys).ToArray();

        public static bool IsKnown(string name) => name == Batch || Recursive.ContainsKey(name);

        public static IRecursiveEstimator Create(string name, RecursiveRequest request) =>
            Recursive.TryGetValue(name, out var make) ? make(request) : throw new UsageException($"--estimator {name} is unknown; use one of: {string.Join(", ", Names)}.");
    }
}
