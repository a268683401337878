using System;
using System.Linq;
using FsCheck.Xunit;
using MathNet.Numerics.LinearAlgebra;
using OnlineRidge.Tests.Support;
using OnlineRidge.Tests.Tuning;
using Xunit;

namespace OnlineRidge.Tests.Diagnostics
{
    /// <summary>Collinearity diagnostics against independent MathNet.Numerics computations (MATH.md §8) and the NIST Longley data.</summary>
    public class CollinearityDiagnosticsTests
    {
        /// <summary>Weighted correlation matrix computed directly (two-pass means, population SDs) with MathNet; independent of the library.</summary>
        private static Matrix<double> Correlation(double[] x, double[] w, int n, int p)
        {
            double wsum = w.Sum();
            var mean = Enumerable.Range(0, p).Select(j => Enumerable.Range(0, n).Sum(i => w[i] * x[(i * p) + j]) / wsum).ToArray();
            var cov = Matrix<double>.Build.Dense(p, p, (j, k) => Enumerable.Range(0, n).Sum(i => w[i] * (x[(i * p) + j] - mean[j]) * (x[(i * p) + k] - mean[k])) / wsum);
            return Matrix<double>.Build.Dense(p, p, (j, k) => cov[j, k] / Math.Sqrt(cov[j, j] * cov[k, k]));
        }

        /// <summary>
        /// Theorem (MATH.md §8): VIFⱼ = [Corr⁻¹]ⱼⱼ = 1/(1 − Rⱼ²) = Σₖ Vⱼₖ²/sₖ² = W σⱼ² ‖row ⱼ(R22⁻¹)‖². The library's Σ V²/s² form is checked
        /// against the inverse correlation matrix (MathNet), against 1/(1 − Rⱼ²) from weighted regressions of xⱼ on the others, and against
        /// the row norms of the inverse of MathNet's QR factor of the weighted centered design.
        /// </summary>
        [Property(MaxTest = 100, Replay = "(7,9)")]
        public void VarianceInflationFactorsAgreeFourWays(int seed, byte pRaw, byte nRaw)
        {
            int p = 2 + (pRaw % 6);
            int n = p + 5 + (nRaw % 50);
            var (x, _, w, _, _) = RegularizationPathTests.Problem(seed, p, n, collinear: seed % 2 == 0);
            var d = CollinearityDiagnostics.Compute(new MatrixView(x, n, p), w);
            Assert.False(d.IsRankDeficient);
            var inv = Correlation(x, w, n, p).Inverse();

            double wsum = w.Sum();
            var mean = Enumerable.Range(0, p).Select(j => Enumerable.Range(0, n).Sum(i => w[i] * x[(i * p) + j]) / wsum).ToArray();
            var centered = Matrix<double>.Build.Dense(n, p, (i, j) => Math.Sqrt(w[i]) * (x[(i * p) + j] - mean[j]));
            var rInv = centered.QR().R.SubMatrix(0, p, 0, p).Inverse();
            for (int j = 0; j < p; j++)
            {
                double vif = d.VarianceInflationFactors![j];
                double viaInverse = inv[j, j];
                double sigma2 = centered.Column(j).DotProduct(centered.Column(j)) / wsum;
                double viaR = wsum * sigma2 * rInv.Row(j).DotProduct(rInv.Row(j));

                // 1/(1 − R²): weighted least squares of column j on the other columns with an intercept.
                var others = Enumerable.Range(0, p).Where(k => k != j).ToArray();
                var xo = new double[n * (p - 1)];
                for (int i = 0; i < n; i++)
                {
                    for (int k = 0; k < others.Length; k++)
                    {
                        xo[(i * (p - 1)) + k] = x[(i * p) + others[k]];
                    }
                }

                var yj = Enumerable.Range(0, n).Select(i => x[(i * p) + j]).ToArray();
                double r2 = BatchRidge.Fit(new MatrixView(xo, n, p - 1), yj, new RidgeSettings { Solver = RidgeSolver.Qr }, w).RSquared;
                double viaR2 = 1.0 / (1.0 - r2);

                // Relative agreement at κ·ε level (smooth statistic, MATH.md §10) with κ the squared condition number of Corr.
                double tol = 1e-12 * d.ConditionNumber * d.ConditionNumber * 100;
                Assert.True(Math.Abs(vif - viaInverse) <= tol * viaInverse, $"VIF {vif} vs inverse correlation {viaInverse}");
                Assert.True(Math.Abs(vif - viaR) <= tol * viaR, $"VIF {vif} vs R22 rows {viaR}");
                Assert.True(Math.Abs(vif - viaR2) <= tol * viaR2, $"VIF {vif} vs 1/(1-R²) {viaR2}");
                Assert.Equal(1.0, Enumerable.Range(0, p).Sum(k => d.VarianceProportion(j, k)), 12);
            }

            // Condition number = √(λmax/λmin) of the correlation matrix.
            var ev = Correlation(x, w, n, p).Evd(Symmetricity.Symmetric).EigenValues.Select(c => c.Real).ToArray();
            Assert.Equal(1.0, d.ConditionNumber / Math.Sqrt(ev.Max() / ev.Min()), 8);
        }

        /// <summary>
        /// The Longley data (NIST StRD Longley.dat) are the classic collinear macro-economic design. Their VIFs are checked against an
        /// independent computation from the inverse correlation matrix (MathNet); the well-known magnitudes (from memory: VIF of GNP
        /// about 1789, of Year about 759, of the GNP deflator about 136, of Armed Forces about 3.6) are checked loosely.
        /// </summary>
        [Fact]
        public void LongleyHasItsWellKnownLargeVarianceInflationFactors()
        {
            var ds = NistDataset.Load("Longley");
            var d = CollinearityDiagnostics.Compute(new MatrixView(ds.X, ds.Rows, ds.Columns));
            var inv = Correlation(ds.X, Enumerable.Repeat(1.0, ds.Rows).ToArray(), ds.Rows, ds.Columns).Inverse();
            for (int j = 0; j < ds.Columns; j++)
            {
                Assert.Equal(1.0, d.VarianceInflationFactors![j] / inv[j, j], 10);
            }

            Assert.InRange(d.VarianceInflationFactors![1], 1700, 1900);
            Assert.InRange(d.VarianceInflationFactors[5], 700, 800);
            Assert.InRange(d.VarianceInflationFactors[0], 120, 150);
            Assert.InRange(d.VarianceInflationFactors[3], 3, 4.5);
            Assert.True(d.ConditionIndices[^1] > 30, "Longley has condition indices beyond the rule-of-thumb 30 (common practice)");
        }

        [Fact]
        public void ExactDuplicateColumnIsReportedAsRankDeficiencyNotAsANumber()
        {
            var (x, _, _, n, p) = RegularizationPathTests.Problem(3, 3, 30, collinear: false);
            var dup = new double[n * (p + 1)];
            for (int i = 0; i < n; i++)
            {
                Array.Copy(x, i * p, dup, i * (p + 1), p);
                dup[(i * (p + 1)) + p] = x[(i * p) + 1];
            }

            var d = CollinearityDiagnostics.Compute(new MatrixView(dup, n, p + 1));
            Assert.True(d.IsRankDeficient);
            Assert.Null(d.VarianceInflationFactors);
            Assert.True(double.IsNaN(d.VarianceProportion(0, 0)));
            var v = d.NullDirection!;
            Assert.Equal(1.0 / Math.Sqrt(2.0), Math.Abs(v[1]), 6);
            Assert.Equal(-v[1], v[3], 6);
        }

        [Fact]
        public void ConstantColumnIsListedAndLeftOut()
        {
            var (x, _, _, n, p) = RegularizationPathTests.Problem(4, 3, 30, collinear: false);
            for (int i = 0; i < n; i++)
            {
                x[(i * p) + 2] = 7.5;
            }

            var d = CollinearityDiagnostics.Compute(new MatrixView(x, n, p));
            Assert.Equal(new[] { 2 }, d.ConstantColumns);
            Assert.Equal(new[] { 0, 1 }, d.Columns);
        }

        /// <summary>Belsley's uncentered scaled condition indices equal MathNet's SVD of the weighted [1, X] with unit-length columns.</summary>
        [Fact]
        public void ScaledConditionIndicesEqualTheSvdOfTheUnitLengthDesign()
        {
            var (x, _, w, n, p) = RegularizationPathTests.Problem(8, 4, 50, collinear: true);
            var d = CollinearityDiagnostics.Compute(new MatrixView(x, n, p), w);
            var m = Matrix<double>.Build.Dense(n, p + 1, (i, j) => Math.Sqrt(w[i]) * (j == 0 ? 1.0 : x[(i * p) + j - 1]));
            m = m.NormalizeColumns(2.0);
            var s = m.Svd(false).S.ToArray();
            for (int k = 0; k < s.Length; k++)
            {
                Assert.Equal(1.0, d.ScaledConditionIndices[k] / (s[0] / s[k]), 8);
            }
        }

        /// <summary>df(λ) of the diagnostics equals the batch fit's effective degrees of freedom minus the intercept (MATH.md §6.4).</summary>
        [Fact]
        public void EffectiveDegreesOfFreedomMatchTheStandardizedRidgeFit()
        {
            var (x, y, w, n, p) = RegularizationPathTests.Problem(9, 5, 60, collinear: true);
            var d = CollinearityDiagnostics.Compute(new MatrixView(x, n, p), w);
            foreach (double lambda in new[] { 0.0, 0.01, 1.0, 100.0 })
            {
                var fit = BatchRidge.Fit(new MatrixView(x, n, p), y, new RidgeSettings { Penalty = lambda, Solver = RidgeSolver.Svd }, w);
                Assert.Equal(fit.EffectiveDegreesOfFreedom - 1.0, d.EffectiveDegreesOfFreedom(lambda), 9);
            }
        }
    }
}

namespace OnlineRidge.Tests.Diagnostics
{
    /// <summary>Diagnostics from a square-root estimator's state equal those of the batch design it has seen (MATH.md §4.3, §8).</summary>
    public class StreamingDiagnosticsTests
    {
        /// <summary>
        /// Theorem (MATH.md §4.3): R₂₂ᵀR₂₂ = M_xx, so R₂₂D⁻¹/√W has the singular values of the standardized weighted design; the leading
        /// block of the factor has those of A^½[1, X]. Hence every diagnostic from the state equals the batch one with weights β̃ⁿ⁻ⁱwᵢ.
        /// </summary>
        [Property(MaxTest = 100, Replay = "(61,67)")]
        public void DiagnosticsFromTheStateEqualTheBatchDiagnosticsOfTheSameData(int seed, byte pRaw, byte nRaw, bool forget)
        {
            int p = 2 + (pRaw % 8);
            int n = p + 5 + (nRaw % 60);
            var (x, y, w, _, _) = OnlineRidge.Tests.Tuning.RegularizationPathTests.Problem(seed, p, n, collinear: seed % 2 == 0);
            var e = new SquareRootEstimator(p, new SquareRootSettings { ForgettingFactor = forget ? 0.97 : 1.0 });
            for (int i = 0; i < n; i++)
            {
                e.Update(x.AsSpan(i * p, p), y[i], w[i]);
            }

            var s = CollinearityDiagnostics.FromState(e);
            var b = CollinearityDiagnostics.Compute(new MatrixView(x, n, p), w, e.EffectiveForgettingFactor);
            Assert.Equal(b.Columns, s.Columns);
            for (int k = 0; k < b.SingularValues.Count; k++)
            {
                Assert.Equal(1.0, s.SingularValues[k] / b.SingularValues[k], 7);
            }

            for (int k = 0; k < b.ScaledConditionIndices.Count; k++)
            {
                Assert.Equal(1.0, s.ScaledConditionIndices[k] / b.ScaledConditionIndices[k], 6);
            }

            Assert.Equal(b.IsRankDeficient, s.IsRankDeficient);
            if (!b.IsRankDeficient)
            {
                for (int j = 0; j < b.Columns.Count; j++)
                {
                    Assert.Equal(1.0, s.VarianceInflationFactors![j] / b.VarianceInflationFactors![j], 6);
                }
            }
        }

        [Fact]
        public void StreamingDiagnosticsNeedAnInterceptAndData()
        {
            Assert.Throws<InvalidOperationException>(() => CollinearityDiagnostics.FromState(new SquareRootEstimator(2, new SquareRootSettings { FitIntercept = false })));
            Assert.Throws<InvalidOperationException>(() => CollinearityDiagnostics.FromState(new SquareRootEstimator(2)));
        }
    }
}
