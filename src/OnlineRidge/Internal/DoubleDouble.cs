using System;
using System.Runtime.CompilerServices;

namespace OnlineRidge.Internal
{
    /// <summary>
    /// Error-free transformations (Knuth TwoSum; TwoProduct by fused multiply-add, or Dekker/Veltkamp splitting on the portable build)
    /// for residuals and gradients accumulated in double-double (about 32 significant digits; Dekker 1971, Ogita, Rump and Oishi 2005).
    /// </summary>
    internal static class DoubleDouble
    {
        /// <summary>s + e = a + b exactly.</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public static double TwoSum(double a, double b, out double e)
        {
            double s = a + b;
            double bv = s - a;
            e = (a - (s - bv)) + (b - bv);
            return s;
        }

        /// <summary>p + e = a·b exactly (barring overflow and underflow).</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public static double TwoProduct(double a, double b, out double e)
        {
            double p = a * b;
#if NET
            e = Math.FusedMultiplyAdd(a, b, -p);
#else
            const double Split = 134217729.0; // 2^27 + 1
            double ca = Split * a;
            double ah = ca - (ca - a);
            double al = a - ah;
            double cb = Split * b;
            double bh = cb - (cb - b);
            double bl = b - bh;
            e = ((ah * bh) - p + (ah * bl) + (al * bh)) + (al * bl);
#endif
            return p;
        }

        /// <summary>(hi, lo) += a·(bHi + bLo), keeping about twice the working precision.</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public static void AddProduct(ref double hi, ref double lo, double a, double bHi, double bLo)
        {
            double p = TwoProduct(a, bHi, out double pe);
            pe += a * bLo;
            double s = TwoSum(hi, p, out double se);
            se += lo + pe;
            hi = s + se;
            lo = se - (hi - s);
        }
    }
}
