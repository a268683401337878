namespace OnlineRidge
{
    /// <summary>How the penalty (prior information) of a recursive form ages with forgetting (MATH.md §1.1).</summary>
    /// <remarks>The two regimes coincide when β = 1. For β &lt; 1 they differ materially: under <see cref="Decaying"/> the prior's relative
    /// weight goes to zero, under <see cref="Constant"/> it stays.</remarks>
    public enum PenaltyRegime
    {
        /// <summary>
        /// Regime C, true ridge: the penalty λ‖D(θ − θ₀)‖² is the same at every time, whatever the forgetting. Immune to covariance windup
        /// (MATH.md §2.3). The batch equivalent is <see cref="BatchRidge"/> with the same penalty.
        /// </summary>
        Constant = 0,

        /// <summary>
        /// Regime D, classic recursive least squares: the penalty is treated as data observed before the first sample and forgotten with the
        /// data, so after n updates it is βⁿ·λ‖D(θ − θ₀)‖². The batch equivalent is <see cref="BatchRidge"/> with penalty βⁿ·λ.
        /// </summary>
        Decaying = 1,
    }
}
