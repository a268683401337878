using System;
using System.Diagnostics;
using System.IO;
using System.Linq;
using OnlineRidge;

namespace EmbeddedLoop
{
    /// <summary>
    /// Snapshots taken in the loop every N ticks, each into its own preallocated buffer (standing in for storage that survives a restart).
    /// <see cref="SquareRootEstimator.WriteSnapshot"/> allocates O(p²) per call (documented), so the loop accounts for those bytes separately.
    /// </summary>
    internal sealed class Checkpoints
    {
        private readonly MemoryStream[] buffers;
        private readonly long[] costTicks;

        public Checkpoints(int capacity)
        {
            buffers = new MemoryStream[capacity];
            for (int i = 0; i < capacity; i++)
            {
                buffers[i] = new MemoryStream(4096);
            }

            costTicks = new long[capacity];
        }

        public int Count { get; private set; }

        /// <summary>Bytes allocated on this thread by the snapshot writes.</summary>
        public long AllocatedBytes { get; private set; }

        /// <summary>Size of the last snapshot, bytes.</summary>
        public long SizeBytes => Count == 0 ? 0 : buffers[Count - 1].Length;

        public double MedianMicroseconds =>
            Count == 0 ? double.NaN : costTicks.Take(Count).OrderBy(c => c).ElementAt(Count / 2) * 1e6 / Stopwatch.Frequency;

        public void Save(SquareRootEstimator estimator)
        {
            long before = GC.GetAllocatedBytesForCurrentThread();
            long begin = Stopwatch.GetTimestamp();
            MemoryStream buffer = buffers[Count];
            buffer.SetLength(0);
            estimator.WriteSnapshot(buffer);
            costTicks[Count] = Stopwatch.GetTimestamp() - begin;
            AllocatedBytes += GC.GetAllocatedBytesForCurrentThread() - before;
            Count++;
        }

        /// <summary>The bytes of snapshot number <paramref name="index"/> (0 = the one after the first N ticks).</summary>
        public byte[] Stored(int index) => buffers[index].ToArray();
    }

    /// <summary>
    /// The simulated restart. The loop's task dies at <c>crashAtTick</c>; the new task reads the estimator back from the last snapshot
    /// and carries on with the samples that follow. Verification: the restored estimator, fed the same later samples as the uninterrupted
    /// one, must read back the same parameter bits at every tick.
    /// </summary>
    internal static class Restart
    {
        public static Result Verify(LoopLog log, Checkpoints checkpoints, int checkpointEvery, int crashAtTick)
        {
            int p = Program.P;
            int index = (crashAtTick / checkpointEvery) - 1;  // snapshots are taken after ticks N − 1, 2N − 1, …
            int checkpoint = (index + 1) * checkpointEvery;    // samples the restored estimator has seen
            byte[] stored = checkpoints.Stored(index);         // what survived the restart

            long begin = Stopwatch.GetTimestamp();
            SquareRootEstimator restored;
            using (var source = new MemoryStream(stored, writable: false))
            {
                restored = SquareRootEstimator.ReadSnapshot(source);
            }

            var theta = new double[p];
            restored.CopyParametersTo(theta);
            double restoreUs = (Stopwatch.GetTimestamp() - begin) * 1e6 / Stopwatch.Frequency;

            bool identical = restored.SampleCount == checkpoint;
            double largest = 0.0;
            Compare(theta, log, checkpoint - 1, ref identical, ref largest);
            for (int k = checkpoint; k < log.Length; k++)
            {
                restored.Update(log.X.AsSpan(k * p, p), log.Y[k]);
                restored.CopyParametersTo(theta);
                Compare(theta, log, k, ref identical, ref largest);
            }

            return new Result(checkpoint, log.Length - checkpoint, identical, largest, restoreUs, "ReadSnapshot of the stored bytes, including the first solve");
        }

        private static void Compare(double[] theta, LoopLog log, int k, ref bool identical, ref double largest)
        {
            int p = theta.Length;
            for (int j = 0; j < p; j++)
            {
                double original = log.Theta[(k * p) + j];
                identical &= BitConverter.DoubleToInt64Bits(theta[j]) == BitConverter.DoubleToInt64Bits(original);
                largest = Math.Max(largest, Math.Abs(theta[j] - original));
            }
        }

        /// <summary>Outcome of the restart check.</summary>
        public sealed record Result(int CheckpointTick, int ComparedTicks, bool BitIdentical, double LargestDifference, double RestoreMicroseconds, string Method);
    }
}
