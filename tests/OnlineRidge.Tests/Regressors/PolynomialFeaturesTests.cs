using System;
using System.Collections.Generic;
using System.Linq;
using FsCheck.Xunit;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Regressors
{
    /// <summary>Polynomial features against the binomial count and against monomials enumerated and multiplied out directly.</summary>
    public class PolynomialFeaturesTests
    {
        /// <summary>Binomial coefficient by Pascal's rule (independent of the library's multiplicative formula).</summary>
        private static long Binomial(int n, int k)
        {
            var row = new long[n + 1];
            row[0] = 1;
            for (int i = 1; i <= n; i++)
            {
                for (int j = i; j > 0; j--)
                {
                    row[j] += row[j - 1];
                }
            }

            return row[k];
        }

        /// <summary>The documented order, enumerated recursively: by degree, then nondecreasing index tuples in lexicographic order.</summary>
        private static List<int[]> Tuples(int k, int d)
        {
            var all = new List<int[]>();
            for (int g = 1; g <= d; g++)
            {
                void Extend(List<int> prefix, int start)
                {
                    if (prefix.Count == g)
                    {
                        all.Add(prefix.ToArray());
                        return;
                    }

                    for (int j = start; j < k; j++)
                    {
                        prefix.Add(j);
                        Extend(prefix, j);
                        prefix.RemoveAt(prefix.Count - 1);
                    }
                }

                Extend(new List<int>(), 0);
            }

            return all;
        }

        /// <summary>
        /// Theorem (stars and bars): the monomials of k variables of total degree 1 … d number C(k + d, d) − 1; each feature equals the
        /// product of its factors computed directly (Math.Pow of each input by its exponent), in the documented order.
        /// </summary>
        [Property(MaxTest = 100, Replay = "(303,307)")]
        public void CountAndValuesMatchDirectProducts(int seed, byte kRaw, byte dRaw, bool constant)
        {
            int k = 1 + (kRaw % 5);
            int d = 1 + (dRaw % 4);
            var poly = new PolynomialFeatures(k, d, constant);
            Assert.Equal(Binomial(k + d, d) - 1 + (constant ? 1 : 0), poly.FeatureCount);

            var rng = new Random(seed);
            double[] z = Enumerable.Range(0, k).Select(_ => (rng.NextDouble() * 4) - 2).ToArray();
            var f = new double[poly.FeatureCount];
            poly.Expand(z, f);
            var tuples = Tuples(k, d);
            int off = constant ? 1 : 0;
            if (constant)
            {
                Assert.Equal(1.0, f[0]);
            }

            Assert.Equal(tuples.Count, poly.FeatureCount - off);
            var e = new int[k];
            for (int i = 0; i < tuples.Count; i++)
            {
                var exps = new int[k];
                foreach (int j in tuples[i])
                {
                    exps[j]++;
                }

                double direct = 1.0;
                for (int j = 0; j < k; j++)
                {
                    direct *= Math.Pow(z[j], exps[j]);
                }

                Assert.Equal(direct, f[i + off], 12);
                poly.CopyExponentsTo(i + off, e);
                Assert.Equal(exps, e);
            }
        }

        [Fact]
        public void TwoInputsDegreeTwoInTheDocumentedOrder()
        {
            var poly = new PolynomialFeatures(2, 2, includeConstant: true);
            var f = new double[6];
            poly.Expand(new[] { 2.0, 3.0 }, f);
            Assert.Equal(new[] { 1.0, 2.0, 3.0, 4.0, 6.0, 9.0 }, f);
        }

        [Fact]
        public void InvalidArgumentsNameTheParameter()
        {
            Assert.Equal("inputCount", Assert.Throws<ArgumentOutOfRangeException>(() => new PolynomialFeatures(0, 2)).ParamName);
            Assert.Equal("degree", Assert.Throws<ArgumentOutOfRangeException>(() => new PolynomialFeatures(2, 0)).ParamName);
            Assert.Equal("degree", Assert.Throws<ArgumentOutOfRangeException>(() => new PolynomialFeatures(100, 10)).ParamName);
            var poly = new PolynomialFeatures(2, 2);
            Assert.Equal("inputs", Assert.Throws<ArgumentException>(() => poly.Expand(new[] { 1.0 }, new double[5])).ParamName);
            Assert.Equal("inputs", Assert.Throws<ArgumentException>(() => poly.Expand(new[] { 1.0, double.NaN }, new double[5])).ParamName);
            Assert.Equal("features", Assert.Throws<ArgumentException>(() => poly.Expand(new[] { 1.0, 2.0 }, new double[4])).ParamName);
            Assert.Equal("inputs", Assert.Throws<ArgumentException>(() => new PolynomialFeatures(1, 3).Expand(new[] { 1e200 }, new double[3])).ParamName);
        }

        /// <summary>Standardized ridge on raw powers agrees with the fit on the same design (the features feed BatchRidge unchanged): y = 1 + 2z − z² recovered.</summary>
        [Fact]
        public void QuadraticIsRecoveredByTheBatchEstimator()
        {
            var poly = new PolynomialFeatures(1, 2);
            int n = 50;
            var x = new double[n * 2];
            var y = new double[n];
            for (int i = 0; i < n; i++)
            {
                double z = 10 + (i * 0.1);
                poly.Expand(new[] { z }, x.AsSpan(i * 2, 2));
                y[i] = 1 + (2 * z) - (z * z);
            }

            var fit = BatchRidge.Fit(new MatrixView(x, n, 2), y);
            Assert.Equal(2.0, fit.Coefficients[0], 8);
            Assert.Equal(-1.0, fit.Coefficients[1], 9);
            Assert.Equal(1.0, fit.Intercept, 7);
        }

        [Fact]
        public void ExpandAllocatesNothing()
        {
            var poly = new PolynomialFeatures(3, 3, includeConstant: true);
            var z = new double[3];
            var f = new double[poly.FeatureCount];
            poly.Expand(z, f);
            Assert.Equal(0, AllocationCount.InSteadyState(() =>
            {
                for (int t = 0; t < 100_000; t++)
                {
                    z[0] = t * 1e-5;
                    z[1] = 1 - z[0];
                    z[2] = 0.5;
                    poly.Expand(z, f);
                }
            }));
        }
    }
}
