namespace OnlineRidge
{
    /// <summary>
    /// What a recursive estimator does with a sample whose values are unusable — a NaN or infinite entry in x or y, or a weight that is
    /// negative, NaN or infinite — as delivered by a sensor that drops out.
    /// </summary>
    /// <remarks>
    /// <para>A regressor vector of the wrong length always throws <see cref="System.ArgumentException"/>, whatever the policy: that is a
    /// programming error, not a dropout. Reads (predictions, solves) always validate and throw; the policy covers samples only.
    /// Data-dependent breakdown (a finite sample that would overflow the state or make it lose definiteness) is not a dropout either: it is
    /// still reported by <see cref="RidgeBreakdownException"/> or the <c>Try...</c> status, and the state stays as it was.</para>
    /// <para>Checking costs O(p) per sample under either policy; skipping allocates nothing.</para>
    /// </remarks>
    public enum InvalidSamplePolicy
    {
        /// <summary>
        /// Default: an unusable sample throws <see cref="System.ArgumentException"/> or <see cref="System.ArgumentOutOfRangeException"/>
        /// naming the parameter and the value; nothing changes. Choose this when bad values indicate a bug upstream.
        /// </summary>
        Throw = 0,

        /// <summary>
        /// An unusable sample is skipped: the state, <c>SampleCount</c> and the forgetting are untouched (a skipped sample is not a time step),
        /// and <c>SkippedSampleCount</c> grows by one. Choose this for long-running streams where sensors drop out and send NaN; watch the
        /// counter to detect a dead sensor.
        /// </summary>
        SkipAndCount = 1,
    }
}
