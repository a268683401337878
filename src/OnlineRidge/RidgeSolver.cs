namespace OnlineRidge
{
    /// <summary>
    /// How a regularized least-squares problem is solved. The members trade speed against accuracy;
    /// <c>κ</c> below is the 2-norm condition number of the weighted (centered, scaled) design stacked with the
    /// penalty rows, <c>ε = 2^-52</c>.
    /// </summary>
    /// <remarks>
    /// <list type="table">
    /// <listheader><term>solver</term><description>cost, accuracy, rank deficiency</description></listheader>
    /// <item><term><see cref="Cholesky"/></term><description>n·p²/2 + p³/6 multiply-adds; relative error about p·ε·κ² (normal equations square the condition);
    /// fails with <see cref="RidgeBreakdownException"/> when the Gram matrix plus penalty is not numerically positive definite or its condition estimate exceeds
    /// <see cref="RidgeSettings.CholeskyConditionLimit"/>. Never adds a hidden jitter.</description></item>
    /// <item><term><see cref="Qr"/></term><description>about 2·n·p² multiply-adds (Householder QR of the augmented system [√W·X; √λ·I]); backward stable, error about
    /// p·ε·(κ + κ²·η) with η the relative residual. Needs full column rank when the penalty is zero.</description></item>
    /// <item><term><see cref="Svd"/></term><description>the QR above plus an O(p³) SVD of the p×p triangular factor (its singular values are those of the weighted design);
    /// as accurate as QR, and gives the minimum-norm solution (relative to the prior) when the design is rank deficient, dropping singular values at or below
    /// <see cref="RidgeSettings.RankTolerance"/>·s₁.</description></item>
    /// <item><term><see cref="Auto"/></term><description>Cholesky when the condition estimate of the Gram matrix plus penalty (κ²) is at most 10⁶, so that about 9 or more digits
    /// survive; otherwise QR; SVD when the QR factor is numerically rank deficient. The result reports which ran.</description></item>
    /// </list>
    /// </remarks>
    public enum RidgeSolver
    {
        /// <summary>Choose by condition estimate: Cholesky when well conditioned, otherwise QR, SVD when rank deficient. See the type remarks.</summary>
        Auto = 0,

        /// <summary>Cholesky factorization of the normal equations (Gram matrix plus penalty). Fastest; loses digits like κ².</summary>
        Cholesky = 1,

        /// <summary>Householder QR of the weighted design stacked with the penalty rows. Backward stable; loses digits like κ.</summary>
        Qr = 2,

        /// <summary>SVD of the weighted design (through its triangular factor). Backward stable; minimum-norm solution when rank deficient.</summary>
        Svd = 3,
    }
}
