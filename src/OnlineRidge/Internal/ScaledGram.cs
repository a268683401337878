using System;
using System.Runtime.CompilerServices;
#if NET
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
#endif

namespace OnlineRidge.Internal
{
    /// <summary>
    /// An exponentially forgotten symmetric statistic G (a Gram matrix or a centered co-moment matrix) of order d held as G = s·G̃: the scalar
    /// s carries the forgetting, so a step G ← βG + c·u·uᵀ costs one rank-one update of G̃ in the split layout of
    /// <see cref="GramUpdateKernels.AddRankOneSplit"/> (head block of order d − 1, its last column and its corner) and no pass that multiplies
    /// every entry by β: s ← β·s, G̃ ← G̃ + (c/s)·u·uᵀ. A step with c = 0 (a zero-weight sample) is O(1).
    /// </summary>
    /// <remarks>
    /// <para><b>Renormalization.</b> s shrinks by β every step; when the next s would fall below 2⁻³² (or G̃ could come near overflow), G̃ is
    /// multiplied by an exact power of two 2ᵏ and s by 2⁻ᵏ, bringing s into [½, 1). Scaling by a power of two changes no bit (short of
    /// subnormal entries, far below anything a solve resolves), so when it happens does not change later results: with β = 0.999 it happens
    /// about every 22 000 steps, at O(d²) once.</para>
    /// <para><b>Accuracy.</b> One rounding per entry and step, as the explicit recursion βG + c·u·uᵀ; readers get sᵢⱼ·G̃ᵢⱼ, one more rounding.
    /// s is a running product of β, so the relative weight of a sample k steps old carries the rounding of k multiplications — the same order
    /// as the explicit recursion, which rounds βG every step.</para>
    /// <para><b>Overflow.</b> The caller keeps the trace (in true units) and rejects a step whose new trace reaches <see cref="OverflowLevel"/>
    /// before calling <see cref="Add"/>; with that, every entry of G̃ stays below double.MaxValue / 2.</para>
    /// <para><b>Tiny forgetting factors.</b> For β &lt; 2⁻⁵¹² (s could leave the normal range) the statistic is forgotten explicitly
    /// (G̃ ← βG̃ every step, s stays 1).</para>
    /// </remarks>
    internal sealed class ScaledGram
    {
        /// <summary>Every |entry| of G is at most its trace; keeping the trace below this keeps G and G̃ finite.</summary>
        public const double OverflowLevel = double.MaxValue / 4.0;

        /// <summary>2⁻³²: the scale is renormalized before it falls below this.</summary>
        public const double MinScale = 2.3283064365386963E-10;

        /// <summary>2⁻⁵¹²: below this forgetting factor the forgetting is applied explicitly.</summary>
        private const double MinImplicitForgetting = 7.458340731200207E-155;

        private readonly int d;
        private readonly int n;
        private readonly int stride;
        private readonly double beta;
        private readonly bool explicitForgetting;
        private readonly double[] storage;
        private readonly int start;
        private readonly int length;
        private double scale = 1.0;
        private double trace;

        /// <summary>An all-zero statistic of order <paramref name="order"/> forgotten by <paramref name="forgettingFactor"/> ∈ [0, 1] per step.</summary>
        public ScaledGram(int order, double forgettingFactor)
        {
            d = order;
            n = order - 1;
            stride = GramUpdateKernels.Stride(n);
            beta = forgettingFactor;
            explicitForgetting = forgettingFactor < MinImplicitForgetting;
            length = GramUpdateKernels.SplitLength(n);
            storage = GramUpdateKernels.AllocateAligned(length, out start);
        }

        /// <summary>Order d.</summary>
        public int Order => d;

        /// <summary>Row length of the head block, <see cref="GramUpdateKernels.Stride"/>(d − 1); a head given to <see cref="Add"/> needs this length.</summary>
        public int Stride => stride;

        /// <summary>The scale s of G = s·G̃, in [2⁻³², 1].</summary>
        public double Scale => scale;

        /// <summary>The tracked trace of G (true units), the overflow guard's bound.</summary>
        public double Trace => trace;

        /// <summary>G̃ in the split layout (64-byte aligned in the net10.0 build).</summary>
        internal Span<double> Storage => storage.AsSpan(start, length);

        /// <summary>Whether <paramref name="candidate"/> is a scale this statistic can hold (a snapshot check): in [2⁻³², 1], or exactly 1 under explicit forgetting.</summary>
        public bool IsValidScale(double candidate) => explicitForgetting ? candidate == 1.0 : candidate >= MinScale && candidate <= 1.0;

        /// <summary>Gᵢⱼ = s·G̃ᵢⱼ, either order of indices. O(1).</summary>
        public double Get(int i, int j) => storage[start + (i <= j ? Offset(i, j) : Offset(j, i))] * scale;

        /// <summary>Position of entry (i, j), i ≤ j, in the split layout (relative to the start).</summary>
        private int Offset(int i, int j) => j < n ? (i * stride) + j : (i < n ? (n * stride) + i : (n + 1) * stride);

        /// <summary>The trace after a step adding c·u·uᵀ with ‖u‖² = <paramref name="norm2"/>: β·trace + c·‖u‖². The caller checks it against <see cref="OverflowLevel"/>.</summary>
        public double ProposedTrace(double coefficient, double norm2) => (beta * trace) + (coefficient * norm2);

        /// <summary>
        /// One step G ← βG + c·u·uᵀ with u = (head, last), <paramref name="newTrace"/> from <see cref="ProposedTrace"/> (already checked).
        /// <paramref name="head"/> has length ≥ <see cref="Stride"/> with zeros from index d − 1 on; unused when c = 0. O(d²) (O(1) when
        /// c = 0, except on a renormalization). No allocation.
        /// </summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public void Add(double coefficient, ReadOnlySpan<double> head, double last, double newTrace)
        {
            double next;
            if (explicitForgetting)
            {
                GramUpdateKernels.Scale(Storage, beta);
                next = scale;
            }
            else
            {
                next = beta * scale;
                if (next < MinScale || newTrace >= next * OverflowLevel)
                {
                    next = Renormalize(next);
                }
            }

            if (coefficient != 0.0)
            {
                double c = coefficient / next;
                if (!(c <= double.MaxValue))
                {
                    // A weight near the largest double with s < 1: fold s into G̃ (one rounding per entry) so that the coefficient is c itself.
                    GramUpdateKernels.Scale(Storage, next);
                    next = 1.0;
                    c = coefficient;
                }

                GramUpdateKernels.AddRankOneSplit(Storage, n, stride, c, head, last);
            }

            scale = next;
            trace = newTrace;
        }

        /// <summary>
        /// <see cref="Add"/> for the common step only: c &gt; 0, implicit forgetting, no renormalization due and c/s finite, with the new trace
        /// β·trace + c·<paramref name="norm2"/> below <see cref="OverflowLevel"/>. Then it does exactly what <see cref="Add"/> would (same
        /// arithmetic, same bits) and returns true; otherwise it changes nothing and returns false, and the caller takes the general path.
        /// <paramref name="head"/> has length <see cref="Stride"/> (no padding needed: d − 1 is a whole number of vectors). O(d²), no allocation.
        /// </summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public bool TryAddCommon(double coefficient, ReadOnlySpan<double> head, double last, double norm2)
        {
            double newTrace = (beta * trace) + (coefficient * norm2);
            double next = beta * scale;
            double c = coefficient / next;
            if (explicitForgetting || !(newTrace < OverflowLevel) || !(next >= MinScale) || !(newTrace < next * OverflowLevel) || !(c <= double.MaxValue))
            {
                return false;
            }

            GramUpdateKernels.AddRankOneSplit(storage.AsSpan(start, length), n, stride, c, head, last);
            scale = next;
            trace = newTrace;
            return true;
        }

#if NET
        /// <summary>
        /// Whether <see cref="TryAddFour"/> applies: order 5 (a head of four), implicit forgetting, and <see cref="System.Numerics.Vector{T}"/>
        /// four doubles wide (hardware-accelerated) — exactly when <see cref="GramUpdateKernels.AddRankOneSplit"/> takes its four-column body.
        /// </summary>
        public bool HasFourColumnHead =>
            n == 4 && stride == 4 && !explicitForgetting && System.Numerics.Vector.IsHardwareAccelerated && System.Numerics.Vector<double>.Count == 4;

        /// <summary>
        /// <see cref="TryAddCommon"/> for a head of four held in a register (only when <see cref="HasFourColumnHead"/>, which also rules out
        /// explicit forgetting): the same decisions — its check newTrace &lt; <see cref="OverflowLevel"/> is implied by newTrace &lt;
        /// s·<see cref="OverflowLevel"/> since s ≤ 1, so it is not repeated — and the same arithmetic: the corner as a multiply then an add, the
        /// rest through <see cref="GramUpdateKernels.AddRankOneFour"/>, the body the split entry takes; no span is formed and no length is
        /// checked again. The caller keeps <paramref name="coefficient"/> in (0, double.MaxValue·<see cref="MinScale"/>], so that with
        /// s ≥ <see cref="MinScale"/> the check c/s ≤ double.MaxValue of <see cref="TryAddCommon"/> always holds and is not made.
        /// O(1) (25 entries), no allocation.
        /// </summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public bool TryAddFour(double coefficient, Vector256<double> head, double last, double norm2)
        {
            double newTrace = (beta * trace) + (coefficient * norm2);
            double next = beta * scale;
            double c = coefficient / next;
            if (!(next >= MinScale) || !(newTrace < next * OverflowLevel))
            {
                return false;
            }

            ref double a = ref Unsafe.Add(ref MemoryMarshal.GetArrayDataReference(storage), start);
            double cl = c * last;
            Unsafe.Add(ref a, 20) += cl * last;
            GramUpdateKernels.AddRankOneFour(ref a, c, cl, head);
            scale = next;
            trace = newTrace;
            return true;
        }
#endif

        /// <summary>G̃ ← 2ᵏ·G̃ exactly and returns next·2⁻ᵏ ∈ [½, 1), for a positive normal next.</summary>
        [MethodImpl(MethodImplOptions.NoInlining)]
        private double Renormalize(double next)
        {
            int e = GramUpdateKernels.FloorLog2(next) + 1;
            if (e == 0)
            {
                return next;
            }

            GramUpdateKernels.Scale(Storage, GramUpdateKernels.PowerOfTwo(e));
            return next * GramUpdateKernels.PowerOfTwo(-e);
        }

        /// <summary>
        /// Merge: G ← age·G + G_later + c·δ·δᵀ (true units, entry by entry, so <paramref name="later"/> may be this object), afterwards s = 1.
        /// δ needs length ≥ d when c ≠ 0. <paramref name="newTrace"/> is the already checked trace of the result. O(d²), no allocation.
        /// </summary>
        public void MergeFrom(double age, ScaledGram later, double coefficient, ReadOnlySpan<double> delta, double newTrace)
        {
            double sa = age * scale;
            double sb = later.scale;
            double[] b = later.storage;
            int bs = later.start;
            for (int i = 0; i < d; i++)
            {
                double ci = coefficient == 0.0 ? 0.0 : coefficient * delta[i];
                for (int j = i; j < d; j++)
                {
                    int o = Offset(i, j);
                    double v = (sa * storage[start + o]) + (sb * b[bs + o]);
                    storage[start + o] = coefficient == 0.0 ? v : v + (ci * delta[j]);
                }
            }

            MirrorFirstBlocks();
            scale = 1.0;
            trace = newTrace;
        }

        /// <summary>Writes G (true units, d×d row-major, exactly symmetric) into <paramref name="dense"/> (length ≥ d²). O(d²).</summary>
        public void Unpack(Span<double> dense)
        {
            for (int i = 0; i < d; i++)
            {
                dense[(i * d) + i] = Get(i, i);
                for (int j = i + 1; j < d; j++)
                {
                    double v = Get(i, j);
                    dense[(i * d) + j] = v;
                    dense[(j * d) + i] = v;
                }
            }
        }

        /// <summary>G̃'s upper triangle, packed by rows (d(d+1)/2 values): the stored form of a snapshot. Allocates.</summary>
        public double[] PackedStored()
        {
            var packed = new double[d * (d + 1) / 2];
            int o = 0;
            for (int i = 0; i < d; i++)
            {
                for (int j = i; j < d; j++)
                {
                    packed[o++] = storage[start + Offset(i, j)];
                }
            }

            return packed;
        }

        /// <summary>Σⱼ s·G̃ⱼⱼ of a packed stored triangle and scale, for a snapshot's consistency check.</summary>
        public static double PackedDiagonalSum(ReadOnlySpan<double> packed, int d, double scale, out int negativeIndex)
        {
            double sum = 0.0;
            negativeIndex = -1;
            int o = 0;
            for (int j = 0; j < d; j++)
            {
                double v = packed[o];
                if (!(v >= 0.0) && negativeIndex < 0)
                {
                    negativeIndex = j;
                }

                sum += v * scale;
                o += d - j;
            }

            return sum;
        }

        /// <summary>Restores G̃ from <see cref="PackedStored"/>'s layout, the scale and the trace (validated by the caller). O(d²).</summary>
        public void Restore(ReadOnlySpan<double> packed, double storedScale, double storedTrace)
        {
            Array.Clear(storage, 0, storage.Length);
            int o = 0;
            for (int i = 0; i < d; i++)
            {
                for (int j = i; j < d; j++)
                {
                    storage[start + Offset(i, j)] = packed[o++];
                }
            }

            MirrorFirstBlocks();
            scale = storedScale;
            trace = storedTrace;
        }

        /// <summary>Sets the maintained entries left of the diagonal (never read) to their mirror images, so that every maintained entry is a true value.</summary>
        private void MirrorFirstBlocks()
        {
            for (int i = 0; i < n; i++)
            {
                for (int j = GramUpdateKernels.RowStart(i); j < i; j++)
                {
                    storage[start + (i * stride) + j] = storage[start + (j * stride) + i];
                }
            }
        }
    }
}
