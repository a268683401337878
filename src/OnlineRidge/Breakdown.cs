using System;

namespace OnlineRidge
{
    /// <summary>What kind of data-dependent numerical breakdown stopped a computation.</summary>
    public enum BreakdownKind
    {
        /// <summary>No breakdown: the computation succeeded.</summary>
        None = 0,

        /// <summary>A Cholesky pivot was zero, negative or not finite: the matrix is not numerically positive definite.
        /// <see cref="BreakdownInfo.PivotIndex"/> and <see cref="BreakdownInfo.PivotValue"/> say where.</summary>
        NotPositiveDefinite = 1,

        /// <summary>The factorization succeeded but its condition estimate exceeds the limit below which the result carries the digits it claims.
        /// <see cref="BreakdownInfo.ConditionEstimate"/> holds the estimate.</summary>
        IllConditioned = 2,

        /// <summary>The design is numerically rank deficient and the chosen solver cannot give a unique solution (use a penalty or the SVD solver).</summary>
        RankDeficient = 3,

        /// <summary>An intermediate result was NaN or infinite (overflow), although every input was finite.</summary>
        NonFinite = 4,

        /// <summary>A recursive update found its covariance or information matrix no longer positive definite (for example a non-positive denominator).</summary>
        LostDefiniteness = 5,
    }

    /// <summary>Details of a numerical breakdown, returned by the <c>Try...</c> methods and carried by <see cref="RidgeBreakdownException"/>.</summary>
    /// <remarks>An immutable value; cost none; thread-safe.</remarks>
    public readonly struct BreakdownInfo : IEquatable<BreakdownInfo>
    {
        /// <summary>Creates a breakdown description.</summary>
        /// <param name="kind">What broke down.</param>
        /// <param name="pivotIndex">Zero-based index of the offending pivot or column, or -1 when not applicable.</param>
        /// <param name="pivotValue">Value of the offending pivot, or NaN when not applicable.</param>
        /// <param name="conditionEstimate">Condition estimate at breakdown, or NaN when not computed.</param>
        public BreakdownInfo(BreakdownKind kind, int pivotIndex, double pivotValue, double conditionEstimate)
        {
            Kind = kind;
            PivotIndex = pivotIndex;
            PivotValue = pivotValue;
            ConditionEstimate = conditionEstimate;
        }

        /// <summary>The success value: <see cref="BreakdownKind.None"/>.</summary>
        public static BreakdownInfo None
        {
            [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.AggressiveInlining)]
            get => new(BreakdownKind.None, -1, double.NaN, double.NaN);
        }

        /// <summary>What broke down.</summary>
        public BreakdownKind Kind { get; }

        /// <summary>Zero-based index of the offending pivot or column, or -1.</summary>
        public int PivotIndex { get; }

        /// <summary>Value of the offending pivot, or NaN.</summary>
        public double PivotValue { get; }

        /// <summary>Condition estimate (2-norm, of the matrix that was factored) at breakdown, or NaN.</summary>
        public double ConditionEstimate { get; }

        /// <summary>True when nothing broke down.</summary>
        public bool IsNone => Kind == BreakdownKind.None;

        /// <summary>A one-line human-readable description.</summary>
        /// <returns>The description, in invariant culture.</returns>
        public override string ToString() => Kind switch
        {
            BreakdownKind.None => "no breakdown",
            BreakdownKind.NotPositiveDefinite => FormattableString.Invariant($"matrix not numerically positive definite: pivot {PivotIndex} = {PivotValue:R}"),
            BreakdownKind.IllConditioned => FormattableString.Invariant($"condition estimate {ConditionEstimate:E3} (of the Gram matrix plus penalty) exceeds the solver's limit; use the QR or SVD solver, or a penalty"),
            BreakdownKind.RankDeficient => FormattableString.Invariant($"design numerically rank deficient at column {PivotIndex} (condition estimate {ConditionEstimate:E3}); use a penalty or the SVD solver"),
            BreakdownKind.NonFinite => FormattableString.Invariant($"non-finite intermediate result (overflow) at index {PivotIndex}"),
            BreakdownKind.LostDefiniteness => FormattableString.Invariant($"recursive update lost positive definiteness: value {PivotValue:R} at index {PivotIndex}"),
            _ => Kind.ToString(),
        };

        /// <inheritdoc/>
        public bool Equals(BreakdownInfo other) =>
            Kind == other.Kind && PivotIndex == other.PivotIndex && PivotValue.Equals(other.PivotValue) && ConditionEstimate.Equals(other.ConditionEstimate);

        /// <inheritdoc/>
        public override bool Equals(object? obj) => obj is BreakdownInfo other && Equals(other);

        /// <inheritdoc/>
        public override int GetHashCode() => ((int)Kind * 397) ^ PivotIndex ^ PivotValue.GetHashCode() ^ ConditionEstimate.GetHashCode();

        /// <summary>Value equality.</summary>
        /// <param name="left">First value.</param>
        /// <param name="right">Second value.</param>
        /// <returns>True when equal.</returns>
        public static bool operator ==(BreakdownInfo left, BreakdownInfo right) => left.Equals(right);

        /// <summary>Value inequality.</summary>
        /// <param name="left">First value.</param>
        /// <param name="right">Second value.</param>
        /// <returns>True when different.</returns>
        public static bool operator !=(BreakdownInfo left, BreakdownInfo right) => !left.Equals(right);
    }

    /// <summary>
    /// Thrown when a computation breaks down for reasons of the data, not of the call: a matrix that is not numerically positive definite,
    /// a condition estimate beyond the solver's limit, a rank-deficient design, or an overflow. The object that threw is unchanged.
    /// </summary>
    /// <remarks>Every method that throws this has a <c>Try...</c> twin that returns <see cref="BreakdownInfo"/> instead.</remarks>
    public sealed class RidgeBreakdownException : ArithmeticException
    {
        /// <summary>Creates the exception from its details.</summary>
        /// <param name="info">What broke down.</param>
        public RidgeBreakdownException(BreakdownInfo info)
            : base(info.ToString())
        {
            Info = info;
        }

        /// <summary>Creates the exception with a message (for serialization frameworks and tests).</summary>
        public RidgeBreakdownException()
            : base("numerical breakdown")
        {
            Info = BreakdownInfo.None;
        }

        /// <summary>Creates the exception with a message.</summary>
        /// <param name="message">The message.</param>
        public RidgeBreakdownException(string message)
            : base(message)
        {
            Info = BreakdownInfo.None;
        }

        /// <summary>Creates the exception with a message and an inner exception.</summary>
        /// <param name="message">The message.</param>
        /// <param name="innerException">The cause.</param>
        public RidgeBreakdownException(string message, Exception innerException)
            : base(message, innerException)
        {
            Info = BreakdownInfo.None;
        }

        /// <summary>The details: kind, pivot index and value, condition estimate.</summary>
        public BreakdownInfo Info { get; }
    }
}
