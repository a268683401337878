using System;
using OnlineRidge.Internal;

namespace OnlineRidge
{
    /// <summary>
    /// Expands k inputs z₁ … z_k into all monomials z₁^e₁·…·z_k^e_k of total degree 1 … d (powers and cross products), optionally preceded
    /// by the constant 1, as regressors of a model that is polynomial in the inputs and linear in the parameters.
    /// </summary>
    /// <remarks>
    /// <para>Order of the features: the constant first (if requested), then by degree g = 1, 2, …, d; within one degree the monomials
    /// z_{i₁}·z_{i₂}·…·z_{i_g} with i₁ ≤ i₂ ≤ … ≤ i_g in lexicographic order of (i₁, …, i_g). For k = 2, d = 2:
    /// [z₁, z₂, z₁², z₁z₂, z₂²]. <see cref="CopyExponentsTo"/> tells which monomial a feature is.</para>
    /// <para>Count: there are C(k + d, d) − 1 monomials of degree 1 … d (one more with the constant). They grow fast: k = 10, d = 3 gives 285.</para>
    /// <para>Conditioning: raw powers are badly conditioned — the columns z, z², z³ of a positive variable are nearly collinear, and the
    /// condition number of the design grows roughly geometrically with d (the Vandermonde effect). Standardization
    /// (<see cref="RidgeSettings.Standardize"/>, on by default) removes the differences of scale, and centering the inputs before the expansion
    /// (for example subtracting a typical operating point) removes most of the collinearity of the low powers; for degrees beyond about 4
    /// prefer an orthogonal basis (e.g. Legendre or Chebyshev polynomials of inputs scaled to [−1, 1]) or a penalty.</para>
    /// <para>Cost: one multiplication per feature of degree ≥ 2 (each monomial is its parent times one input), no allocation per call; the
    /// tables (two ints per feature) are allocated by the constructor. Accuracy: a monomial of degree g carries at most (g − 1) roundings,
    /// a relative error of (g − 1)·ε/2 or less; overflow to infinity is possible for large inputs and high degrees and is reported.</para>
    /// <para>Failures: invalid counts throw from the constructor; non-finite inputs, an overflowing monomial or a span of the wrong length
    /// throw <see cref="ArgumentException"/> (the destination may then hold partial results). Immutable after construction; thread-safe.</para>
    /// </remarks>
    public sealed class PolynomialFeatures
    {
        /// <summary>Largest supported number of features.</summary>
        public const int MaxFeatureCount = 1 << 20;

        private readonly int[] parent;   // feature index of the monomial of degree g − 1 this one extends; −1 for degree 1
        private readonly int[] variable; // input multiplied in
        private readonly int offset;     // 1 with the constant, else 0

        /// <summary>Creates the expansion.</summary>
        /// <param name="inputCount">k ≥ 1, the number of inputs.</param>
        /// <param name="degree">d ≥ 1, the largest total degree.</param>
        /// <param name="includeConstant">Whether feature 0 is the constant 1 (leave false when the fit has its own intercept, the default of <see cref="RidgeSettings.FitIntercept"/>).</param>
        /// <exception cref="ArgumentOutOfRangeException">k or d below 1, or more than <see cref="MaxFeatureCount"/> features.</exception>
        public PolynomialFeatures(int inputCount, int degree, bool includeConstant = false)
        {
            if (inputCount < 1)
            {
                Guard.ThrowOutOfRange(nameof(inputCount), inputCount, "must be >= 1");
            }

            if (degree < 1)
            {
                Guard.ThrowOutOfRange(nameof(degree), degree, "must be >= 1");
            }

            // C(k + d, d) − 1 by the multiplicative formula, stopping as soon as it exceeds the limit.
            double count = 1.0;
            for (int i = 1; i <= degree; i++)
            {
                count = count * (inputCount + i) / i;
                if (count > MaxFeatureCount + 1.5)
                {
                    Guard.ThrowOutOfRange(nameof(degree), degree, "the expansion would have more than 2^20 features");
                }
            }

            int monomials = (int)Math.Round(count) - 1;
            InputCount = inputCount;
            Degree = degree;
            offset = includeConstant ? 1 : 0;
            FeatureCount = monomials + offset;
            parent = new int[monomials];
            variable = new int[monomials];

            // Degree 1, then each monomial of degree g − 1 extended by every input index ≥ its last index: lexicographic within a degree.
            int n = 0;
            for (int j = 0; j < inputCount; j++)
            {
                parent[n] = -1;
                variable[n++] = j;
            }

            int blockStart = 0;
            for (int g = 2; g <= degree; g++)
            {
                int blockEnd = n;
                for (int f = blockStart; f < blockEnd; f++)
                {
                    for (int j = variable[f]; j < inputCount; j++)
                    {
                        parent[n] = f;
                        variable[n++] = j;
                    }
                }

                blockStart = blockEnd;
            }
        }

        /// <summary>k, the number of inputs.</summary>
        public int InputCount { get; }

        /// <summary>d, the largest total degree.</summary>
        public int Degree { get; }

        /// <summary>Whether feature 0 is the constant 1.</summary>
        public bool IncludesConstant => offset == 1;

        /// <summary>Number of features: C(k + d, d) − 1, plus one with the constant.</summary>
        public int FeatureCount { get; }

        /// <summary>Writes the features of <paramref name="inputs"/> in the documented order into <paramref name="features"/>.</summary>
        /// <param name="inputs">z₁ … z_k, length <see cref="InputCount"/>, finite.</param>
        /// <param name="features">Destination, length ≥ <see cref="FeatureCount"/>.</param>
        /// <exception cref="ArgumentException">Wrong lengths, a non-finite input, or a monomial that overflows to infinity.</exception>
        public void Expand(ReadOnlySpan<double> inputs, Span<double> features)
        {
            Guard.Length(inputs.Length, InputCount, nameof(inputs));
            Guard.AllFinite(inputs, nameof(inputs));
            if (features.Length < FeatureCount)
            {
                Guard.ThrowLength(nameof(features), features.Length, FeatureCount);
            }

            if (offset == 1)
            {
                features[0] = 1.0;
            }

            Span<double> monomials = features.Slice(offset, FeatureCount - offset);
            int k = InputCount;
            inputs.CopyTo(monomials);
            for (int f = k; f < monomials.Length; f++)
            {
                monomials[f] = monomials[parent[f]] * inputs[variable[f]];
            }

            for (int f = k; f < monomials.Length; f++)
            {
                if (double.IsInfinity(monomials[f]))
                {
                    Guard.ThrowArgument(nameof(inputs), "a monomial overflowed to infinity; scale the inputs down or lower the degree.");
                }
            }
        }

        /// <summary>Writes the exponents (e₁, …, e_k) of feature <paramref name="feature"/> (all zero for the constant). O(degree).</summary>
        /// <param name="feature">Zero-based feature index.</param>
        /// <param name="exponents">Destination, length ≥ <see cref="InputCount"/>.</param>
        /// <exception cref="ArgumentOutOfRangeException">No such feature.</exception>
        /// <exception cref="ArgumentException">Destination too short.</exception>
        public void CopyExponentsTo(int feature, Span<int> exponents)
        {
            if ((uint)feature >= (uint)FeatureCount)
            {
                Guard.ThrowOutOfRange(nameof(feature), feature, "no such feature");
            }

            if (exponents.Length < InputCount)
            {
                Guard.ThrowLength(nameof(exponents), exponents.Length, InputCount);
            }

            exponents.Slice(0, InputCount).Clear();
            for (int f = feature - offset; f >= 0; f = parent[f])
            {
                exponents[variable[f]]++;
            }
        }
    }
}
