using System;
#if NET
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;
#endif

namespace OnlineRidge.Internal
{
    /// <summary>
    /// Rank-k update of a Gram matrix from a panel of rows: G[j, k] += Σᵣ Z[r, j]·Z[r, k] for k ≥ j (upper triangle), Z row-major with
    /// leading dimension <c>ld</c> (a multiple of <see cref="Width"/>; pad columns must hold zeros), G dense ld×ld row-major.
    /// </summary>
    /// <remarks>
    /// <para>Cost: about ld²/2 multiply-adds per row (plus the diagonal tiles' few extra entries below the diagonal, which are computed and
    /// must be ignored). The vector path holds a 4×12 tile of G in registers while it runs down the panel, so each loaded panel value
    /// feeds 3 or 4 fused multiply-adds and G is read and written once per panel instead of once per row.</para>
    /// <para>Reproducibility: every entry of G receives the products of the panel rows in row order, starting from its previous value, so
    /// the result does not depend on the tiling. The vector path (x64 with AVX2 and FMA) rounds each product-sum once (fused
    /// multiply-add); the portable path rounds product and sum separately, so the two paths may differ in the last bits. Either path
    /// gives the same bits for the same input on the same machine.</para>
    /// </remarks>
    internal static class GramKernels
    {
        /// <summary>Doubles per vector of the vector path, and the multiple that the leading dimension must have.</summary>
        public const int Width = 4;

        /// <summary>Whether the vector path runs on this machine (always false on the portable build).</summary>
        public static bool IsVectorized =>
#if NET
            Vector256.IsHardwareAccelerated && Fma.IsSupported;
#else
            false;
#endif

        /// <summary>Rounds a column count up to a multiple of <see cref="Width"/>.</summary>
        public static int PaddedColumns(int columns) => (columns + Width - 1) / Width * Width;

        /// <summary>Adds the Gram matrix of the first <paramref name="rows"/> panel rows into the upper triangle of <paramref name="g"/>.</summary>
        /// <param name="panel">Rows, row-major, stride <paramref name="ld"/>; columns beyond the used ones must be zero.</param>
        /// <param name="rows">Number of rows to add.</param>
        /// <param name="ld">Leading dimension of the panel and of G (multiple of <see cref="Width"/>).</param>
        /// <param name="g">ld×ld, row-major; only entries with column ≥ row are meaningful.</param>
        public static void AddPanel(ReadOnlySpan<double> panel, int rows, int ld, Span<double> g)
        {
            if (rows <= 0)
            {
                return;
            }

            if (panel.Length < rows * ld || g.Length < ld * ld || ld % Width != 0)
            {
                Guard.ThrowArgument(nameof(panel), "panel or Gram buffer too short, or leading dimension not a multiple of the vector width.");
            }

#if NET
            if (IsVectorized)
            {
                AddPanelVector(panel, rows, ld, g);
                return;
            }
#endif
            AddPanelScalar(panel, rows, ld, g);
        }

        /// <summary>The portable path: plain multiply and add, entry by entry in row order.</summary>
        internal static void AddPanelScalar(ReadOnlySpan<double> panel, int rows, int ld, Span<double> g)
        {
            for (int r = 0; r < rows; r++)
            {
                ReadOnlySpan<double> z = panel.Slice(r * ld, ld);
                for (int j = 0; j < ld; j++)
                {
                    double zj = z[j];
                    if (zj == 0.0)
                    {
                        continue; // zero padding (and exact zeros): the products would add nothing
                    }

                    Span<double> gj = g.Slice(j * ld, ld);
                    for (int k = j; k < ld; k++)
                    {
                        gj[k] += zj * z[k];
                    }
                }
            }
        }

#if NET
        private static void AddPanelVector(ReadOnlySpan<double> panel, int rows, int ld, Span<double> g)
        {
            ref double z = ref MemoryMarshal.GetReference(panel);
            ref double gr = ref MemoryMarshal.GetReference(g);
            for (int j0 = 0; j0 < ld; j0 += 4)
            {
                int k0 = j0;
                for (; k0 + 12 <= ld; k0 += 12)
                {
                    Tile4x12(ref z, rows, ld, ref gr, j0, k0);
                }

                int rest = ld - k0;
                if (rest == 8)
                {
                    Tile4x8(ref z, rows, ld, ref gr, j0, k0);
                }
                else if (rest == 4)
                {
                    Tile4x4(ref z, rows, ld, ref gr, j0, k0);
                }
            }
        }

        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
        private static void Tile4x12(ref double z, int rows, int ld, ref double g, int j0, int k0)
        {
            nuint uld = (nuint)ld;
            nuint g0 = ((nuint)j0 * uld) + (nuint)k0;
            nuint g1 = g0 + uld;
            nuint g2 = g1 + uld;
            nuint g3 = g2 + uld;
            Vector256<double> c00 = Vector256.LoadUnsafe(ref g, g0);
            Vector256<double> c01 = Vector256.LoadUnsafe(ref g, g0 + 4);
            Vector256<double> c02 = Vector256.LoadUnsafe(ref g, g0 + 8);
            Vector256<double> c10 = Vector256.LoadUnsafe(ref g, g1);
            Vector256<double> c11 = Vector256.LoadUnsafe(ref g, g1 + 4);
            Vector256<double> c12 = Vector256.LoadUnsafe(ref g, g1 + 8);
            Vector256<double> c20 = Vector256.LoadUnsafe(ref g, g2);
            Vector256<double> c21 = Vector256.LoadUnsafe(ref g, g2 + 4);
            Vector256<double> c22 = Vector256.LoadUnsafe(ref g, g2 + 8);
            Vector256<double> c30 = Vector256.LoadUnsafe(ref g, g3);
            Vector256<double> c31 = Vector256.LoadUnsafe(ref g, g3 + 4);
            Vector256<double> c32 = Vector256.LoadUnsafe(ref g, g3 + 8);
            nuint o = 0;
            for (int r = 0; r < rows; r++, o += uld)
            {
                ref double row = ref Unsafe.Add(ref z, o);
                Vector256<double> x0 = Vector256.LoadUnsafe(ref row, (nuint)k0);
                Vector256<double> x1 = Vector256.LoadUnsafe(ref row, (nuint)k0 + 4);
                Vector256<double> x2 = Vector256.LoadUnsafe(ref row, (nuint)k0 + 8);
                Vector256<double> b = Vector256.Create(Unsafe.Add(ref row, j0));
                c00 = Fma.MultiplyAdd(b, x0, c00);
                c01 = Fma.MultiplyAdd(b, x1, c01);
                c02 = Fma.MultiplyAdd(b, x2, c02);
                b = Vector256.Create(Unsafe.Add(ref row, j0 + 1));
                c10 = Fma.MultiplyAdd(b, x0, c10);
                c11 = Fma.MultiplyAdd(b, x1, c11);
                c12 = Fma.MultiplyAdd(b, x2, c12);
                b = Vector256.Create(Unsafe.Add(ref row, j0 + 2));
                c20 = Fma.MultiplyAdd(b, x0, c20);
                c21 = Fma.MultiplyAdd(b, x1, c21);
                c22 = Fma.MultiplyAdd(b, x2, c22);
                b = Vector256.Create(Unsafe.Add(ref row, j0 + 3));
                c30 = Fma.MultiplyAdd(b, x0, c30);
                c31 = Fma.MultiplyAdd(b, x1, c31);
                c32 = Fma.MultiplyAdd(b, x2, c32);
            }

            c00.StoreUnsafe(ref g, g0);
            c01.StoreUnsafe(ref g, g0 + 4);
            c02.StoreUnsafe(ref g, g0 + 8);
            c10.StoreUnsafe(ref g, g1);
            c11.StoreUnsafe(ref g, g1 + 4);
            c12.StoreUnsafe(ref g, g1 + 8);
            c20.StoreUnsafe(ref g, g2);
            c21.StoreUnsafe(ref g, g2 + 4);
            c22.StoreUnsafe(ref g, g2 + 8);
            c30.StoreUnsafe(ref g, g3);
            c31.StoreUnsafe(ref g, g3 + 4);
            c32.StoreUnsafe(ref g, g3 + 8);
        }

        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
        private static void Tile4x8(ref double z, int rows, int ld, ref double g, int j0, int k0)
        {
            nuint uld = (nuint)ld;
            nuint g0 = ((nuint)j0 * uld) + (nuint)k0;
            nuint g1 = g0 + uld;
            nuint g2 = g1 + uld;
            nuint g3 = g2 + uld;
            Vector256<double> c00 = Vector256.LoadUnsafe(ref g, g0);
            Vector256<double> c01 = Vector256.LoadUnsafe(ref g, g0 + 4);
            Vector256<double> c10 = Vector256.LoadUnsafe(ref g, g1);
            Vector256<double> c11 = Vector256.LoadUnsafe(ref g, g1 + 4);
            Vector256<double> c20 = Vector256.LoadUnsafe(ref g, g2);
            Vector256<double> c21 = Vector256.LoadUnsafe(ref g, g2 + 4);
            Vector256<double> c30 = Vector256.LoadUnsafe(ref g, g3);
            Vector256<double> c31 = Vector256.LoadUnsafe(ref g, g3 + 4);
            nuint o = 0;
            for (int r = 0; r < rows; r++, o += uld)
            {
                ref double row = ref Unsafe.Add(ref z, o);
                Vector256<double> x0 = Vector256.LoadUnsafe(ref row, (nuint)k0);
                Vector256<double> x1 = Vector256.LoadUnsafe(ref row, (nuint)k0 + 4);
                Vector256<double> b = Vector256.Create(Unsafe.Add(ref row, j0));
                c00 = Fma.MultiplyAdd(b, x0, c00);
                c01 = Fma.MultiplyAdd(b, x1, c01);
                b = Vector256.Create(Unsafe.Add(ref row, j0 + 1));
                c10 = Fma.MultiplyAdd(b, x0, c10);
                c11 = Fma.MultiplyAdd(b, x1, c11);
                b = Vector256.Create(Unsafe.Add(ref row, j0 + 2));
                c20 = Fma.MultiplyAdd(b, x0, c20);
                c21 = Fma.MultiplyAdd(b, x1, c21);
                b = Vector256.Create(Unsafe.Add(ref row, j0 + 3));
                c30 = Fma.MultiplyAdd(b, x0, c30);
                c31 = Fma.MultiplyAdd(b, x1, c31);
            }

            c00.StoreUnsafe(ref g, g0);
            c01.StoreUnsafe(ref g, g0 + 4);
            c10.StoreUnsafe(ref g, g1);
            c11.StoreUnsafe(ref g, g1 + 4);
            c20.StoreUnsafe(ref g, g2);
            c21.StoreUnsafe(ref g, g2 + 4);
            c30.StoreUnsafe(ref g, g3);
            c31.StoreUnsafe(ref g, g3 + 4);
        }

        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
        private static void Tile4x4(ref double z, int rows, int ld, ref double g, int j0, int k0)
        {
            nuint uld = (nuint)ld;
            nuint g0 = ((nuint)j0 * uld) + (nuint)k0;
            nuint g1 = g0 + uld;
            nuint g2 = g1 + uld;
            nuint g3 = g2 + uld;
            Vector256<double> c0 = Vector256.LoadUnsafe(ref g, g0);
            Vector256<double> c1 = Vector256.LoadUnsafe(ref g, g1);
            Vector256<double> c2 = Vector256.LoadUnsafe(ref g, g2);
            Vector256<double> c3 = Vector256.LoadUnsafe(ref g, g3);
            nuint o = 0;
            for (int r = 0; r < rows; r++, o += uld)
            {
                ref double row = ref Unsafe.Add(ref z, o);
                Vector256<double> x0 = Vector256.LoadUnsafe(ref row, (nuint)k0);
                c0 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref row, j0)), x0, c0);
                c1 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref row, j0 + 1)), x0, c1);
                c2 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref row, j0 + 2)), x0, c2);
                c3 = Fma.MultiplyAdd(Vector256.Create(Unsafe.Add(ref row, j0 + 3)), x0, c3);
            }

            c0.StoreUnsafe(ref g, g0);
            c1.StoreUnsafe(ref g, g1);
            c2.StoreUnsafe(ref g, g2);
            c3.StoreUnsafe(ref g, g3);
        }
#endif
    }
}
