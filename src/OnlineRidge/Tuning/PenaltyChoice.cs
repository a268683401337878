using System;
using System.Collections.Generic;

namespace OnlineRidge
{
    /// <summary>Which criterion chose a penalty.</summary>
    public enum PenaltyCriterion
    {
        /// <summary>Generalized cross-validation, N·RSS/(N − df)² (Golub, Heath and Wahba 1979; MATH.md §7.1).</summary>
        GeneralizedCrossValidation = 0,

        /// <summary>Exact leave-one-out mean squared prediction error from the hat-matrix diagonal, PRESS/N (Allen 1974; MATH.md §7.2).</summary>
        LeaveOneOut = 1,

        /// <summary>Weighted mean squared error on held-out folds (refits per fold).</summary>
        KFold = 2,
    }

    /// <summary>
    /// The penalty a criterion chose over a grid, with the whole criterion curve. Immutable; thread-safe.
    /// </summary>
    /// <remarks>
    /// The minimum is taken over the grid only; on ties the larger penalty wins (the simpler model). When the minimum lies at either end
    /// of the grid (<see cref="OnGridEdge"/>), the true minimizer may lie outside it: widen the grid before trusting the choice.
    /// </remarks>
    public sealed class PenaltyChoice
    {
        private readonly double[] penalties;
        private readonly double[] values;

        internal PenaltyChoice(PenaltyCriterion criterion, double[] penalties, double[] values)
        {
            Criterion = criterion;
            this.penalties = penalties;
            this.values = values;
            int best = -1;
            for (int k = 0; k < values.Length; k++)
            {
                // Ascending grid: "<=" keeps the larger penalty on ties. NaN never wins.
                if (!double.IsNaN(values[k]) && (best < 0 || values[k] <= values[best]))
                {
                    best = k;
                }
            }

            Index = best;
            Penalty = best >= 0 ? penalties[best] : double.NaN;
            Value = best >= 0 ? values[best] : double.NaN;
            OnGridEdge = best == 0 || best == penalties.Length - 1;
        }

        /// <summary>The criterion that was minimized.</summary>
        public PenaltyCriterion Criterion { get; }

        /// <summary>The chosen penalty λ (NaN if every criterion value was NaN).</summary>
        public double Penalty { get; }

        /// <summary>Index of the chosen penalty in <see cref="Penalties"/> (-1 if none).</summary>
        public int Index { get; }

        /// <summary>The criterion's value at the chosen penalty.</summary>
        public double Value { get; }

        /// <summary>True when the minimum lies at the first or last grid point.</summary>
        public bool OnGridEdge { get; }

        /// <summary>The grid, ascending.</summary>
        public IReadOnlyList<double> Penalties => penalties;

        /// <summary>The criterion at every grid point (+∞ where undefined, e.g. df ≥ N for GCV or a leverage of 1 for leave-one-out).</summary>
        public IReadOnlyList<double> Values => values;
    }
}
