using System;
using System.Collections.Generic;
using System.Linq;
using Xunit;

namespace OnlineRidge.Cli.Tests
{
    /// <summary>
    /// The tool end to end on small CSV files made here, its outputs compared with the library called directly on designs built
    /// explicitly in the test (static columns, and ARX rows built from the definition, not through ArxRegressor).
    /// </summary>
    public class EndToEndTests
    {
        /// <summary>Invented compressor data: power from speed, pressure ratio (correlated with speed) and inlet temperature.</summary>
        private static double[][] CompressorRows(int n, int seed)
        {
            var rng = new Random(seed);
            var rows = new double[n][];
            for (int i = 0; i < n; i++)
            {
                double speed = 30 + (20 * rng.NextDouble());
                double ratio = 1.5 + (0.04 * speed) + (0.1 * CliHarness.Gauss(rng));
                double temp = 15 + (10 * rng.NextDouble());
                double power = 2 + (0.8 * speed) + (5 * ratio) - (0.3 * temp) + (0.5 * CliHarness.Gauss(rng));
                rows[i] = new[] { i, speed, ratio, temp, power };
            }

            return rows;
        }

        private static readonly string[] CompressorHeader = { "time", "speed", "ratio", "inlet_temp", "power" };

        private static (double[] X, double[] Y) Design(double[][] rows, int[] xCols, int yCol)
        {
            var x = rows.SelectMany(r => xCols.Select(c => r[c])).ToArray();
            var y = rows.Select(r => r[yCol]).ToArray();
            return (x, y);
        }

        private static void AssertClose(double expected, double actual, double relative = 1e-12)
        {
            Assert.True(Math.Abs(expected - actual) <= relative * Math.Max(1.0, Math.Abs(expected)), $"expected {expected:R}, got {actual:R}");
        }

        [Fact]
        public void BatchEstimateUncertaintyAndVifsEqualTheLibrary()
        {
            using var h = new CliHarness();
            var rows = CompressorRows(200, 1);
            string data = h.WriteCsv("compressor.csv", CompressorHeader, rows);
            var (exit, stdout, stderr) = CliHarness.Run("--data", data, "--target", "power", "--regressors", "speed,ratio,inlet_temp", "--penalty", "0.5", "--out", h.PathOf("fit"));
            Assert.True(exit == 0, stderr);
            Assert.Contains("batch estimate from 200 rows", stdout, StringComparison.Ordinal);

            var (x, y) = Design(rows, new[] { 1, 2, 3 }, 4);
            var settings = new RidgeSettings { Penalty = 0.5 };
            var fit = BatchRidge.Fit(new MatrixView(x, 200, 3), y, settings);
            var vif = CollinearityDiagnostics.Compute(new MatrixView(x, 200, 3)).VarianceInflationFactors!;
            var est = CliHarness.ReadEstimateCsv(h.PathOf("fit.estimate.csv"));
            string[] terms = { "speed", "ratio", "inlet_temp" };
            for (int j = 0; j < 3; j++)
            {
                var ci = fit.CoefficientInterval(j);
                AssertClose(fit.Coefficients[j], est[terms[j]][0]);
                AssertClose(ci.StandardError, est[terms[j]][1]);
                AssertClose(ci.Lower, est[terms[j]][2]);
                AssertClose(ci.Upper, est[terms[j]][3]);
                AssertClose(vif[j], est[terms[j]][4]);
            }

            AssertClose(fit.Intercept, est["(intercept)"][0]);
            AssertClose(fit.InterceptStandardError, est["(intercept)"][1]);

            var json = CliHarness.ReadJson(h.PathOf("fit.estimate.json"));
            Assert.Equal(200, json.GetProperty("rows").GetInt32());
            AssertClose(fit.ConditionEstimate, json.GetProperty("diagnostics").GetProperty("conditionEstimate").GetDouble());
            Assert.Equal(fit.SolverUsed.ToString(), json.GetProperty("diagnostics").GetProperty("solver").GetString());
            AssertClose(fit.Coefficients[1], json.GetProperty("coefficients")[1].GetProperty("estimate").GetDouble());
            Assert.Equal(new[] { "compressor.csv", "fit.estimate.csv", "fit.estimate.json" }, h.Files());
        }

        [Fact]
        public void GcvChoiceAndOptionsEqualTheLibrary()
        {
            using var h = new CliHarness();
            var rows = CompressorRows(120, 2);
            string data = h.WriteCsv("c.csv", CompressorHeader, rows);
            var (exit, _, stderr) = CliHarness.Run("--data", data, "--target", "power", "--regressors", "speed,ratio", "--penalty", "gcv", "--forgetting", "0.99", "--no-standardize", "--solver", "qr", "--level", "0.9", "--out", h.PathOf("g"));
            Assert.True(exit == 0, stderr);

            var (x, y) = Design(rows, new[] { 1, 2 }, 4);
            var baseSettings = new RidgeSettings { ForgettingFactor = 0.99, Standardize = false, Solver = RidgeSolver.Qr };
            double chosen = RegularizationPath.Compute(new MatrixView(x, 120, 2), y, baseSettings, leaveOneOut: false).ChooseByGeneralizedCrossValidation().Penalty;
            var fit = BatchRidge.Fit(new MatrixView(x, 120, 2), y, new RidgeSettings { Penalty = chosen, ForgettingFactor = 0.99, Standardize = false, Solver = RidgeSolver.Qr });
            var json = CliHarness.ReadJson(h.PathOf("g.estimate.json"));
            Assert.Equal(chosen, json.GetProperty("penalty").GetDouble());
            Assert.Equal("generalized cross-validation", json.GetProperty("penaltyChosenBy").GetString());
            var est = CliHarness.ReadEstimateCsv(h.PathOf("g.estimate.csv"));
            AssertClose(fit.Coefficients[0], est["speed"][0]);
            AssertClose(fit.CoefficientInterval(1, 0.9).Upper, est["ratio"][3]);
        }

        /// <summary>Invented two-input process: y(t) = 1.2y(t−1) − 0.5y(t−2) + 0.7u(t−2) + 0.2v(t) + e(t).</summary>
        private static double[][] ArxRows(int n, double noise, int seed)
        {
            var rng = new Random(seed);
            var rows = new double[n][];
            double y1 = 0, y2 = 0, u1 = 0, u2 = 0;
            for (int t = 0; t < n; t++)
            {
                double u = rng.NextDouble() < 0.5 ? -1 : 1;
                double v = (2 * rng.NextDouble()) - 1;
                double y = (1.2 * y1) - (0.5 * y2) + (0.7 * u2) + (0.2 * v) + (noise * CliHarness.Gauss(rng));
                rows[t] = new[] { u, v, y };
                y2 = y1;
                y1 = y;
                u2 = u1;
                u1 = u;
            }

            return rows;
        }

        [Fact]
        public void ArxModelEqualsTheBatchFitOnRowsBuiltFromTheDefinition()
        {
            using var h = new CliHarness();
            var rows = ArxRows(300, 0.02, 3);
            string data = h.WriteCsv("p.csv", new[] { "u", "v", "y" }, rows);
            var (exit, stdout, stderr) = CliHarness.Run("--data", data, "--target", "y", "--output-order", "2", "--input", "u:2:2", "--input", "v:1:0", "--out", h.PathOf("arx"));
            Assert.True(exit == 0, stderr);
            Assert.Contains("300 samples, 3 for warm-up", stdout, StringComparison.Ordinal); // max(na, nk + nb − 1) = max(2, 3, 0)

            // φ(t) = [−y(t−1), −y(t−2), u(t−2), u(t−3), v(t)] for t = 3 … 299, straight from the definition.
            int n = 297;
            var x = new double[n * 5];
            var y = new double[n];
            for (int t = 3; t < 300; t++)
            {
                int i = t - 3;
                x[(i * 5) + 0] = -rows[t - 1][2];
                x[(i * 5) + 1] = -rows[t - 2][2];
                x[(i * 5) + 2] = rows[t - 2][0];
                x[(i * 5) + 3] = rows[t - 3][0];
                x[(i * 5) + 4] = rows[t][1];
                y[i] = rows[t][2];
            }

            var fit = BatchRidge.Fit(new MatrixView(x, n, 5), y);
            var est = CliHarness.ReadEstimateCsv(h.PathOf("arx.estimate.csv"));
            string[] terms = { "-y(t-1)", "-y(t-2)", "u(t-2)", "u(t-3)", "v(t)" };
            Assert.Equal(new[] { "(intercept)" }.Concat(terms).OrderBy(s => s, StringComparer.Ordinal), est.Keys.OrderBy(s => s, StringComparer.Ordinal));
            for (int j = 0; j < 5; j++)
            {
                AssertClose(fit.Coefficients[j], est[terms[j]][0]);
                AssertClose(fit.StandardErrors![j], est[terms[j]][1]);
            }

            // And the invented system is recovered (Ljung's signs: the coefficient of −y(t−1) is a₁ = −1.2).
            double[] truth = { -1.2, 0.5, 0.7, 0.0, 0.2 };
            for (int j = 0; j < 5; j++)
            {
                Assert.InRange(est[terms[j]][0] - truth[j], -0.02, 0.02);
            }
        }
    }
}
