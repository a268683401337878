using System;
using System.Linq;
using FsCheck;
using FsCheck.Fluent;
using OnlineRidge.Tests.Properties;
using Xunit;

namespace OnlineRidge.Tests.Recursive
{
    /// <summary>
    /// Measures, for p = 16, the largest information-form vs batch difference as a fraction of the MATH.md §10 tolerance over 200 generated
    /// problems (n up to 200, three checkpoints each, all settings combinations), and prints it. It asserts the same bound as the property.
    /// Run (the in-process xUnit runner shows the output of passing tests): dotnet build OnlineRidge.sln -c Release, then
    /// dotnet tests/OnlineRidge.Tests/bin/Release/net10.0/OnlineRidge.Tests.dll -class "OnlineRidge.Tests.Recursive.InformationFormAccuracyReportTests" -showLiveOutput
    /// </summary>
    public class InformationFormAccuracyReportTests
    {
        private readonly ITestOutputHelper output;

        public InformationFormAccuracyReportTests(ITestOutputHelper output) => this.output = output;

        [Fact]
        public void LargestDifferenceAsFractionOfToleranceAtSixteenRegressors()
        {
            var cases = RecursiveGenerators.Cases(20, 200).Sample(200, new Rnd(4242UL, 6364136223846793005UL), 50)
                .Select(c => c with { P = 16 }).ToArray();
            double worst = 0;
            int compared = 0, skipped = 0;
            foreach (var c in cases)
            {
                RecursiveData data = c.Materialize();
                var est = new InformationFormEstimator(c.P, InformationFormPropertyTests.SettingsOf(c, data), InformationFormPropertyTests.RegimeOf(c));
                int[] checkpoints = InformationFormPropertyTests.Checkpoints(data.N);
                int next = 0;
                for (int k = 1; k <= data.N; k++)
                {
                    est.Update(data.X[k - 1], data.Y[k - 1], data.W[k - 1]);
                    if (k == checkpoints[next])
                    {
                        double r = InformationFormPropertyTests.CompareWithBatch(c, data, est, k);
                        if (double.IsNaN(r))
                        {
                            skipped++;
                        }
                        else
                        {
                            compared++;
                            worst = Math.Max(worst, r);
                        }

                        next++;
                    }
                }
            }

            output.WriteLine(FormattableString.Invariant(
                $"information form, p = 16, {cases.Length} problems, {compared} comparisons, {skipped} skipped (tol > 1e-2 or no weight): max diff/tol θ {worst:E2}"));
            Assert.True(worst <= 1);
        }
    }
}
