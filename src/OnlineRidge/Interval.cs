using System;

namespace OnlineRidge
{
    /// <summary>
    /// A two-sided interval estimate: point estimate, standard error and the bounds at a confidence level, from Student's t with the
    /// residual degrees of freedom (MATH.md §6.5). Immutable value; thread-safe.
    /// </summary>
    public readonly struct Interval : IEquatable<Interval>
    {
        /// <summary>Creates an interval.</summary>
        /// <param name="estimate">Point estimate.</param>
        /// <param name="standardError">Standard error of the estimate (or of the prediction error for a prediction interval).</param>
        /// <param name="lower">Lower bound.</param>
        /// <param name="upper">Upper bound.</param>
        /// <param name="level">Confidence level in (0, 1).</param>
        public Interval(double estimate, double standardError, double lower, double upper, double level)
        {
            Estimate = estimate;
            StandardError = standardError;
            Lower = lower;
            Upper = upper;
            Level = level;
        }

        /// <summary>Point estimate.</summary>
        public double Estimate { get; }

        /// <summary>Standard error used for the bounds.</summary>
        public double StandardError { get; }

        /// <summary>Lower bound.</summary>
        public double Lower { get; }

        /// <summary>Upper bound.</summary>
        public double Upper { get; }

        /// <summary>Confidence level, e.g. 0.95.</summary>
        public double Level { get; }

        /// <summary>True when <paramref name="value"/> lies within [Lower, Upper].</summary>
        /// <param name="value">The value.</param>
        /// <returns>Whether it is covered.</returns>
        public bool Contains(double value) => value >= Lower && value <= Upper;

        /// <inheritdoc/>
        public bool Equals(Interval other) => Estimate.Equals(other.Estimate) && StandardError.Equals(other.StandardError) && Lower.Equals(other.Lower) && Upper.Equals(other.Upper) && Level.Equals(other.Level);

        /// <inheritdoc/>
        public override bool Equals(object? obj) => obj is Interval other && Equals(other);

        /// <inheritdoc/>
        public override int GetHashCode() => Estimate.GetHashCode() ^ (StandardError.GetHashCode() * 31) ^ (Lower.GetHashCode() * 17) ^ (Upper.GetHashCode() * 13);

        /// <inheritdoc/>
        public override string ToString() => FormattableString.Invariant($"{Estimate:G6} ± {StandardError:G3} [{Lower:G6}, {Upper:G6}] at {Level:P0}");

        /// <summary>Value equality.</summary>
        /// <param name="left">First.</param>
        /// <param name="right">Second.</param>
        /// <returns>True when equal.</returns>
        public static bool operator ==(Interval left, Interval right) => left.Equals(right);

        /// <summary>Value inequality.</summary>
        /// <param name="left">First.</param>
        /// <param name="right">Second.</param>
        /// <returns>True when different.</returns>
        public static bool operator !=(Interval left, Interval right) => !left.Equals(right);
    }
}
