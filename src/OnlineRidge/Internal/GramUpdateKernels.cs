using System;
#if NET
using System.Numerics;
#endif
using System.Runtime.CompilerServices;
#if NET
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.Arm;
using System.Runtime.Intrinsics.X86;
#endif

namespace OnlineRidge.Internal
{
    /// <summary>
    /// Span kernels of the information-form statistics. A symmetric matrix of order n + 1 is kept in the <em>split layout</em> of
    /// <see cref="AddRankOneSplit"/>: its leading block of order n in <em>block-padded upper storage</em> — n rows of <see cref="Stride"/>(n)
    /// doubles (n rounded up to the block width <see cref="BlockWidth"/>, the hardware vector length in the net10.0 build and 1 in the portable
    /// build), entry (i, j), i ≤ j, at i·stride + j — then its last column as one more row, then its corner. Row i of the block is maintained
    /// from column <see cref="RowStart"/>(i) (i rounded down to a block boundary) to the end of the row, so every row update is a whole number
    /// of vectors with no scalar tail. The up to <see cref="BlockWidth"/> − 1 entries just left of the diagonal in that first block are updated
    /// too; they are never read (readers use the upper triangle only), so exact symmetry of what is read still holds by construction. Columns
    /// n … stride − 1 are padding: the vector they are updated with is zero there, so they stay as they are. No allocation anywhere.
    /// </summary>
    internal static class GramUpdateKernels
    {
        /// <summary>Block width: the number of doubles in a hardware vector when vectorized kernels run (net10.0 build), else 1.</summary>
        public static int BlockWidth
        {
            get
            {
#if NET
                return Vector.IsHardwareAccelerated ? Vector<double>.Count : 1;
#else
                return 1;
#endif
            }
        }

        /// <summary>Row length (and row-to-row distance) of the block-padded storage of order d: d rounded up to a multiple of <see cref="BlockWidth"/>.</summary>
        public static int Stride(int d)
        {
            int w = BlockWidth;
            return (d + w - 1) / w * w;
        }

        /// <summary>First column maintained in row i: i rounded down to a multiple of <see cref="BlockWidth"/>.</summary>
        public static int RowStart(int i) => i - (i % BlockWidth);

        /// <summary>Number of doubles of the split layout of order n + 1 (see <see cref="AddRankOneSplit"/>): (n + 1)·<see cref="Stride"/>(n) + 1.</summary>
        public static int SplitLength(int n) => ((n + 1) * Stride(n)) + 1;

        /// <summary>
        /// Rank-one update G ← G + c·u·uᵀ of a symmetric matrix of order n + 1, u = (h, ℓ) (head h of length n, last entry ℓ), held in the
        /// <em>split layout</em> of <paramref name="a"/> with S = <paramref name="stride"/> = <see cref="Stride"/>(n): rows 0 … n − 1 of the head
        /// block in block-padded storage (entry (i, j), i ≤ j &lt; n, at i·S + j); the last column G[0..n−1, n] as one more row at n·S; the
        /// corner G[n, n] at (n + 1)·S. Every row i &lt; n gets A[i·S + j] += (c·hᵢ)·hⱼ for j from <see cref="RowStart"/>(i) to S − 1, the column
        /// row gets (c·ℓ)·hⱼ for j &lt; S, the corner (c·ℓ)·ℓ. <paramref name="head"/> needs length ≥ S with zeros from index n on (for n a multiple
        /// of <see cref="BlockWidth"/> the caller's vector itself qualifies, no copy).
        /// Cost: about (n+1)(n+2)/2 + O(n·<see cref="BlockWidth"/>) multiply-adds, in whole vectors (rows taken four at a time, so each vector of
        /// h is loaded once per four rows); one rounding per entry (a fused multiply-add where the hardware has one, else a multiply and an add:
        /// the last bit may differ between the two). No allocation.
        /// </summary>
        /// <exception cref="ArgumentException">A span is shorter than the layout needs (checked once, up front).</exception>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public static void AddRankOneSplit(Span<double> a, int n, int stride, double c, ReadOnlySpan<double> head, double last)
        {
            if (a.Length < ((n + 1) * stride) + 1 || head.Length < stride || stride < n)
            {
                Guard.ThrowArgument(nameof(a), "the storage or the vector is shorter than the split layout needs.");
            }

            double cl = c * last;
            a[(n + 1) * stride] += cl * last;
#if NET
            if (Vector.IsHardwareAccelerated && stride % Vector<double>.Count == 0)
            {
                if (n == 4 && Vector<double>.Count == 4)
                {
                    AddRankOneFour(ref MemoryMarshal.GetReference(a), c, cl, Vector256.LoadUnsafe(ref MemoryMarshal.GetReference(head)));
                }
                else if (n == 16 && stride == 16 && HasWideSixteen)
                {
                    AddRankOneSixteen(ref MemoryMarshal.GetReference(a), c, cl, ref MemoryMarshal.GetReference(head));
                }
                else
                {
                    AddRankOneVector(ref MemoryMarshal.GetReference(a), n, stride, c, cl, ref MemoryMarshal.GetReference(head));
                }

                return;
            }
#endif
            for (int i = 0; i < n; i++)
            {
                double ci = c * head[i];
                Span<double> row = a.Slice(i * stride, stride);
                for (int j = RowStart(i); j < stride; j++)
                {
                    row[j] += ci * head[j];
                }
            }

            Span<double> column = a.Slice(n * stride, stride);
            for (int j = 0; j < stride; j++)
            {
                column[j] += cl * head[j];
            }
        }

        /// <summary>
        /// <see cref="AddRankOneSplit"/> with the 256-bit blocks only (never the 512-bit body for n = 16): the reference a test compares the
        /// wide body with, bit for bit. On the portable build it is <see cref="AddRankOneSplit"/> itself.
        /// </summary>
        internal static void AddRankOneSplitNarrow(Span<double> a, int n, int stride, double c, ReadOnlySpan<double> head, double last)
        {
#if NET
            if (Vector.IsHardwareAccelerated && stride % Vector<double>.Count == 0)
            {
                if (a.Length < ((n + 1) * stride) + 1 || head.Length < stride || stride < n)
                {
                    Guard.ThrowArgument(nameof(a), "the storage or the vector is shorter than the split layout needs.");
                }

                double cl = c * last;
                a[(n + 1) * stride] += cl * last;
                AddRankOneVector(ref MemoryMarshal.GetReference(a), n, stride, c, cl, ref MemoryMarshal.GetReference(head));
                return;
            }
#endif
            AddRankOneSplit(a, n, stride, c, head, last);
        }

#if NET
        /// <summary>
        /// <see cref="AddRankOneSplit"/>'s body for one block (n = 4 with 256-bit vectors), without the corner: straight-line code, the row
        /// factors fl(c·hᵢ) as one vector product, each broadcast by one permutation where AVX2 has it, then four row FMAs and the column's.
        /// Inlined into its callers (the split entry and the information form's p = 4 register step), so that the smallest update pays no
        /// call and both take the same arithmetic.
        /// </summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        internal static void AddRankOneFour(ref double a, double c, double cl, Vector256<double> h)
        {
            Vector256<double> ch = Vector256.Create(c) * h;
            Vector256<double> c0 = Avx2.IsSupported ? Avx2.Permute4x64(ch, 0b00_00_00_00) : Vector256.Create(ch.GetElement(0));
            Vector256<double> c1 = Avx2.IsSupported ? Avx2.Permute4x64(ch, 0b01_01_01_01) : Vector256.Create(ch.GetElement(1));
            Vector256<double> c2 = Avx2.IsSupported ? Avx2.Permute4x64(ch, 0b10_10_10_10) : Vector256.Create(ch.GetElement(2));
            Vector256<double> c3 = Avx2.IsSupported ? Avx2.Permute4x64(ch, 0b11_11_11_11) : Vector256.Create(ch.GetElement(3));
            Vector256<double> v0 = MultiplyAdd(c0, h, Vector256.LoadUnsafe(ref a));
            Vector256<double> v1 = MultiplyAdd(c1, h, Vector256.LoadUnsafe(ref a, 4));
            Vector256<double> v2 = MultiplyAdd(c2, h, Vector256.LoadUnsafe(ref a, 8));
            Vector256<double> v3 = MultiplyAdd(c3, h, Vector256.LoadUnsafe(ref a, 12));
            Vector256<double> v4 = MultiplyAdd(Vector256.Create(cl), h, Vector256.LoadUnsafe(ref a, 16));
            v0.StoreUnsafe(ref a);
            v1.StoreUnsafe(ref a, 4);
            v2.StoreUnsafe(ref a, 8);
            v3.StoreUnsafe(ref a, 12);
            v4.StoreUnsafe(ref a, 16);
        }

        /// <summary>Whether <see cref="AddRankOneSixteen"/> runs for n = 16: 512-bit vectors reported fast, and <see cref="BlockWidth"/> 4 (so its rows are a superset of the maintained ones).</summary>
        internal static readonly bool HasWideSixteen = Vector512.IsHardwareAccelerated && Avx512F.IsSupported && Vector<double>.Count == 4;

        /// <summary>
        /// <see cref="AddRankOneSplit"/>'s body for n = 16 (stride 16) in 512-bit vectors, without the corner: h in two registers, rows 0–7 as
        /// two vectors each, rows 8–15 as one (columns 8–15), the column row as two — 26 load-FMA-stores instead of the 44 of the 256-bit
        /// blocks. Each maintained entry gets the same single FMA fl((c·hᵢ)·hⱼ + Aᵢⱼ) as there, so the same bits; in rows 4–7 and 12–15 the
        /// first vector also covers the four entries left of the maintained block, and those lanes are stored back unchanged (a blend), so
        /// every other position keeps its bits too. Storage and h may be unaligned; h is loaded once.
        /// </summary>
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
        private static void AddRankOneSixteen(ref double a, double c, double cl, ref double h)
        {
            Vector512<double> h0 = Vector512.LoadUnsafe(ref h);
            Vector512<double> h1 = Vector512.LoadUnsafe(ref h, 8);
            Vector512<double> upperHalf = Vector512.Create(0L, 0L, 0L, 0L, -1L, -1L, -1L, -1L).AsDouble();
            for (nuint i = 0; i < 4; i++)
            {
                var ci = Vector512.Create(c * Unsafe.Add(ref h, i));
                ref double row = ref Unsafe.Add(ref a, i * 16);
                Avx512F.FusedMultiplyAdd(ci, h0, Vector512.LoadUnsafe(ref row)).StoreUnsafe(ref row);
                Avx512F.FusedMultiplyAdd(ci, h1, Vector512.LoadUnsafe(ref row, 8)).StoreUnsafe(ref row, 8);
            }

            for (nuint i = 4; i < 8; i++)
            {
                var ci = Vector512.Create(c * Unsafe.Add(ref h, i));
                ref double row = ref Unsafe.Add(ref a, i * 16);
                Vector512<double> first = Vector512.LoadUnsafe(ref row);
                Vector512.ConditionalSelect(upperHalf, Avx512F.FusedMultiplyAdd(ci, h0, first), first).StoreUnsafe(ref row);
                Avx512F.FusedMultiplyAdd(ci, h1, Vector512.LoadUnsafe(ref row, 8)).StoreUnsafe(ref row, 8);
            }

            for (nuint i = 8; i < 12; i++)
            {
                var ci = Vector512.Create(c * Unsafe.Add(ref h, i));
                ref double row = ref Unsafe.Add(ref a, (i * 16) + 8);
                Avx512F.FusedMultiplyAdd(ci, h1, Vector512.LoadUnsafe(ref row)).StoreUnsafe(ref row);
            }

            for (nuint i = 12; i < 16; i++)
            {
                var ci = Vector512.Create(c * Unsafe.Add(ref h, i));
                ref double row = ref Unsafe.Add(ref a, (i * 16) + 8);
                Vector512<double> block = Vector512.LoadUnsafe(ref row);
                Vector512.ConditionalSelect(upperHalf, Avx512F.FusedMultiplyAdd(ci, h1, block), block).StoreUnsafe(ref row);
            }

            var vl = Vector512.Create(cl);
            ref double column = ref Unsafe.Add(ref a, 256);
            Avx512F.FusedMultiplyAdd(vl, h0, Vector512.LoadUnsafe(ref column)).StoreUnsafe(ref column);
            Avx512F.FusedMultiplyAdd(vl, h1, Vector512.LoadUnsafe(ref column, 8)).StoreUnsafe(ref column, 8);
        }

        /// <summary>The vectorized body of <see cref="AddRankOneSplit"/> without the corner (lengths checked by the caller; stride a multiple of the vector length).</summary>
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
        private static void AddRankOneVector(ref double a, int n, int stride, double c, double cl, ref double h)
        {
            int w = Vector<double>.Count;
            nuint s = (nuint)stride;
            int i = 0;
            if (w % 4 == 0)
            {
                // Four rows at a time: rows 4k … 4k+3 share their first column (a multiple of 4, hence of nothing smaller than w's block
                // when w is a multiple of 4), so one load of h serves four independent load-FMA-store chains.
                for (; i + 4 <= n; i += 4)
                {
                    var c0 = new Vector<double>(c * Unsafe.Add(ref h, i));
                    var c1 = new Vector<double>(c * Unsafe.Add(ref h, i + 1));
                    var c2 = new Vector<double>(c * Unsafe.Add(ref h, i + 2));
                    var c3 = new Vector<double>(c * Unsafe.Add(ref h, i + 3));
                    ref double r0 = ref Unsafe.Add(ref a, (nuint)i * s);
                    ref double r1 = ref Unsafe.Add(ref r0, s);
                    ref double r2 = ref Unsafe.Add(ref r1, s);
                    ref double r3 = ref Unsafe.Add(ref r2, s);
                    for (nuint j = (nuint)(i - (i % w)); j < s; j += (nuint)w)
                    {
                        Vector<double> hj = Vector.LoadUnsafe(ref h, j);
                        Vector<double> v0 = MultiplyAdd(c0, hj, Vector.LoadUnsafe(ref r0, j));
                        Vector<double> v1 = MultiplyAdd(c1, hj, Vector.LoadUnsafe(ref r1, j));
                        Vector<double> v2 = MultiplyAdd(c2, hj, Vector.LoadUnsafe(ref r2, j));
                        Vector<double> v3 = MultiplyAdd(c3, hj, Vector.LoadUnsafe(ref r3, j));
                        v0.StoreUnsafe(ref r0, j);
                        v1.StoreUnsafe(ref r1, j);
                        v2.StoreUnsafe(ref r2, j);
                        v3.StoreUnsafe(ref r3, j);
                    }
                }
            }

            for (; i < n; i++)
            {
                var ci = new Vector<double>(c * Unsafe.Add(ref h, i));
                ref double row = ref Unsafe.Add(ref a, (nuint)i * s);
                for (nuint j = (nuint)(i - (i % w)); j < s; j += (nuint)w)
                {
                    MultiplyAdd(ci, Vector.LoadUnsafe(ref h, j), Vector.LoadUnsafe(ref row, j)).StoreUnsafe(ref row, j);
                }
            }

            var vl = new Vector<double>(cl);
            ref double column = ref Unsafe.Add(ref a, (nuint)n * s);
            for (nuint j = 0; j < s; j += (nuint)w)
            {
                MultiplyAdd(vl, Vector.LoadUnsafe(ref h, j), Vector.LoadUnsafe(ref column, j)).StoreUnsafe(ref column, j);
            }
        }

        /// <summary>a·b + c per lane (256-bit): fused when the hardware has FMA, else multiply then add — as the Vector&lt;T&gt; overload below.</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static Vector256<double> MultiplyAdd(Vector256<double> a, Vector256<double> b, Vector256<double> c) =>
            Fma.IsSupported ? Fma.MultiplyAdd(a, b, c) : (a * b) + c;

        /// <summary>a·b + c per lane: fused (one rounding) when the hardware has FMA, else multiply then add (two roundings).</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static Vector<double> MultiplyAdd(Vector<double> a, Vector<double> b, Vector<double> c)
        {
            if (Fma.IsSupported || AdvSimd.IsSupported)
            {
                return Vector.FusedMultiplyAdd(a, b, c);
            }

            return (a * b) + c;
        }
#endif

#if NET
        /// <summary>
        /// The lanes of v added as ((v₀ + v₁) + (v₂ + v₃)) — the order of <see cref="Vector256.Sum{T}(Vector256{T})"/> on x64 today, fixed
        /// here so that paths which must agree bit for bit reduce alike whatever a runtime's own Sum does. With AVX: one in-lane swap and one
        /// add give both pair sums at once, then one extract and one add (four instructions against six). NaN and ∞ propagate as in any sum.
        /// </summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        internal static double SumOfLanes(Vector256<double> v)
        {
            if (Avx.IsSupported)
            {
                Vector256<double> pairs = v + Avx.Permute(v, 0b0101);
                return pairs.ToScalar() + pairs.GetUpper().ToScalar();
            }

            return (v.GetElement(0) + v.GetElement(1)) + (v.GetElement(2) + v.GetElement(3));
        }

        /// <summary><see cref="SumOfLanes(Vector256{double})"/> when <see cref="Vector{T}"/> holds four doubles, else <see cref="Vector.Sum{T}(Vector{T})"/>.</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        internal static double SumOfLanes(Vector<double> v) => Vector<double>.Count == 4 ? SumOfLanes(v.AsVector256()) : Vector.Sum(v);
#endif

        /// <summary>Σ xⱼ² (NaN or ∞ when an entry is not finite or the sum overflows). O(n), no allocation.</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public static double SquaredNorm(ReadOnlySpan<double> x)
        {
            int n = x.Length;
            int j = 0;
            double s = 0.0;
#if NET
            if (Vector.IsHardwareAccelerated && n >= Vector<double>.Count)
            {
                int w = Vector<double>.Count;
                ref double xr = ref MemoryMarshal.GetReference(x);
                Vector<double> acc = Vector<double>.Zero;
                for (; j + w <= n; j += w)
                {
                    Vector<double> v = Vector.LoadUnsafe(ref xr, (nuint)j);
                    acc += v * v;
                }

                s = SumOfLanes(acc);
            }
#endif
            for (; j < n; j++)
            {
                s += x[j] * x[j];
            }

            return s;
        }

        /// <summary>Copies x into the front of u and returns Σ xⱼ² (NaN or ∞ when an entry is not finite or the sum overflows). O(n), no allocation.</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public static double CopyWithSquaredNorm(ReadOnlySpan<double> x, Span<double> u)
        {
            int n = x.Length;
            if (u.Length < n)
            {
                Guard.ThrowArgument(nameof(u), "the destination is shorter than the source.");
            }

            int j = 0;
            double s = 0.0;
#if NET
            if (Vector.IsHardwareAccelerated && n >= Vector<double>.Count)
            {
                int w = Vector<double>.Count;
                ref double xr = ref MemoryMarshal.GetReference(x);
                ref double ur = ref MemoryMarshal.GetReference(u);
                Vector<double> acc = Vector<double>.Zero;
                for (; j + w <= n; j += w)
                {
                    Vector<double> v = Vector.LoadUnsafe(ref xr, (nuint)j);
                    v.StoreUnsafe(ref ur, (nuint)j);
                    acc += v * v;
                }

                s = SumOfLanes(acc);
            }
#endif
            for (; j < n; j++)
            {
                double v = x[j];
                u[j] = v;
                s += v * v;
            }

            return s;
        }

        /// <summary>δ ← u − m over u's length and returns Σ δⱼ² (the centering step of the streaming co-moments). O(n), no allocation.</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public static double Center(ReadOnlySpan<double> u, ReadOnlySpan<double> mean, Span<double> delta)
        {
            int n = u.Length;
            if (mean.Length < n || delta.Length < n)
            {
                Guard.ThrowArgument(nameof(delta), "the mean or the destination is shorter than the vector.");
            }

            int j = 0;
            double s = 0.0;
#if NET
            if (Vector.IsHardwareAccelerated && n >= Vector<double>.Count)
            {
                int w = Vector<double>.Count;
                ref double ur = ref MemoryMarshal.GetReference(u);
                ref double mr = ref MemoryMarshal.GetReference(mean);
                ref double dr = ref MemoryMarshal.GetReference(delta);
                Vector<double> acc = Vector<double>.Zero;
                for (; j + w <= n; j += w)
                {
                    Vector<double> v = Vector.LoadUnsafe(ref ur, (nuint)j) - Vector.LoadUnsafe(ref mr, (nuint)j);
                    v.StoreUnsafe(ref dr, (nuint)j);
                    acc += v * v;
                }

                s = SumOfLanes(acc);
            }
#endif
            for (; j < n; j++)
            {
                double v = u[j] - mean[j];
                delta[j] = v;
                s += v * v;
            }

            return s;
        }

        /// <summary>y ← y + a·x over x's length (a multiply and an add per entry, as the scalar loop; no fusion, so both builds agree). O(n).</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public static void Axpy(double a, ReadOnlySpan<double> x, Span<double> y)
        {
            int n = x.Length;
            if (y.Length < n)
            {
                Guard.ThrowArgument(nameof(y), "the destination is shorter than the source.");
            }

            int j = 0;
#if NET
            if (Vector.IsHardwareAccelerated && n >= Vector<double>.Count)
            {
                int w = Vector<double>.Count;
                ref double xr = ref MemoryMarshal.GetReference(x);
                ref double yr = ref MemoryMarshal.GetReference(y);
                var va = new Vector<double>(a);
                for (; j + w <= n; j += w)
                {
                    (Vector.LoadUnsafe(ref yr, (nuint)j) + (va * Vector.LoadUnsafe(ref xr, (nuint)j))).StoreUnsafe(ref yr, (nuint)j);
                }
            }
#endif
            for (; j < n; j++)
            {
                y[j] += a * x[j];
            }
        }

        /// <summary>values ← factor·values (one rounding per entry; exact when factor is a power of two and no result is subnormal). O(n).</summary>
#if NET
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
#endif
        public static void Scale(Span<double> values, double factor)
        {
            int j = 0;
#if NET
            if (Vector.IsHardwareAccelerated && values.Length >= Vector<double>.Count)
            {
                int w = Vector<double>.Count;
                ref double vr = ref MemoryMarshal.GetReference(values);
                var vf = new Vector<double>(factor);
                for (; j + w <= values.Length; j += w)
                {
                    (Vector.LoadUnsafe(ref vr, (nuint)j) * vf).StoreUnsafe(ref vr, (nuint)j);
                }
            }
#endif
            for (; j < values.Length; j++)
            {
                values[j] *= factor;
            }
        }

        /// <summary>
        /// A zeroed array of at least <paramref name="length"/> + <see cref="BlockWidth"/> doubles and the <paramref name="offset"/> at which
        /// <paramref name="length"/> doubles start on a 64-byte boundary, so that no whole-vector access of the kernels (rows of a multiple of
        /// <see cref="BlockWidth"/> doubles from that start) straddles a cache line. In the net10.0 build the array lives on the pinned object
        /// heap (it never moves, so the offset stays valid); in the portable build the offset is 0 (scalar code, no alignment needed).
        /// </summary>
        public static double[] AllocateAligned(int length, out int offset)
        {
#if NET
            const int Align = 8;
            double[] array = GC.AllocateArray<double>(length + Align, pinned: true);
            long address = Marshal.UnsafeAddrOfPinnedArrayElement(array, 0).ToInt64();
            offset = (int)(((64 - (address & 63)) & 63) / sizeof(double));
            return array;
#else
            offset = 0;
            return new double[length];
#endif
        }

        /// <summary>2ᵉ exactly, for −1022 ≤ e ≤ 1023 (normal range).</summary>
        public static double PowerOfTwo(int e) => BitConverter.Int64BitsToDouble((long)(e + 1023) << 52);

        /// <summary>⌊log₂ v⌋ for a positive normal v (its binary exponent).</summary>
        public static int FloorLog2(double v) => (int)((BitConverter.DoubleToInt64Bits(v) >> 52) & 0x7FF) - 1023;
    }
}
