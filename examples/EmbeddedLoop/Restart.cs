using System;
using System.Diagnostics;
using OnlineRidge;

namespace EmbeddedLoop
{
    /// <summary>
    /// The simulated restart. The loop's task dies at <c>crashAtTick</c>; the new task restores the estimator as it was at the last
    /// checkpoint and carries on with the samples that follow. Verification: the restored estimator, fed the same later samples as the
    /// uninterrupted one, must read back the same parameter bits at every tick.
    /// </summary>
    /// <remarks>
    /// Snapshot support is not on main yet, so the restore re-creates the estimator with the same settings and replays the logged
    /// samples up to the checkpoint (the estimator is deterministic: same inputs, same runtime and hardware, same bits). With snapshots
    /// the checkpoint becomes a WriteSnapshot every N ticks and the restore a ReadSnapshot; the verification stays as it is.
    /// </remarks>
    internal static class Restart
    {
        public static Result Verify(LoopLog log, int checkpointEvery, int crashAtTick)
        {
            int p = Program.P;
            int checkpoint = crashAtTick / checkpointEvery * checkpointEvery;

            long begin = Stopwatch.GetTimestamp();
            var restored = new SquareRootEstimator(p, Program.Settings);
            for (int k = 0; k < checkpoint; k++)
            {
                restored.Update(log.X.AsSpan(k * p, p), log.Y[k]);
            }

            var theta = new double[p];
            restored.CopyParametersTo(theta);
            double restoreUs = (Stopwatch.GetTimestamp() - begin) * 1e6 / Stopwatch.Frequency;

            bool identical = true;
            double largest = 0.0;
            Compare(theta, log, checkpoint - 1, ref identical, ref largest);
            for (int k = checkpoint; k < log.Length; k++)
            {
                restored.Update(log.X.AsSpan(k * p, p), log.Y[k]);
                restored.CopyParametersTo(theta);
                Compare(theta, log, k, ref identical, ref largest);
            }

            return new Result(checkpoint, log.Length - checkpoint, identical, largest, restoreUs, "estimator re-created, logged samples replayed");
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
