using System;
using System.Collections.Generic;
using System.Linq;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Batch
{
    /// <summary>
    /// Ordinary least squares (penalty 0) against the certified values of all 11 NIST StRD linear least-squares datasets
    /// (source: NIST ITL Statistical Reference Datasets; files in Data/NistStrd). Accuracy is the log relative error (LRE, digits).
    /// </summary>
    public class NistCertifiedTests
    {
        public static IEnumerable<object[]> Cases() =>
            from name in NistDataset.Names
            from solver in new[] { RidgeSolver.Qr, RidgeSolver.Svd, RidgeSolver.Cholesky, RidgeSolver.Auto }
            from standardize in new[] { false, true }
            select new object[] { name, solver, standardize };

        internal static RidgeFit FitNist(NistDataset ds, RidgeSolver solver, bool standardize) =>
            BatchRidge.Fit(
                new MatrixView(ds.X, ds.Rows, ds.Columns),
                ds.Y,
                new RidgeSettings { Solver = solver, FitIntercept = ds.HasIntercept, Standardize = standardize });

        [Theory]
        [MemberData(nameof(Cases))]
        public void OrdinaryLeastSquaresMatchesCertifiedValues(string name, RidgeSolver solver, bool standardize)
        {
            var ds = NistDataset.Load(name);
            if (solver == RidgeSolver.Cholesky && !BatchRidge.TryFit(new MatrixView(ds.X, ds.Rows, ds.Columns), ds.Y,
                    new RidgeSettings { Solver = solver, FitIntercept = ds.HasIntercept, Standardize = standardize }, default, out _, out BreakdownInfo bd))
            {
                // Cholesky may refuse, but only by reporting the ill-conditioning it detected; it must never fail silently.
                Assert.True(bd.Kind is BreakdownKind.IllConditioned or BreakdownKind.NotPositiveDefinite, bd.ToString());
                Assert.True(name is "Filip" or "Wampler4" or "Wampler5" or "Wampler3" or "Longley" or "Wampler1" or "Wampler2",
                    $"Cholesky refused the well-conditioned set {name}: {bd}");
                return;
            }

            RidgeFit fit = FitNist(ds, solver, standardize);
            var d = ds.Digits(fit);
            double min = new[] { d.Coefficients, d.StandardErrors, d.ResidualSd, d.RSquared }.Min();

            // Thresholds (issue requirement, measured with margin): QR/SVD ≥ 9 digits everywhere except Filip (≥ 7).
            // Cholesky: the digits its own condition estimate promises, 16 − log10(cond(H)) − 2, floored at 0; on Filip ≥ 7 when it answers.
            double required = solver switch
            {
                RidgeSolver.Qr or RidgeSolver.Svd => name == "Filip" ? 7.0 : 9.0,
                RidgeSolver.Auto => name == "Filip" ? 7.0 : 9.0,
                _ => name == "Filip" ? 7.0 : Math.Max(0.0, Math.Min(9.0, 16.0 - (2.0 * Math.Log10(fit.ConditionEstimate)) - 2.0)),
            };
            Assert.True(min >= required,
                $"{name} {solver} std={standardize}: digits coef {d.Coefficients:F1}, se {d.StandardErrors:F1}, sd {d.ResidualSd:F1}, R2 {d.RSquared:F1}; required {required:F1}; cond {fit.ConditionEstimate:E2}; solver used {fit.SolverUsed}");
            Assert.NotEqual(RidgeSolver.Auto, fit.SolverUsed);
        }
    }
}
