namespace OnlineRidge
{
    /// <summary>Identity of the library build that is loaded.</summary>
    /// <remarks>Cost: none. Thread-safe.</remarks>
    public static class BuildInfo
    {
        /// <summary>
        /// True for the net10.0 build, whose kernels may use hardware intrinsics (System.Runtime.Intrinsics);
        /// false for the portable netstandard2.0 build (for .NET Framework 4.8 hosts), which runs scalar code only.
        /// Both builds compute the same quantities; the last bits may differ between them.
        /// </summary>
        public static bool HasIntrinsicKernels =>
#if NET
            true;
#else
            false;
#endif
    }
}
