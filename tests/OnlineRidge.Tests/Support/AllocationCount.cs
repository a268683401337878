using System;

namespace OnlineRidge.Tests.Support
{
    /// <summary>
    /// Bytes a piece of code allocates on the calling thread (GC.GetAllocatedBytesForCurrentThread), for the zero-allocation claims of the hot
    /// paths. The code runs once unmeasured (that run compiles what it calls and its own loops), then up to <see cref="Windows"/> times
    /// measured; the first window that allocated nothing is reported, else the smallest count.
    /// </summary>
    /// <remarks>
    /// Why more than one window: under a full <c>dotnet test</c> run (two test assemblies and many test threads on two cores) a single
    /// window after a warm-up has been seen to count 1.4–5.8 KB, once in several runs, in tests whose code allocates nothing when run alone
    /// (six runs of the assembly alone and three beside a concurrent test run did not repeat it). A probe on this machine showed that a
    /// garbage collection started by another thread does not change the count, so the likely source is one-time runtime work that lands on
    /// the calling thread (tiered compilation's promotions, whose start is delayed while other threads keep compiling). Such work does not
    /// repeat; code that allocates on every call (or every few thousand calls) shows a non-zero count in every window and still fails.
    /// </remarks>
    internal static class AllocationCount
    {
        /// <summary>Measured windows at the most.</summary>
        public const int Windows = 4;

        /// <summary>Runs <paramref name="run"/> once to warm up, then measures it in up to <see cref="Windows"/> windows (see the type remarks).</summary>
        /// <returns>0 when some window allocated nothing, else the smallest count of bytes seen.</returns>
        public static long InSteadyState(Action run) => InSteadyState(run, out _);

        /// <summary>As <see cref="InSteadyState(Action)"/>, also telling how many times <paramref name="run"/> ran (warm-up included).</summary>
        /// <returns>0 when some window allocated nothing, else the smallest count of bytes seen.</returns>
        public static long InSteadyState(Action run, out int runs)
        {
            run();
            runs = 1;
            long smallest = long.MaxValue;
            for (int k = 0; k < Windows; k++)
            {
                long before = GC.GetAllocatedBytesForCurrentThread();
                run();
                long bytes = GC.GetAllocatedBytesForCurrentThread() - before;
                runs++;
                if (bytes == 0)
                {
                    return 0;
                }

                smallest = Math.Min(smallest, bytes);
            }

            return smallest;
        }
    }
}
