namespace OnlineRidge
{
    /// <summary>How the parameter covariance (standard errors, confidence and prediction intervals) is computed (MATH.md §6.3).</summary>
    public enum CovarianceModel
    {
        /// <summary>
        /// The exact covariance of the estimator under the noise model Var(eᵢ) = σ²/wᵢ: σ²·H⁻¹G₂H⁻¹, with G₂ = Σ β²⁽ⁿ⁻ⁱ⁾wᵢxᵢxᵢᵀ the Gram matrix
        /// forgotten with β² (MATH.md §6.2–6.3). Equals σ²(XᵀWX)⁻¹ for ordinary least squares without forgetting. Default.
        /// </summary>
        Sandwich = 0,

        /// <summary>
        /// The common shortcut σ²·H⁻¹ (the covariance-form matrix P scaled by σ²). With β &lt; 1 and stationary regressors it overstates the
        /// variance by a factor of about 1 + β (≈ 2), because G₂ ≈ G(1 − β)/(1 − β²) (MATH.md §6.3); with a penalty it also ignores the
        /// shrinkage of the variance. Offered for comparison with other tools and for the cheapest streaming estimate.
        /// </summary>
        InverseHessian = 1,
    }
}
