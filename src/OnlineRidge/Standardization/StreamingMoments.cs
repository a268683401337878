using System;
using System.IO;
#if NET
using System.Runtime.CompilerServices;
#endif
using OnlineRidge.Internal;
using OnlineRidge.Persistence;

namespace OnlineRidge.Standardization
{
    /// <summary>
    /// Exponentially weighted mean vector and centered co-moment matrix of a stream of vectors u (MATH.md §4.1–4.2): with effective weights
    /// aᵢ = βⁿ⁻ⁱwᵢ, W = Σ aᵢ, m = Σ aᵢuᵢ / W, M = Σ aᵢ(uᵢ − m)(uᵢ − m)ᵀ, and the population standard deviations σⱼ = √(Mⱼⱼ / W).
    /// Usable alone (streaming standardization, monitoring) and the state behind the intercept of <see cref="InformationFormEstimator"/>.
    /// </summary>
    /// <remarks>
    /// <para><b>Algorithm.</b> West's (1979) update with forgetting: W ← βW + w, δ = u − m, m ← m + (w/W)·δ,
    /// M ← βM + (w·β·W_old/W)·δδᵀ (upper triangle only, so M is exactly symmetric). Merging uses the pairwise formula of Chan, Golub &amp;
    /// LeVeque (1979, 1983). The centered form never forms Σ aᵢuᵢuᵢᵀ, so it does not suffer the cancellation of the textbook one-pass formula:
    /// the error is of order ε relative to M itself, not to Σ aᵢuᵢ² (a large mean costs nothing).</para>
    /// <para><b>Warm-up.</b> Until a sample of positive weight arrives (W = 0) the means, variances and standard deviations are NaN (undefined)
    /// and the co-moments 0. After one such sample the means equal it and the variances are 0 (population variance of one point; no W − 1
    /// divisor is ever used). A component that has been exactly constant since the start has mean exactly that constant and variance exactly 0.
    /// Samples of weight 0 only forget (W and M are multiplied by β — M through its scalar factor, so to rounding — the means are unchanged)
    /// at O(1) cost.</para>
    /// <para><b>Cost.</b> d(d+1)/2 + O(d·v) multiply-adds per update (v = hardware vector length, 1 in the portable build) and three divisions,
    /// no allocation; a zero-weight update is O(1). The forgetting costs nothing per entry: M is held as s·M̃ with the scalar s = β-power, so
    /// an update adds (w·β·W_old/(W·s))·δδᵀ to M̃ and multiplies s by β; about every 2³²-fold decay of s (every ≈ 22 000 updates at β = 0.999)
    /// M̃ is rescaled by an exact power of two (O(d²), no rounding). Storage about d·⌈d⌉ᵥ + 2d doubles (rows padded to whole vectors).
    /// Merge O(d²).</para>
    /// <para><b>Failures.</b> Wrong length, non-finite values or a negative weight throw <see cref="ArgumentException"/> before any change
    /// (with <see cref="InvalidSamplePolicy.SkipAndCount"/> a non-finite entry or a bad weight is instead skipped and counted in
    /// <see cref="SkippedSampleCount"/>; a wrong length still throws). An
    /// update that would overflow throws <see cref="RidgeBreakdownException"/> (<see cref="BreakdownKind.NonFinite"/>; or false from
    /// <see cref="TryUpdate"/>) and changes nothing.</para>
    /// <para><b>Persistence.</b> <see cref="WriteSnapshot"/> and <see cref="ReadSnapshot"/> save and restore the complete state bit for bit.</para>
    /// <para><b>Threads and reproducibility.</b> Not thread-safe (one writer; readers must synchronize). Same inputs, runtime and hardware give the
    /// same bits; the last bits may differ between the net10.0 and netstandard2.0 builds.</para>
    /// </remarks>
    public sealed class StreamingMoments
    {
        /// <summary><see cref="BreakdownInfo.None"/>, read once (the hot update path then copies a field instead of calling the property).</summary>
        private static readonly BreakdownInfo Success = BreakdownInfo.None;

        private readonly int d;
        private readonly double beta;
        private readonly double[] mean;
        private readonly ScaledGram comoment;
        // δ's first d − 1 entries, zero-padded to the co-moment's row length (64-byte aligned from deltaStart); the merge's m_B − m_A.
        private readonly double[] delta;
        private readonly int deltaStart;
        private readonly double[] difference;
        private readonly InvalidSamplePolicy invalidSamples;
        private double weightSum;
        private long skipped;

        private const string SnapshotKind = "StreamingMoments";

        /// <summary>Layout 2 adds the scale of the stored co-moment ("comomentScale"); layout 1 (scale 1) is still read.</summary>
        private const int SnapshotVersion = 2;

        /// <summary>Creates an empty state for vectors of length <paramref name="dimension"/>.</summary>
        /// <param name="dimension">Length d ≥ 1 of every vector.</param>
        /// <param name="forgettingFactor">Forgetting factor β in (0, 1]; 1 (default) means none.</param>
        /// <param name="invalidSamples">What <see cref="Update(ReadOnlySpan{double}, double)"/> does with a vector holding NaN or ∞ or a
        /// negative, NaN or infinite weight: throw (default) or skip it and count it in <see cref="SkippedSampleCount"/>.</param>
        /// <exception cref="ArgumentOutOfRangeException">d below 1, β outside (0, 1], or an undefined policy.</exception>
        public StreamingMoments(int dimension, double forgettingFactor = 1.0, InvalidSamplePolicy invalidSamples = InvalidSamplePolicy.Throw)
        {
            if (dimension < 1)
            {
                Guard.ThrowOutOfRange(nameof(dimension), dimension, "must be >= 1");
            }

            Guard.ForgettingFactor(forgettingFactor, nameof(forgettingFactor));
            Guard.Policy(invalidSamples, nameof(invalidSamples));
            this.invalidSamples = invalidSamples;
            d = dimension;
            beta = forgettingFactor;
            mean = new double[d];
            comoment = new ScaledGram(d, beta);
            delta = GramUpdateKernels.AllocateAligned(comoment.Stride, out deltaStart);
            difference = new double[d];
        }

        /// <summary>Length d of the vectors.</summary>
        public int Dimension => d;

        /// <summary>The forgetting factor β.</summary>
        public double ForgettingFactor => beta;

        /// <summary>Number of updates so far, including zero-weight updates (after a merge: the sum of both counts).</summary>
        public long SampleCount { get; private set; }

        /// <summary>What an update does with an unusable vector or weight (see the constructor).</summary>
        public InvalidSamplePolicy InvalidSamples => invalidSamples;

        /// <summary>
        /// Number of vectors skipped as unusable under <see cref="InvalidSamplePolicy.SkipAndCount"/> (after a merge: the sum of both); they
        /// are not in <see cref="SampleCount"/> and did not forget. O(1).
        /// </summary>
        public long SkippedSampleCount => skipped;

        /// <summary>Total effective weight W = Σ βⁿ⁻ⁱwᵢ (MATH.md §4.1, §9).</summary>
        public double WeightSum => weightSum;

        /// <summary>The means as stored (0 while W = 0), for the estimators.</summary>
        internal ReadOnlySpan<double> RawMeans => mean;

        /// <summary>The co-moment M = s·M̃ (read entries through <see cref="ScaledGram.Get"/>), for the estimators.</summary>
        internal ScaledGram Comoments => comoment;

        /// <summary>Adds the vector <paramref name="u"/> with weight 1. O(d²), no allocation.</summary>
        /// <param name="u">Vector of length <see cref="Dimension"/>.</param>
        /// <exception cref="ArgumentException">Wrong length, or a non-finite entry under <see cref="InvalidSamplePolicy.Throw"/>.</exception>
        /// <exception cref="RidgeBreakdownException">The update would overflow; nothing changed.</exception>
        public void Update(ReadOnlySpan<double> u) => Update(u, 1.0);

        /// <summary>Adds the vector <paramref name="u"/> with weight <paramref name="weight"/> (0 only forgets). O(d²), no allocation.</summary>
        /// <param name="u">Vector of length <see cref="Dimension"/>.</param>
        /// <param name="weight">Weight, finite and ≥ 0.</param>
        /// <exception cref="ArgumentException">Wrong length, or under <see cref="InvalidSamplePolicy.Throw"/> a non-finite entry or a negative
        /// or non-finite weight (under <see cref="InvalidSamplePolicy.SkipAndCount"/> those are skipped and counted).</exception>
        /// <exception cref="RidgeBreakdownException">The update would overflow; nothing changed.</exception>
        public void Update(ReadOnlySpan<double> u, double weight)
        {
            if (!TryUpdate(u, weight, out BreakdownInfo breakdown))
            {
                Guard.ThrowBreakdown(breakdown);
            }
        }

        /// <summary>As <see cref="Update(ReadOnlySpan{double}, double)"/>, but reports an overflow by returning false (nothing changed).</summary>
        /// <param name="u">Vector of length <see cref="Dimension"/>.</param>
        /// <param name="weight">Weight, finite and ≥ 0.</param>
        /// <param name="breakdown"><see cref="BreakdownKind.NonFinite"/> on overflow, otherwise <see cref="BreakdownInfo.None"/>.</param>
        /// <returns>True when the sample was accepted (or skipped by <see cref="InvalidSamplePolicy.SkipAndCount"/>).</returns>
        /// <exception cref="ArgumentException">Wrong length, or under <see cref="InvalidSamplePolicy.Throw"/> a non-finite entry or a negative
        /// or non-finite weight.</exception>
        public bool TryUpdate(ReadOnlySpan<double> u, double weight, out BreakdownInfo breakdown)
        {
            Guard.Length(u.Length, d, nameof(u));
            if (invalidSamples == InvalidSamplePolicy.SkipAndCount && !Guard.IsUsableSample(u, 0.0, weight))
            {
                skipped++;
                breakdown = Success;
                return true;
            }

            Guard.AllFinite(u, nameof(u));
            Guard.Weight(weight, nameof(weight));
            return TryUpdateValidated(u, weight, out breakdown);
        }

        /// <summary>The update without argument checks (the caller has validated u and the weight).</summary>
        internal bool TryUpdateValidated(ReadOnlySpan<double> u, double weight, out BreakdownInfo breakdown) =>
            TryUpdateValidated(u.Slice(0, d - 1), u[d - 1], weight, out breakdown);

        /// <summary>The update of u = (head, last) without argument checks (the caller has validated both and the weight).</summary>
#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
#endif
        internal bool TryUpdateValidated(ReadOnlySpan<double> head, double last, double weight, out BreakdownInfo breakdown)
        {
            double oldW = weightSum;
            double newW = (beta * oldW) + weight;
            if (weight == 0.0 || newW == 0.0)
            {
                // Pure forgetting (or nothing yet): means unchanged, M scaled through its scalar factor only (O(1)).
                weightSum = beta * oldW;
                comoment.Add(0.0, default, 0.0, comoment.ProposedTrace(0.0, 0.0));
                SampleCount++;
                breakdown = Success;
                return true;
            }

            Span<double> centered = delta.AsSpan(deltaStart, comoment.Stride);
            double deltaLast = last - mean[d - 1];
            double norm2 = GramUpdateKernels.Center(head, mean, centered) + (deltaLast * deltaLast);

            // Weight fraction of the new sample and the co-moment coefficient w·β·W_old/W_new (MATH.md §4.1).
            double r = weight / newW;
            double coefficient = weight * (beta * oldW / newW);
            double newTrace = comoment.ProposedTrace(coefficient, norm2);
            if (!(newTrace < OverflowLevel) || !Guard.IsFinite(newW))
            {
                breakdown = new BreakdownInfo(BreakdownKind.NonFinite, -1, newTrace, double.NaN);
                return false;
            }

            GramUpdateKernels.Axpy(r, centered.Slice(0, d - 1), mean);
            mean[d - 1] += r * deltaLast;
            comoment.Add(coefficient, centered, deltaLast, newTrace);
            weightSum = newW;
            SampleCount++;
            breakdown = Success;
            return true;
        }

        /// <summary>Every |entry| of M is at most its largest diagonal entry, hence at most its trace; keeping the trace below this keeps M finite.</summary>
        private const double OverflowLevel = ScaledGram.OverflowLevel;

        /// <summary>Weighted mean of component <paramref name="index"/>; NaN while W = 0. O(1).</summary>
        /// <param name="index">Component, 0 ≤ index &lt; d.</param>
        /// <returns>The mean.</returns>
        /// <exception cref="ArgumentOutOfRangeException">Index out of range.</exception>
        public double Mean(int index)
        {
            CheckIndex(index, nameof(index));
            return weightSum > 0.0 ? mean[index] : double.NaN;
        }

        /// <summary>Writes the weighted means (NaN while W = 0) into <paramref name="destination"/>. O(d), no allocation.</summary>
        /// <param name="destination">Buffer of length at least d.</param>
        /// <exception cref="ArgumentException">The buffer is too short.</exception>
        public void CopyMeansTo(Span<double> destination)
        {
            if (destination.Length < d)
            {
                Guard.ThrowLength(nameof(destination), destination.Length, d);
            }

            for (int j = 0; j < d; j++)
            {
                destination[j] = weightSum > 0.0 ? mean[j] : double.NaN;
            }
        }

        /// <summary>Co-moment Mᵢⱼ = Σ aₖ(uₖᵢ − mᵢ)(uₖⱼ − mⱼ) (not divided by W). O(1).</summary>
        /// <param name="row">First component.</param>
        /// <param name="column">Second component.</param>
        /// <returns>The co-moment (0 while W = 0).</returns>
        /// <exception cref="ArgumentOutOfRangeException">Index out of range.</exception>
        public double Comoment(int row, int column)
        {
            CheckIndex(row, nameof(row));
            CheckIndex(column, nameof(column));
            return comoment.Get(row, column);
        }

        /// <summary>Writes M (d×d row-major, exactly symmetric) into <paramref name="destination"/>. O(d²), no allocation.</summary>
        /// <param name="destination">Buffer of length at least d².</param>
        /// <exception cref="ArgumentException">The buffer is too short.</exception>
        public void CopyComomentTo(Span<double> destination)
        {
            if (destination.Length < d * d)
            {
                Guard.ThrowLength(nameof(destination), destination.Length, d * d);
            }

            comoment.Unpack(destination);
        }

        /// <summary>Population variance Mⱼⱼ / W of component <paramref name="index"/> (divisor W, no bias correction); NaN while W = 0. O(1).</summary>
        /// <param name="index">Component.</param>
        /// <returns>The variance.</returns>
        /// <exception cref="ArgumentOutOfRangeException">Index out of range.</exception>
        public double Variance(int index)
        {
            CheckIndex(index, nameof(index));
            return weightSum > 0.0 ? comoment.Get(index, index) / weightSum : double.NaN;
        }

        /// <summary>Population standard deviation σⱼ = √(Mⱼⱼ / W) (MATH.md §4.1); NaN while W = 0, exactly 0 for a component constant since the start. O(1).</summary>
        /// <param name="index">Component.</param>
        /// <returns>The standard deviation.</returns>
        /// <exception cref="ArgumentOutOfRangeException">Index out of range.</exception>
        public double StandardDeviation(int index) => Math.Sqrt(Variance(index));

        /// <summary>Writes all population standard deviations (NaN while W = 0) into <paramref name="destination"/>. O(d), no allocation.</summary>
        /// <param name="destination">Buffer of length at least d.</param>
        /// <exception cref="ArgumentException">The buffer is too short.</exception>
        public void CopyStandardDeviationsTo(Span<double> destination)
        {
            if (destination.Length < d)
            {
                Guard.ThrowLength(nameof(destination), destination.Length, d);
            }

            for (int j = 0; j < d; j++)
            {
                destination[j] = weightSum > 0.0 ? Math.Sqrt(comoment.Get(j, j) / weightSum) : double.NaN;
            }
        }

        /// <summary>
        /// Merges <paramref name="later"/> into this state (MATH.md §4.2, Chan, Golub &amp; LeVeque 1979/1983): this state covers the earlier
        /// samples, <paramref name="later"/> the <c>later.SampleCount</c> steps after them. This state is first aged by β^k (k = later.SampleCount),
        /// then W = W_A + W_B, m = m_A + (W_B/W)(m_B − m_A), M = M_A + M_B + (W_A·W_B/W)(m_B − m_A)(m_B − m_A)ᵀ.
        /// Afterwards this state equals (to rounding) one that saw both streams in order; the skipped-sample counts add (the policies may
        /// differ). <paramref name="later"/> is not changed (it may be this object).
        /// O(d²), no allocation.
        /// </summary>
        /// <param name="later">State of the later samples, same dimension and forgetting factor.</param>
        /// <exception cref="ArgumentNullException"><paramref name="later"/> is null.</exception>
        /// <exception cref="ArgumentException">Dimension or forgetting factor differ.</exception>
        /// <exception cref="RidgeBreakdownException">The merge would overflow; nothing changed.</exception>
        public void MergeFrom(StreamingMoments later)
        {
            if (!TryMergeFrom(later, out BreakdownInfo breakdown))
            {
                Guard.ThrowBreakdown(breakdown);
            }
        }

        /// <summary>As <see cref="MergeFrom"/>, but reports an overflow by returning false (nothing changed).</summary>
        /// <param name="later">State of the later samples.</param>
        /// <param name="breakdown"><see cref="BreakdownKind.NonFinite"/> on overflow, otherwise <see cref="BreakdownInfo.None"/>.</param>
        /// <returns>True on success.</returns>
        /// <exception cref="ArgumentNullException"><paramref name="later"/> is null.</exception>
        /// <exception cref="ArgumentException">Dimension or forgetting factor differ.</exception>
        public bool TryMergeFrom(StreamingMoments later, out BreakdownInfo breakdown)
        {
            Guard.NotNull(later, nameof(later));
            if (later.d != d)
            {
                Guard.ThrowArgument(nameof(later), FormattableString.Invariant($"later has dimension {later.d}; expected {d}."));
            }

            if (later.beta != beta)
            {
                Guard.ThrowArgument(nameof(later), FormattableString.Invariant($"later has forgetting factor {later.beta:R}; expected {beta:R}."));
            }

            double age = Decay(beta, later.SampleCount);
            double wa = age * weightSum;
            double wb = later.weightSum;
            double w = wa + wb;
            double norm2 = 0.0;
            for (int j = 0; j < d; j++)
            {
                double dj = later.mean[j] - mean[j];
                difference[j] = dj;
                norm2 += dj * dj;
            }

            double coefficient = w > 0.0 ? wa * (wb / w) : 0.0;
            double newTrace = (age * comoment.Trace) + later.comoment.Trace + (coefficient * norm2);
            if (!(newTrace < OverflowLevel) || !Guard.IsFinite(w))
            {
                breakdown = new BreakdownInfo(BreakdownKind.NonFinite, -1, newTrace, double.NaN);
                return false;
            }

            long count = SampleCount + later.SampleCount;
            long laterSkipped = later.skipped;
            if (wa == 0.0)
            {
                later.mean.AsSpan().CopyTo(mean);
            }
            else if (wb > 0.0)
            {
                double r = wb / w;
                for (int j = 0; j < d; j++)
                {
                    mean[j] += r * difference[j];
                }
            }

            // Entry by entry, so that later may be this object.
            comoment.MergeFrom(age, later.comoment, coefficient, difference, newTrace);
            weightSum = w;
            SampleCount = count;
            skipped += laterSkipped;
            breakdown = BreakdownInfo.None;
            return true;
        }

        /// <summary>
        /// Writes the complete state — dimension, forgetting factor, invalid-sample policy, <see cref="SampleCount"/>,
        /// <see cref="SkippedSampleCount"/>, <see cref="WeightSum"/>, the overflow guard's trace, the means and the co-moment as stored (packed
        /// upper triangle of M̃ and the scale s, M = s·M̃) — as a versioned, checksummed snapshot (kind "StreamingMoments", layout version 2;
        /// <see cref="ReadSnapshot"/> also reads layout 1, which stored M itself).
        /// </summary>
        /// <param name="destination">Writable stream; written at its position and left open.</param>
        /// <param name="encoding">Binary (default) or indented JSON with the same entries.</param>
        /// <remarks><see cref="ReadSnapshot"/> of the result continues bit-identically. Does not change the state. O(d²) time and allocation.
        /// Not thread-safe with respect to a concurrent update.</remarks>
        /// <exception cref="ArgumentNullException"><paramref name="destination"/> is null.</exception>
        /// <exception cref="ArgumentException">The stream is not writable, or <paramref name="encoding"/> is undefined.</exception>
        /// <exception cref="IOException">The stream failed.</exception>
        public void WriteSnapshot(Stream destination, SnapshotEncoding encoding = SnapshotEncoding.Binary)
        {
            var record = new StateRecord(SnapshotKind, SnapshotVersion)
                .Add("dimension", (long)d)
                .Add("forgettingFactor", beta)
                .Add("invalidSamples", SnapshotSupport.PolicyName(invalidSamples));
            AddStateTo(record, string.Empty);
            SnapshotSupport.Write(record, destination, encoding);
        }

        /// <summary>
        /// Restores a state from a snapshot of <see cref="WriteSnapshot"/> in either encoding (detected from the content), read from the current
        /// position of <paramref name="source"/> to its end.
        /// </summary>
        /// <param name="source">Readable stream holding exactly one snapshot.</param>
        /// <returns>A new object in exactly the saved state.</returns>
        /// <remarks>Validates the checksum, kind, version, settings, lengths, finiteness, non-negative variances and counts, and that the stored
        /// trace bounds the co-moment's diagonal, before building anything. O(d²). Thread-safe.</remarks>
        /// <exception cref="ArgumentNullException"><paramref name="source"/> is null.</exception>
        /// <exception cref="ArgumentException">The stream is not readable.</exception>
        /// <exception cref="SnapshotFormatException">Not a valid snapshot of this kind (see <see cref="SnapshotFormatException"/>); nothing is returned.</exception>
        /// <exception cref="IOException">The stream failed.</exception>
        public static StreamingMoments ReadSnapshot(Stream source)
        {
            StateRecord r = SnapshotSupport.Read(source, SnapshotKind, SnapshotVersion);
            int d = SnapshotSupport.ParameterCount(r, "dimension", 1 << 15);
            double beta = r.GetDouble("forgettingFactor");
            InvalidSamplePolicy policy = SnapshotSupport.Policy(r, "invalidSamples");
            StreamingMoments m = SnapshotSupport.Settings(() => new StreamingMoments(d, beta, policy));
            m.RestoreStateFrom(r, string.Empty, r.KindVersion);
            return m;
        }

        /// <summary>Adds the state entries (not the settings) under <paramref name="prefix"/>, for this type's and an owner's snapshot.</summary>
        internal void AddStateTo(StateRecord record, string prefix)
        {
            record.Add(prefix + "sampleCount", SampleCount)
                .Add(prefix + "skippedSampleCount", skipped)
                .Add(prefix + "weightSum", weightSum)
                .Add(prefix + "trace", comoment.Trace)
                .Add(prefix + "means", mean)
                .Add(prefix + "comoment", comoment.PackedStored())
                .Add(prefix + "comomentScale", comoment.Scale);
        }

        /// <summary>
        /// Validates the state entries under <paramref name="prefix"/> and copies them into this (fresh) object; throws SnapshotFormatException.
        /// Layout 1 (<paramref name="record"/>'s kind version, or <paramref name="layoutVersion"/> for an owner's record) has no scale entry: scale 1.
        /// </summary>
        internal void RestoreStateFrom(StateRecord record, string prefix, int layoutVersion)
        {
            long count = SnapshotSupport.Count(record, prefix + "sampleCount");
            long skippedCount = SnapshotSupport.Count(record, prefix + "skippedSampleCount");
            double w = SnapshotSupport.NonNegative(record, prefix + "weightSum");
            double tr = SnapshotSupport.NonNegative(record, prefix + "trace");
            if (!(tr < OverflowLevel))
            {
                throw SnapshotSupport.Invalid("snapshot entry '{0}trace' = {1:R} exceeds the overflow limit", prefix, tr);
            }

            double[] means = SnapshotSupport.FiniteArray(record, prefix + "means", d);
            double[] packed = SnapshotSupport.FiniteArray(record, prefix + "comoment", RecursiveKernels.PackedLength(d));
            double scale = 1.0;
            if (layoutVersion >= 2)
            {
                scale = record.GetDouble(prefix + "comomentScale");
                if (!comoment.IsValidScale(scale))
                {
                    throw SnapshotSupport.Invalid("snapshot entry '{0}comomentScale' = {1:R} is outside [2^-32, 1]", prefix, scale);
                }
            }

            double diagonal = ScaledGram.PackedDiagonalSum(packed, d, scale, out int negative);
            if (negative >= 0)
            {
                throw SnapshotSupport.Invalid("snapshot entry '{0}comoment' has the negative diagonal entry {1:R} at {2}", prefix, packed[RecursiveKernels.RowOffset(negative, d)], negative);
            }

            // The tracked trace equals tr(M) up to rounding; the overflow guard relies on it bounding M.
            if (!(diagonal <= (tr * (1.0 + 1e-6)) + 1e-300))
            {
                throw SnapshotSupport.Invalid("the co-moment (trace {0:R}) is inconsistent with '{1}trace' = {2:R}", diagonal, prefix, tr);
            }

            means.AsSpan().CopyTo(mean);
            comoment.Restore(packed, scale, tr);
            weightSum = w;
            SampleCount = count;
            skipped = skippedCount;
        }

        /// <summary>β^k for a step count k (1 when β = 1).</summary>
        internal static double Decay(double beta, long steps) => beta == 1.0 ? 1.0 : Math.Pow(beta, steps);

        private void CheckIndex(int index, string name)
        {
            if ((uint)index >= (uint)d)
            {
                Guard.ThrowOutOfRange(name, index, FormattableString.Invariant($"must lie in [0, {d})"));
            }
        }
    }
}
