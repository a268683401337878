using System;
using System.Globalization;
using System.IO;
using System.Linq;
using Xunit;

namespace OnlineRidge.Cli.Tests
{
    /// <summary>
    /// The recursive forms through the tool: the trajectory and the final estimate against the same estimator driven directly by the
    /// test, and the final estimate against the batch estimator on the explicit design (the square-root form minimizes the batch
    /// objective with forgetting factor fl(√β)², so the two must agree to the rounding level of a well-conditioned problem).
    /// </summary>
    public class RecursiveTests
    {
        private static double[][] Rows(int n, int seed)
        {
            var rng = new Random(seed);
            return Enumerable.Range(0, n).Select(i =>
            {
                double a = rng.NextDouble() * 4;
                double b = (rng.NextDouble() * 2) - 1;
                double drift = 1 + (i * 0.002); // a slowly drifting gain, what forgetting is for
                return new[] { a, b, 0.5 + (drift * a) - (0.8 * b) + (0.1 * CliHarness.Gauss(rng)) };
            }).ToArray();
        }

        [Fact]
        public void SquareRootTrajectoryAndFinalEstimateEqualTheLibrary()
        {
            using var h = new CliHarness();
            var rows = Rows(400, 11);
            string data = h.WriteCsv("drift.csv", new[] { "a", "b", "y" }, rows);
            var (exit, stdout, stderr) = CliHarness.Run("--data", data, "--target", "y", "--regressors", "a,b", "--estimator", "square-root", "--forgetting", "0.98", "--penalty", "0.1", "--every", "25", "--out", h.PathOf("sr"));
            Assert.True(exit == 0, stderr);
            Assert.Contains("square-root estimate from 400 rows", stdout, StringComparison.Ordinal);

            var settings = new SquareRootSettings { ForgettingFactor = 0.98, Penalty = 0.1 };
            var direct = new SquareRootEstimator(2, settings);
            var lines = File.ReadAllLines(h.PathOf("sr.trajectory.csv"));
            Assert.Equal("row,line,intercept,a,b", lines[0]);
            Assert.Equal(1 + (400 / 25), lines.Length);
            var theta = new double[2];
            int next = 1;
            for (int i = 0; i < rows.Length; i++)
            {
                direct.Update(rows[i].AsSpan(0, 2), rows[i][2]);
                if ((i + 1) % 25 == 0)
                {
                    var f = lines[next++].Split(',').Select(s => double.Parse(s, CultureInfo.InvariantCulture)).ToArray();
                    direct.CopyParametersTo(theta);
                    Assert.Equal(i + 1, f[0]);
                    Assert.Equal(i + 2, f[1]); // line number: header is line 1
                    Assert.Equal(direct.Intercept, f[2]);
                    Assert.Equal(theta[0], f[3]);
                    Assert.Equal(theta[1], f[4]);
                }
            }

            // Final estimate against the batch estimator with β̃ = fl(√0.98)² on the explicit design.
            var x = rows.SelectMany(r => r.Take(2)).ToArray();
            var y = rows.Select(r => r[2]).ToArray();
            double q = Math.Sqrt(0.98);
            var fit = BatchRidge.Fit(new MatrixView(x, 400, 2), y, new RidgeSettings { ForgettingFactor = q * q, Penalty = 0.1, Solver = RidgeSolver.Qr });
            var est = CliHarness.ReadEstimateCsv(h.PathOf("sr.estimate.csv"));
            Assert.Equal(fit.Coefficients[0], est["a"][0], 9);
            Assert.Equal(fit.Coefficients[1], est["b"][0], 9);
            Assert.Equal(fit.Intercept, est["(intercept)"][0], 9);
            var json = CliHarness.ReadJson(h.PathOf("sr.estimate.json"));
            Assert.Equal(direct.ConditionEstimate, json.GetProperty("diagnostics").GetProperty("conditionEstimate").GetDouble());
            Assert.Equal(400 / 25, json.GetProperty("diagnostics").GetProperty("oneStepPredictions").GetInt32());
        }

        [Fact]
        public void ArxThroughTheSquareRootFormMatchesTheBatchTool()
        {
            // No forgetting, no penalty: both forms minimize the same least-squares objective on the same ARX rows.
            using var h = new CliHarness();
            var rng = new Random(4);
            var rows = new double[300][];
            double y1 = 0, u1 = 0;
            for (int t = 0; t < 300; t++)
            {
                double u = rng.NextDouble() < 0.5 ? -1 : 1;
                double y = (0.9 * y1) + (0.4 * u1) + (0.01 * CliHarness.Gauss(rng));
                rows[t] = new[] { u, y };
                y1 = y;
                u1 = u;
            }

            string data = h.WriteCsv("p.csv", new[] { "u", "y" }, rows);
            string[] model = { "--data", data, "--target", "y", "--output-order", "1", "--input", "u:1:1" };
            Assert.Equal(0, CliHarness.Run(model.Concat(new[] { "--out", h.PathOf("b") }).ToArray()).Exit);
            Assert.Equal(0, CliHarness.Run(model.Concat(new[] { "--estimator", "square-root", "--out", h.PathOf("s") }).ToArray()).Exit);
            var b = CliHarness.ReadEstimateCsv(h.PathOf("b.estimate.csv"));
            var s = CliHarness.ReadEstimateCsv(h.PathOf("s.estimate.csv"));
            foreach (string term in new[] { "(intercept)", "-y(t-1)", "u(t-1)" })
            {
                Assert.Equal(b[term][0], s[term][0], 10);
            }

            Assert.Equal(-0.9, s["-y(t-1)"][0], 2);
            Assert.Equal(0.4, s["u(t-1)"][0], 2);
        }

        /// <summary>
        /// GCV from the square-root state (constant memory) against the library called directly (RegularizationPath.FromState and
        /// SolveWithPenalty on the same estimator) and against the batch GCV on the explicit design: without forgetting both see the
        /// same data, so the chosen grid penalty and the coefficients agree to rounding. VIFs from the state equal the batch VIFs.
        /// </summary>
        [Fact]
        public void StreamingGcvAndVifsEqualTheLibraryAndTheBatchChoice()
        {
            using var h = new CliHarness();
            var rng = new Random(21);
            var rows = Enumerable.Range(0, 150).Select(_ =>
            {
                double a = CliHarness.Gauss(rng);
                double b = a + (0.05 * CliHarness.Gauss(rng)); // nearly collinear: the penalty matters
                return new[] { a, b, (2 * a) - b + (0.5 * CliHarness.Gauss(rng)) };
            }).ToArray();
            string data = h.WriteCsv("c.csv", new[] { "a", "b", "y" }, rows);
            var (exit, _, stderr) = CliHarness.Run("--data", data, "--target", "y", "--regressors", "a,b", "--estimator", "square-root", "--penalty", "gcv", "--out", h.PathOf("s"));
            Assert.True(exit == 0, stderr);
            Assert.Equal(0, CliHarness.Run("--data", data, "--target", "y", "--regressors", "a,b", "--penalty", "gcv", "--out", h.PathOf("b")).Exit);

            var direct = new SquareRootEstimator(2);
            foreach (var r in rows)
            {
                direct.Update(r.AsSpan(0, 2), r[2]);
            }

            double chosen = RegularizationPath.FromState(direct).ChooseByGeneralizedCrossValidation().Penalty;
            var theta = new double[2];
            double intercept = direct.SolveWithPenalty(chosen, theta);
            var sJson = CliHarness.ReadJson(h.PathOf("s.estimate.json"));
            var bJson = CliHarness.ReadJson(h.PathOf("b.estimate.json"));
            Assert.Equal(chosen, sJson.GetProperty("penalty").GetDouble());
            Assert.True(chosen > 0);
            Assert.Equal(bJson.GetProperty("penalty").GetDouble(), chosen, 1e-8 * chosen);
            var s = CliHarness.ReadEstimateCsv(h.PathOf("s.estimate.csv"));
            var b = CliHarness.ReadEstimateCsv(h.PathOf("b.estimate.csv"));
            Assert.Equal(theta[0], s["a"][0]);
            Assert.Equal(theta[1], s["b"][0]);
            Assert.Equal(intercept, s["(intercept)"][0]);
            foreach (string term in new[] { "a", "b" })
            {
                Assert.Equal(b[term][0], s[term][0], 8);
                Assert.Equal(b[term][4], s[term][4], 6); // VIF
            }
        }

        /// <summary>
        /// Information form: the trajectory equals the estimator driven directly, and the final estimate equals the batch estimator with the
        /// same settings (the form minimizes exactly the batch objective, MATH.md §5), to the digits a Cholesky solve keeps here.
        /// </summary>
        [Fact]
        public void InformationFormEqualsTheLibraryAndTheBatchObjective()
        {
            using var h = new CliHarness();
            var rows = Rows(300, 12);
            string data = h.WriteCsv("d.csv", new[] { "a", "b", "y" }, rows);
            var (exit, _, stderr) = CliHarness.Run("--data", data, "--target", "y", "--regressors", "a,b", "--estimator", "information", "--forgetting", "0.99", "--penalty", "2", "--every", "30", "--out", h.PathOf("i"));
            Assert.True(exit == 0, stderr);

            var settings = new RidgeSettings { ForgettingFactor = 0.99, Penalty = 2 };
            var direct = new InformationFormEstimator(2, settings);
            var lines = File.ReadAllLines(h.PathOf("i.trajectory.csv"));
            var theta = new double[2];
            int next = 1;
            for (int i = 0; i < rows.Length; i++)
            {
                direct.Update(rows[i].AsSpan(0, 2), rows[i][2]);
                if ((i + 1) % 30 == 0)
                {
                    var f = lines[next++].Split(',').Select(v => double.Parse(v, CultureInfo.InvariantCulture)).ToArray();
                    direct.CopyParametersTo(theta);
                    Assert.Equal(new[] { direct.Intercept, theta[0], theta[1] }, f.Skip(2).ToArray());
                }
            }

            var fit = BatchRidge.Fit(new MatrixView(rows.SelectMany(r => r.Take(2)).ToArray(), 300, 2), rows.Select(r => r[2]).ToArray(), settings);
            var est = CliHarness.ReadEstimateCsv(h.PathOf("i.estimate.csv"));
            Assert.Equal(fit.Coefficients[0], est["a"][0], 9);
            Assert.Equal(fit.Coefficients[1], est["b"][0], 9);
            Assert.Equal(fit.Intercept, est["(intercept)"][0], 9);
        }

        /// <summary>
        /// Covariance form with the intercept as a constant regressor: equals the estimator driven directly on [x, 1] (bit for bit) and the
        /// batch estimator with Penalty = βⁿ·δ, no standardization and the column of ones in the design (the regime-D objective of MATH.md §1.1).
        /// </summary>
        [Fact]
        public void CovarianceFormEqualsTheLibraryAndTheDecayingPriorObjective()
        {
            using var h = new CliHarness();
            var rows = Rows(250, 13);
            string data = h.WriteCsv("d.csv", new[] { "a", "b", "y" }, rows);
            var (exit, _, stderr) = CliHarness.Run("--data", data, "--target", "y", "--regressors", "a,b", "--estimator", "covariance", "--forgetting", "0.995", "--penalty", "0.5", "--out", h.PathOf("c"));
            Assert.True(exit == 0, stderr);

            var direct = new CovarianceFormEstimator(3, new CovarianceFormSettings { ForgettingFactor = 0.995, PriorWeight = 0.5 });
            foreach (var r in rows)
            {
                direct.Update(new[] { r[0], r[1], 1.0 }, r[2]);
            }

            var theta = new double[3];
            direct.CopyParametersTo(theta);
            var est = CliHarness.ReadEstimateCsv(h.PathOf("c.estimate.csv"));
            Assert.Equal(theta[0], est["a"][0]);
            Assert.Equal(theta[1], est["b"][0]);
            Assert.Equal(theta[2], est["(intercept)"][0]);
            Assert.False(CliHarness.ReadJson(h.PathOf("c.estimate.json")).GetProperty("standardize").GetBoolean());

            var x = rows.SelectMany(r => new[] { r[0], r[1], 1.0 }).ToArray();
            var fit = BatchRidge.Fit(new MatrixView(x, 250, 3), rows.Select(r => r[2]).ToArray(), new RidgeSettings
            {
                ForgettingFactor = 0.995,
                Penalty = Math.Pow(0.995, 250) * 0.5,
                FitIntercept = false,
                Standardize = false,
                Solver = RidgeSolver.Qr,
            });
            for (int j = 0; j < 3; j++)
            {
                Assert.Equal(fit.Coefficients[j], theta[j], 8);
            }
        }

        [Fact]
        public void GcvIsRefusedWhereTheFormCannotComputeIt()
        {
            using var h = new CliHarness();
            string data = h.WriteText("d.csv", "a,y\n1,2\n2,3\n");
            var (exit, _, stderr) = CliHarness.Run("--data", data, "--target", "y", "--regressors", "a", "--estimator", "covariance", "--penalty", "gcv");
            Assert.Equal(CliApp.ExitUsage, exit);
            Assert.Contains("--penalty gcv is not available for --estimator covariance", stderr, StringComparison.Ordinal);
        }
    }
}
