using System;
using OnlineRidge.Internal;
using Xunit;

namespace OnlineRidge.Tests.Internal
{
    /// <summary>
    /// The branch-free finiteness test of <see cref="Guard.AreAllFinite"/> (and the validation built on it) against the definition
    /// (every entry neither ±∞ nor NaN), for every length 0 … 9 — each mix of whole vectors and scalar tail — and every position of a bad value.
    /// </summary>
    public class GuardFiniteTests
    {
        public static TheoryData<int> Lengths()
        {
            var data = new TheoryData<int>();
            for (int n = 0; n <= 9; n++)
            {
                data.Add(n);
            }

            return data;
        }

        [Theory]
        [MemberData(nameof(Lengths))]
        public void Finite_spans_pass_including_extreme_magnitudes(int n)
        {
            var values = new double[n];
            double[] extremes = { double.MaxValue, -double.MaxValue, double.Epsilon, -0.0, 1e-310, 0.0, 3.5, -1e300, 1.0 };
            for (int i = 0; i < n; i++)
            {
                values[i] = extremes[i % extremes.Length];
            }

            Assert.True(Guard.AreAllFinite(values));
            Assert.True(Guard.IsUsableSample(values, 1.0, 1.0));
            Guard.AllFinite(values, "x");
        }

        [Theory]
        [MemberData(nameof(Lengths))]
        public void A_single_bad_value_anywhere_is_found_and_named(int n)
        {
            foreach (double bad in new[] { double.NaN, double.PositiveInfinity, double.NegativeInfinity })
            {
                for (int k = 0; k < n; k++)
                {
                    var values = new double[n];
                    for (int i = 0; i < n; i++)
                    {
                        values[i] = i + 0.5;
                    }

                    values[k] = bad;
                    Assert.False(Guard.AreAllFinite(values));
                    Assert.False(Guard.IsUsableSample(values, 1.0, 1.0));
                    var ex = Assert.Throws<ArgumentException>(() => Guard.AllFinite(values, "x"));
                    Assert.Equal("x", ex.ParamName);
                    Assert.Contains($"x[{k}]", ex.Message, StringComparison.Ordinal);
                }
            }
        }
    }
}
