using System;

namespace OnlineRidge
{
    /// <summary>
    /// The parameter covariance per unit noise variance, C with Cov(θ̂, b̂₀) = σ²·C, in raw units, ordered θ₁..θ_p then b₀
    /// (MATH.md §6.3: C = H⁻¹ G₂ H⁻¹ mapped through the centering and scaling; <see cref="CovarianceModel.InverseHessian"/> gives H⁻¹).
    /// </summary>
    internal static class BatchCovariance
    {
        /// <param name="pr">The problem (means, scales, active columns).</param>
        /// <param name="f">Inverse factor F of the solver, Hinv = F·Fᵀ (q×q, solver coordinates).</param>
        /// <param name="hat">S = H⁻¹G in solver coordinates (q×q), computed from the data spectrum.</param>
        /// <param name="forgetting">For β &lt; 1: the sandwich in solver coordinates (intercept first), else null.</param>
        /// <param name="model">Exact sandwich or the inverse-Hessian shortcut.</param>
        /// <returns>C, (p + ic)² row-major.</returns>
        public static double[] Compute(BatchProblem pr, double[] f, double[] hat, double[]? forgetting, CovarianceModel model)
        {
            int p = pr.Columns;
            int q = pr.Q;
            int ic = pr.Intercept ? 1 : 0;
            int m = p + ic;
            var cov = new double[m * m];
            double lambda = pr.Penalty;
            if (model == CovarianceModel.Sandwich && forgetting is null && lambda > 0.0)
            {
                // β = 1 with a penalty: H⁻¹GH⁻¹ = S·H⁻¹ with S from the spectrum (I − λH⁻¹ would cancel once λ ≫ sⱼ²).
                int mq0 = q + ic;
                forgetting = new double[mq0 * mq0];
                if (ic == 1)
                {
                    forgetting[0] = 1.0 / pr.WeightSum;
                }

                for (int a = 0; a < q; a++)
                {
                    for (int b = 0; b < q; b++)
                    {
                        double sum = 0.0;
                        for (int k = 0; k < q; k++)
                        {
                            double hinv = 0.0;
                            for (int t = 0; t < q; t++)
                            {
                                hinv += f[(k * q) + t] * f[(b * q) + t];
                            }

                            sum += hat[(a * q) + k] * hinv;
                        }

                        forgetting[((a + ic) * mq0) + b + ic] = sum;
                    }
                }

                // Symmetrize (S·H⁻¹ is symmetric in exact arithmetic).
                for (int a = 0; a < mq0; a++)
                {
                    for (int b = a + 1; b < mq0; b++)
                    {
                        double v = 0.5 * (forgetting[(a * mq0) + b] + forgetting[(b * mq0) + a]);
                        forgetting[(a * mq0) + b] = v;
                        forgetting[(b * mq0) + a] = v;
                    }
                }
            }

            if (forgetting is not null && model == CovarianceModel.Sandwich)
            {
                // J maps (c₀, γ) to (θ, b₀): θⱼ = γₖ/Sⱼ, b₀ = c₀ − Σ mⱼγₖ/Sⱼ.
                int mq = q + ic;
                var j = new double[m * mq];
                for (int k = 0; k < q; k++)
                {
                    int col = pr.Active[k];
                    j[(col * mq) + k + ic] = 1.0 / pr.Scale[col];
                    if (ic == 1)
                    {
                        j[(p * mq) + k + 1] = -pr.MeanX[col] / pr.Scale[col];
                    }
                }

                if (ic == 1)
                {
                    j[p * mq] = 1.0;
                }

                var jc = new double[m * mq];
                for (int r = 0; r < m; r++)
                {
                    for (int c = 0; c < mq; c++)
                    {
                        double s = 0.0;
                        for (int k = 0; k < mq; k++)
                        {
                            s += j[(r * mq) + k] * forgetting[(k * mq) + c];
                        }

                        jc[(r * mq) + c] = s;
                    }
                }

                for (int r = 0; r < m; r++)
                {
                    for (int c = 0; c < m; c++)
                    {
                        double s = 0.0;
                        for (int k = 0; k < mq; k++)
                        {
                            s += jc[(r * mq) + k] * j[(c * mq) + k];
                        }

                        cov[(r * m) + c] = s;
                    }
                }

                return cov;
            }

            // λ = 0 without forgetting, or the inverse-Hessian model: C = L·Lᵀ + (1/W)·e_b₀e_b₀ᵀ, with L the rows F/Sⱼ (and −(Fᵀv)ᵀ for b₀,
            // vₖ = mⱼ/Sⱼ); dot products of rows keep the ordinary least-squares case accurate to rounding.
            var l = new double[m * q];
            for (int k = 0; k < q; k++)
            {
                int col = pr.Active[k];
                double inv = 1.0 / pr.Scale[col];
                for (int t = 0; t < q; t++)
                {
                    l[(col * q) + t] = f[(k * q) + t] * inv;
                }

                if (ic == 1)
                {
                    double v = pr.MeanX[col] * inv;
                    for (int t = 0; t < q; t++)
                    {
                        l[(p * q) + t] -= v * f[(k * q) + t];
                    }
                }
            }

            for (int r = 0; r < m; r++)
            {
                for (int c = 0; c < m; c++)
                {
                    double s = 0.0;
                    for (int t = 0; t < q; t++)
                    {
                        s += l[(r * q) + t] * l[(c * q) + t];
                    }

                    cov[(r * m) + c] = s;
                }
            }

            if (ic == 1)
            {
                cov[(p * m) + p] += 1.0 / pr.WeightSum;
            }

            return cov;
        }
    }
}
