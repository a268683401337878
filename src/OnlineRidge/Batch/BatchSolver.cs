using System;
using System.Diagnostics.CodeAnalysis;
using MathNet.Numerics.LinearAlgebra;
using OnlineRidge.Internal;

namespace OnlineRidge
{
    /// <summary>The solvers behind <see cref="BatchRidge"/>, working in solver coordinates (centered, scaled, active columns).</summary>
    internal static class BatchSolver
    {
        private const double Eps = 2.220446049250313e-16;

        /// <summary>Refinement runs only when the condition estimate of H exceeds this (fewer than 3 digits can have been lost below it).</summary>
        internal const double RefinementConditionThreshold = 1e3;

        /// <summary>Auto takes the Cholesky solution when the condition estimate of H is at most this.</summary>
        internal const double AutoCholeskyLimit = 1e6;

        public static bool TrySolve(BatchProblem pr, MatrixView x, ReadOnlySpan<double> y, RidgeSettings settings, [NotNullWhen(true)] out RidgeFit? fit, out BreakdownInfo breakdown)
        {
            int q = pr.Q;
            double lambda = pr.Penalty;
            var gamma = new double[q];
            var f = new double[q * q];        // Hinv = F·Fᵀ
            var sMatrix = new double[q * q];  // S = Hinv·G (hat matrix in parameter space)
            var gram = new double[q * q];     // G, the data-only Gram matrix in solver coordinates (Cholesky and QR paths)
            double[]? dataFactor = null;      // T = [[R, z], [0, ρ]] of the data (QR path)
            double cond = 1.0;
            int rank = q;
            double trS = 0.0;
            double trS2 = 0.0;
            RidgeSolver used = settings.Solver == RidgeSolver.Auto ? RidgeSolver.Cholesky : settings.Solver;
            double tolerance = settings.RankTolerance ?? (Math.Max(pr.Rows, pr.Columns) * Eps);
            breakdown = BreakdownInfo.None;
            fit = null;

            if (q > 0)
            {
                bool done = false;
                if (settings.Solver is RidgeSolver.Cholesky or RidgeSolver.Auto)
                {
                    if (!TryCholesky(pr, x, y, settings, gamma, f, gram, out cond, out BreakdownInfo bd))
                    {
                        if (settings.Solver == RidgeSolver.Cholesky)
                        {
                            breakdown = bd;
                            return false;
                        }
                    }
                    else
                    {
                        done = true;
                        used = RidgeSolver.Cholesky;
                    }
                }

                if (!done)
                {
                    double[] t = DataFactor(pr, x, y, settings.MaxDegreeOfParallelism);
                    if (settings.Solver == RidgeSolver.Svd)
                    {
                        SolveSvd(pr, t, tolerance, gamma, f, sMatrix, out cond, out rank, out trS, out trS2);
                        used = RidgeSolver.Svd;
                    }
                    else if (TryQr(pr, t, tolerance, gamma, f, out cond, out BreakdownInfo bd))
                    {
                        used = RidgeSolver.Qr;
                        dataFactor = t;
                    }
                    else if (settings.Solver == RidgeSolver.Auto && bd.Kind == BreakdownKind.RankDeficient)
                    {
                        SolveSvd(pr, t, tolerance, gamma, f, sMatrix, out cond, out rank, out trS, out trS2);
                        used = RidgeSolver.Svd;
                    }
                    else
                    {
                        breakdown = bd;
                        return false;
                    }
                }

                if (used != RidgeSolver.Svd)
                {
                    HatMatrix(used == RidgeSolver.Qr ? dataFactor : null, gram, f, q, lambda, pr.Beta < 1.0 || settings.Covariance == CovarianceModel.Sandwich, sMatrix, out trS, out trS2);
                }
            }
            else
            {
                used = settings.Solver == RidgeSolver.Auto ? RidgeSolver.Qr : settings.Solver;
            }

            // Back to raw units.
            int p = pr.Columns;
            var theta = new double[p];
            for (int k = 0; k < q; k++)
            {
                int j = pr.Active[k];
                theta[j] = gamma[k] / pr.Scale[j];
            }

            double intercept = 0.0;
            if (pr.Intercept)
            {
                intercept = pr.MeanY;
                for (int j = 0; j < p; j++)
                {
                    intercept -= pr.MeanX[j] * theta[j];
                }
            }

            // Refine only where the solver can have lost digits (cond(H) > 10³); a well-conditioned solve is already accurate to rounding.
            if (q > 0 && settings.RefinementSteps > 0 && cond * cond > RefinementConditionThreshold && AllFinite(theta) && Guard.IsFinite(intercept))
            {
                Refine(pr, x, y, settings.RefinementSteps, f, theta, ref intercept);
                for (int k = 0; k < q; k++)
                {
                    gamma[k] = theta[pr.Active[k]] * pr.Scale[pr.Active[k]];
                }
            }

            for (int j = 0; j < p; j++)
            {
                if (!Guard.IsFinite(theta[j]))
                {
                    breakdown = new BreakdownInfo(BreakdownKind.NonFinite, j, theta[j], cond);
                    return false;
                }
            }

            if (!Guard.IsFinite(intercept))
            {
                breakdown = new BreakdownInfo(BreakdownKind.NonFinite, -1, intercept, cond);
                return false;
            }

            // Residual statistics from the residuals themselves.
            double rss = 0.0;
            double tss = 0.0;
            for (int i = 0; i < pr.Rows; i++)
            {
                double a = pr.Weights[i];
                if (a == 0.0)
                {
                    continue;
                }

                ReadOnlySpan<double> xi = x.Row(i);
                double pred = intercept;
                for (int j = 0; j < p; j++)
                {
                    pred += xi[j] * theta[j];
                }

                double r = y[i] - pred;
                rss += a * r * r;
                double dy = pr.Intercept ? y[i] - pr.MeanY : y[i];
                tss += a * dy * dy;
            }

            double penaltyTerm = 0.0;
            for (int k = 0; k < q; k++)
            {
                double d = gamma[k] - pr.PriorScaled[k];
                penaltyTerm += d * d;
            }

            double objective = rss + (lambda * penaltyTerm);
            double rSquared = tss > 0.0 ? 1.0 - (rss / tss) : double.NaN;
            int ic = pr.Intercept ? 1 : 0;
            double df = trS + ic;

            double t1 = 0.0;
            double t2 = 0.0;
            double[]? cFull = pr.Beta < 1.0 ? ForgettingCovariance(pr, x, f, sMatrix, out t1, out t2) : null;
            double nu;
            if (cFull is null)
            {
                nu = pr.DiscountedCount - ((2.0 * trS) - trS2) - ic;
            }
            else
            {
                nu = pr.DiscountedCount - (2.0 * t1) + t2;
            }

            double[] unitCovariance = BatchCovariance.Compute(pr, f, sMatrix, cFull, settings.Covariance);
            fit = new RidgeFit(
                theta, intercept, pr.Intercept, unitCovariance, rss, nu, rSquared, df, cond, used, rank,
                pr.Excluded, pr.Rows, pr.WeightSum, pr.DiscountedCount, lambda, objective);
            return true;
        }

        private static bool AllFinite(double[] v)
        {
            foreach (double e in v)
            {
                if (!Guard.IsFinite(e))
                {
                    return false;
                }
            }

            return true;
        }

        /// <summary>
        /// Iterative refinement with extra-precise residuals (Björck 1967): r = y − b₀ − Xθ and the gradient [Σaᵢrᵢ, Σaᵢ(xᵢ − m)rᵢ/S − λ(γ − γ₀)]
        /// accumulated in double-double on the raw data, correction δγ = F·Fᵀ·g (F the inverse factor of the solver), δc₀ = g₀/W.
        /// Keeps the best iterate; stops when the correction stops shrinking or reaches rounding level.
        /// </summary>
        private static void Refine(BatchProblem pr, MatrixView x, ReadOnlySpan<double> y, int steps, double[] f, double[] theta, ref double intercept)
        {
            int p = pr.Columns;
            int q = pr.Q;
            double lambda = pr.Penalty;
            var gHi = new double[p];
            var gLo = new double[p];
            var g = new double[q];
            var t = new double[q];
            var delta = new double[q];
            double previous = double.PositiveInfinity;
            for (int step = 0; step < steps; step++)
            {
                Array.Clear(gHi, 0, p);
                Array.Clear(gLo, 0, p);
                double g0Hi = 0.0;
                double g0Lo = 0.0;
                for (int i = 0; i < pr.Rows; i++)
                {
                    double a = pr.Weights[i];
                    if (a == 0.0)
                    {
                        continue;
                    }

                    ReadOnlySpan<double> xi = x.Row(i);
                    double rHi = DoubleDouble.TwoSum(y[i], -intercept, out double rLo);
                    for (int j = 0; j < p; j++)
                    {
                        DoubleDouble.AddProduct(ref rHi, ref rLo, -xi[j], theta[j], 0.0);
                    }

                    if (pr.Intercept)
                    {
                        DoubleDouble.AddProduct(ref g0Hi, ref g0Lo, a, rHi, rLo);
                    }

                    for (int k = 0; k < q; k++)
                    {
                        int j = pr.Active[k];
                        DoubleDouble.AddProduct(ref gHi[j], ref gLo[j], a * xi[j], rHi, rLo);
                    }
                }

                double g0 = g0Hi + g0Lo;
                for (int k = 0; k < q; k++)
                {
                    int j = pr.Active[k];
                    double gammaK = theta[j] * pr.Scale[j];
                    g[k] = (((gHi[j] + gLo[j]) - (pr.MeanX[j] * g0)) / pr.Scale[j]) - (lambda * (gammaK - pr.PriorScaled[k]));
                }

                // δγ = F (Fᵀ g).
                for (int l = 0; l < q; l++)
                {
                    double sum = 0.0;
                    for (int k = 0; k < q; k++)
                    {
                        sum += f[(k * q) + l] * g[k];
                    }

                    t[l] = sum;
                }

                double norm = 0.0;
                double size = 0.0;
                for (int k = 0; k < q; k++)
                {
                    double sum = 0.0;
                    for (int l = 0; l < q; l++)
                    {
                        sum += f[(k * q) + l] * t[l];
                    }

                    delta[k] = sum;
                    norm += sum * sum;
                    double gk = theta[pr.Active[k]] * pr.Scale[pr.Active[k]];
                    size += gk * gk;
                }

                norm = Math.Sqrt(norm);
                if (!(norm < previous) || !Guard.IsFinite(norm))
                {
                    return; // not contracting: keep the current (best) iterate
                }

                previous = norm;
                double shift = pr.Intercept ? g0 / pr.WeightSum : 0.0;
                for (int k = 0; k < q; k++)
                {
                    int j = pr.Active[k];
                    double dTheta = delta[k] / pr.Scale[j];
                    theta[j] += dTheta;
                    shift -= pr.MeanX[j] * dTheta;
                }

                if (pr.Intercept)
                {
                    intercept += shift;
                }

                if (norm <= 4.0 * Eps * Math.Sqrt(size))
                {
                    return;
                }
            }
        }

        /// <summary>Cholesky of H = G + λI from the Gram matrix of the weighted rows. F receives R⁻¹ (Hinv = F·Fᵀ).</summary>
        private static bool TryCholesky(BatchProblem pr, MatrixView x, ReadOnlySpan<double> y, RidgeSettings settings, double[] gamma, double[] f, double[] gram, out double cond, out BreakdownInfo breakdown)
        {
            int q = pr.Q;
            int c = q + 1;
            double lambda = pr.Penalty;
            double[] g = BatchKernels.Gram(pr, x.RowMajor, y, settings.MaxDegreeOfParallelism);

            var h = new double[q * q];
            for (int j = 0; j < q; j++)
            {
                for (int k = j; k < q; k++)
                {
                    h[(j * q) + k] = g[(j * c) + k];
                }

                for (int k = j; k < q; k++)
                {
                    gram[(j * q) + k] = g[(j * c) + k];
                    gram[(k * q) + j] = g[(j * c) + k];
                }

                h[(j * q) + j] += lambda;
                gamma[j] = g[(j * c) + q] + (lambda * pr.PriorScaled[j]);
            }

            if (!Triangular.CholeskyUpper(h, q, q, out int failIndex, out double failValue))
            {
                cond = double.PositiveInfinity;
                breakdown = new BreakdownInfo(BreakdownKind.NotPositiveDefinite, pr.Active[failIndex], failValue, double.NaN);
                return false;
            }

            cond = Triangular.ConditionEstimate(h, q, q, new double[Triangular.ConditionWorkLength(q)]);
            double condH = cond * cond;
            double limit = settings.Solver == RidgeSolver.Auto ? AutoCholeskyLimit : settings.CholeskyConditionLimit;
            if (!(condH <= limit))
            {
                breakdown = new BreakdownInfo(BreakdownKind.IllConditioned, -1, double.NaN, condH);
                return false;
            }

            Triangular.SolveUpperTransposed(h, q, q, gamma);
            Triangular.SolveUpper(h, q, q, gamma);
            Triangular.InvertUpper(h, q, q, f);
            breakdown = BreakdownInfo.None;
            return true;
        }

        /// <summary>
        /// The hat matrix in parameter space S = H⁻¹G (H = G + λI in solver coordinates, H⁻¹ = F·Fᵀ) and its traces, through the symmetric
        /// positive semi-definite M = Fᵀ·G·F, which is similar to S: tr S = tr M = Σₖ fₖᵀGfₖ and tr S² = ‖M‖²_F are sums of non-negative
        /// terms, S = F·(Fᵀ·G). Not as I − λ·H⁻¹: that equal form cancels catastrophically once λ ≫ sⱼ² (tr S = q − λ·tr H⁻¹ → 0 loses
        /// its relative accuracy: p = 1, λ/s² = 7·10³ gave df wrong in the 12th digit). With λ = 0 (full rank) S = I exactly.
        /// G is the data Gram matrix (Cholesky path) or RᵀR of the data factor (QR path). Cost about 7q³/6 multiply-adds.
        /// </summary>
        private static void HatMatrix(double[]? dataFactor, double[] gram, double[] f, int q, double lambda, bool needMatrix, double[] sMatrix, out double trS, out double trS2)
        {
            Array.Clear(sMatrix, 0, sMatrix.Length);
            trS = 0.0;
            trS2 = 0.0;
            if (lambda == 0.0)
            {
                for (int i = 0; i < q; i++)
                {
                    sMatrix[(i * q) + i] = 1.0;
                }

                trS = q;
                trS2 = q;
                return;
            }

            if (dataFactor is not null)
            {
                int c = q + 1;
                for (int i = 0; i < q; i++)
                {
                    for (int j = i; j < q; j++)
                    {
                        double g = 0.0;
                        for (int k = 0; k <= i; k++)
                        {
                            g += dataFactor[(k * c) + i] * dataFactor[(k * c) + j];
                        }

                        gram[(i * q) + j] = g;
                        gram[(j * q) + i] = g;
                    }
                }
            }

            // P = Fᵀ·G (F upper triangular), M = P·F.
            var pm = new double[q * q];
            for (int i = 0; i < q; i++)
            {
                for (int j = 0; j < q; j++)
                {
                    double v = 0.0;
                    for (int k = 0; k <= i; k++)
                    {
                        v += f[(k * q) + i] * gram[(k * q) + j];
                    }

                    pm[(i * q) + j] = v;
                }
            }

            for (int i = 0; i < q; i++)
            {
                for (int j = 0; j < q; j++)
                {
                    double v = 0.0;
                    for (int k = 0; k <= j; k++)
                    {
                        v += pm[(i * q) + k] * f[(k * q) + j];
                    }

                    trS2 += v * v;
                    if (i == j)
                    {
                        trS += v;
                    }
                }
            }

            if (!needMatrix)
            {
                return;
            }

            for (int i = 0; i < q; i++)
            {
                for (int j = 0; j < q; j++)
                {
                    double v = 0.0;
                    for (int k = i; k < q; k++)
                    {
                        v += f[(i * q) + k] * pm[(k * q) + j];
                    }

                    sMatrix[(i * q) + j] = v;
                }
            }
        }

        /// <summary>Householder factor T = [[R, z], [0, ρ]] of the weighted rows in solver coordinates ((q+1)×(q+1), row-major).</summary>
        internal static double[] DataFactor(BatchProblem pr, MatrixView x, ReadOnlySpan<double> y, int degreeOfParallelism = 1) =>
            BatchKernels.Factor(pr, x.RowMajor, y, degreeOfParallelism);

        /// <summary>QR of [[R, z], [√λ·I, √λ·γ₀]]; F receives R̄⁻¹.</summary>
        private static bool TryQr(BatchProblem pr, double[] t, double tolerance, double[] gamma, double[] f, out double cond, out BreakdownInfo breakdown)
        {
            int q = pr.Q;
            int c = q + 1;
            double lambda = pr.Penalty;
            double[] rbar;
            if (lambda > 0.0)
            {
                var acc = new HouseholderAccumulator(c, c + q);
                var row = new double[c];
                for (int j = 0; j < c; j++)
                {
                    Array.Copy(t, j * c, row, 0, c);
                    acc.AddRow(row);
                }

                double sl = Math.Sqrt(lambda);
                for (int k = 0; k < q; k++)
                {
                    Array.Clear(row, 0, c);
                    row[k] = sl;
                    row[q] = sl * pr.PriorScaled[k];
                    acc.AddRow(row);
                }

                acc.Flush();
                rbar = acc.Factor;
            }
            else
            {
                rbar = t;
            }

            cond = Triangular.ConditionEstimate(rbar, q, c, new double[Triangular.ConditionWorkLength(q)]);
            if (!(cond * tolerance < 1.0))
            {
                int worst = 0;
                double smallest = double.PositiveInfinity;
                for (int j = 0; j < q; j++)
                {
                    double d = Math.Abs(rbar[(j * c) + j]);
                    if (d < smallest)
                    {
                        smallest = d;
                        worst = j;
                    }
                }

                breakdown = new BreakdownInfo(BreakdownKind.RankDeficient, pr.Active[worst], smallest, cond);
                return false;
            }

            for (int k = 0; k < q; k++)
            {
                gamma[k] = rbar[(k * c) + q];
            }

            Triangular.SolveUpper(rbar, q, c, gamma);
            Triangular.InvertUpper(rbar, q, c, f);
            breakdown = BreakdownInfo.None;
            return true;
        }

        /// <summary>SVD of the data factor R (q×q): ridge or minimum-norm solution, Hinv factor, hat traces.</summary>
        private static void SolveSvd(BatchProblem pr, double[] t, double tolerance, double[] gamma, double[] f, double[] sMatrix, out double cond, out int rank, out double trS, out double trS2)
        {
            int q = pr.Q;
            int c = q + 1;
            double lambda = pr.Penalty;
            Matrix<double> r = Matrix<double>.Build.Dense(q, q, (i, j) => j >= i ? t[(i * c) + j] : 0.0);
            var svd = r.Svd(true);
            Vector<double> s = svd.S;
            Matrix<double> u = svd.U;
            Matrix<double> vt = svd.VT;

            // Residual of the prior: z − R·γ₀.
            var r0 = new double[q];
            for (int i = 0; i < q; i++)
            {
                double v = t[(i * c) + q];
                for (int j = i; j < q; j++)
                {
                    v -= t[(i * c) + j] * pr.PriorScaled[j];
                }

                r0[i] = v;
            }

            double s1 = q > 0 ? s[0] : 0.0;
            double cut = tolerance * s1;
            var coef = new double[q];
            var hinvDiag = new double[q];
            var hat = new double[q];
            rank = 0;
            trS = 0.0;
            trS2 = 0.0;
            for (int k = 0; k < q; k++)
            {
                double sk = s[k];
                double ck = 0.0;
                for (int i = 0; i < q; i++)
                {
                    ck += u[i, k] * r0[i];
                }

                if (lambda > 0.0)
                {
                    coef[k] = sk / ((sk * sk) + lambda) * ck;
                    hinvDiag[k] = 1.0 / Math.Sqrt((sk * sk) + lambda);
                    hat[k] = sk * sk / ((sk * sk) + lambda);
                    rank++;
                }
                else if (sk > cut && sk > 0.0)
                {
                    coef[k] = ck / sk;
                    hinvDiag[k] = 1.0 / sk;
                    hat[k] = 1.0;
                    rank++;
                }

                trS += hat[k];
                trS2 += hat[k] * hat[k];
            }

            for (int j = 0; j < q; j++)
            {
                double g = pr.PriorScaled[j];
                for (int k = 0; k < q; k++)
                {
                    g += vt[k, j] * coef[k];
                    f[(j * q) + k] = vt[k, j] * hinvDiag[k];
                }

                gamma[j] = g;
            }

            if (rank < q && pr.Equilibrated)
            {
                RawMinimumNorm(pr, vt, rank, gamma);
            }

            for (int i = 0; i < q; i++)
            {
                for (int j = 0; j < q; j++)
                {
                    double h = 0.0;
                    for (int k = 0; k < q; k++)
                    {
                        h += vt[k, i] * hat[k] * vt[k, j];
                    }

                    sMatrix[(i * q) + j] = h;
                }
            }

            double sq = q > 0 ? s[q - 1] : 0.0;
            cond = lambda > 0.0 ? Math.Sqrt(((s1 * s1) + lambda) / ((sq * sq) + lambda)) : (sq > 0.0 ? s1 / sq : double.PositiveInfinity);
        }

        /// <summary>
        /// Rank-deficient SVD solution under the internal equilibration (zero penalty, no standardization): the SVD gives the solution of
        /// minimal ‖γ − γ₀‖ in equilibrated coordinates γ = S·θ, but the minimum-norm solution promised is minimal in the raw metric
        /// ‖θ − θ₀‖ (MATH.md §1.3). All solutions are γ + N·z with N the right singular vectors of the dropped singular values, so
        /// z minimizes ‖S⁻¹(γ − γ₀) + S⁻¹N·z‖, a small least-squares problem (MathNet QR; S⁻¹N has full column rank). O(q·k²).
        /// The rank test itself stays in equilibrated coordinates, where it does not depend on the units of the columns.
        /// </summary>
        private static void RawMinimumNorm(BatchProblem pr, Matrix<double> vt, int rank, double[] gamma)
        {
            int q = pr.Q;
            int k = q - rank;
            Matrix<double> m = Matrix<double>.Build.Dense(q, k, (j, l) => vt[rank + l, j] / pr.Scale[pr.Active[j]]);
            Vector<double> r = Vector<double>.Build.Dense(q, j => -(gamma[j] - pr.PriorScaled[j]) / pr.Scale[pr.Active[j]]);
            Vector<double> z = m.QR().Solve(r);
            for (int j = 0; j < q; j++)
            {
                double shift = 0.0;
                for (int l = 0; l < k; l++)
                {
                    shift += vt[rank + l, j] * z[l];
                }

                gamma[j] += shift;
            }
        }

        /// <summary>
        /// For β &lt; 1: the sandwich C = Hf⁻¹ G₂ Hf⁻¹ in solver coordinates with the intercept first (MATH.md §6.3), and the traces
        /// t1 = tr(Hf⁻¹G₂), t2 = tr(Sf·Hf⁻¹G₂) of the residual degrees of freedom (§6.4). Gram-class accuracy (a smooth statistic).
        /// </summary>
        private static double[] ForgettingCovariance(BatchProblem pr, MatrixView x, double[] f, double[] sMatrix, out double t1, out double t2)
        {
            int q = pr.Q;
            int ic = pr.Intercept ? 1 : 0;
            int m = q + ic;
            var g2 = new double[m * m];
            var u = new double[m];
            int n = pr.Rows;
            for (int i = 0; i < n; i++)
            {
                double a = pr.Weights[i];
                if (a == 0.0)
                {
                    continue;
                }

                double g = a * Math.Pow(pr.Beta, n - 1 - i); // w β^(2 age)
                ReadOnlySpan<double> xi = x.Row(i);
                if (ic == 1)
                {
                    u[0] = 1.0;
                }

                for (int k = 0; k < q; k++)
                {
                    int j = pr.Active[k];
                    u[k + ic] = (xi[j] - pr.MeanX[j]) / pr.Scale[j];
                }

                for (int r = 0; r < m; r++)
                {
                    double gr = g * u[r];
                    for (int s = 0; s < m; s++)
                    {
                        g2[(r * m) + s] += gr * u[s];
                    }
                }
            }

            // Hf⁻¹ = blockdiag(1/W, F·Fᵀ).
            var hinv = new double[m * m];
            if (ic == 1)
            {
                hinv[0] = 1.0 / pr.WeightSum;
            }

            for (int i = 0; i < q; i++)
            {
                for (int j = 0; j < q; j++)
                {
                    double h = 0.0;
                    for (int k = 0; k < q; k++)
                    {
                        h += f[(i * q) + k] * f[(j * q) + k];
                    }

                    hinv[((i + ic) * m) + j + ic] = h;
                }
            }

            var k1 = Multiply(hinv, g2, m);       // Hf⁻¹ G₂
            var cov = Multiply(k1, hinv, m);      // Hf⁻¹ G₂ Hf⁻¹
            var sf = new double[m * m];
            if (ic == 1)
            {
                sf[0] = 1.0;
            }

            for (int i = 0; i < q; i++)
            {
                for (int j = 0; j < q; j++)
                {
                    sf[((i + ic) * m) + j + ic] = sMatrix[(i * q) + j];
                }
            }

            var k2 = Multiply(sf, k1, m);
            t1 = 0.0;
            t2 = 0.0;
            for (int i = 0; i < m; i++)
            {
                t1 += k1[(i * m) + i];
                t2 += k2[(i * m) + i];
            }

            return cov;
        }

        private static double[] Multiply(double[] a, double[] b, int m)
        {
            var c = new double[m * m];
            for (int i = 0; i < m; i++)
            {
                for (int k = 0; k < m; k++)
                {
                    double aik = a[(i * m) + k];
                    if (aik == 0.0)
                    {
                        continue;
                    }

                    for (int j = 0; j < m; j++)
                    {
                        c[(i * m) + j] += aik * b[(k * m) + j];
                    }
                }
            }

            return c;
        }
    }
}
