using System;
using System.Linq;
using FsCheck;
using FsCheck.Fluent;
using OnlineRidge.Tests.Properties;
using Xunit;

namespace OnlineRidge.Tests.Recursive
{
    /// <summary>
    /// Measures, for p = 16, the largest covariance-form vs batch difference as a fraction of the MATH.md §10 tolerance over 100 generated
    /// problems (n up to 200, checked every 10 samples), for both update forms, and prints it. It asserts the same bounds as the properties.
    /// Run (the in-process xUnit runner shows the output of passing tests): dotnet build OnlineRidge.sln -c Release, then
    /// dotnet tests/OnlineRidge.Tests/bin/Release/net10.0/OnlineRidge.Tests.dll -class "OnlineRidge.Tests.Recursive.CovarianceFormAccuracyReportTests" -showLiveOutput
    /// </summary>
    public class CovarianceFormAccuracyReportTests
    {
        private readonly ITestOutputHelper output;

        public CovarianceFormAccuracyReportTests(ITestOutputHelper output) => this.output = output;

        [Theory]
        [InlineData(CovarianceUpdate.Symmetric)]
        [InlineData(CovarianceUpdate.JosephLike)]
        public void LargestDifferenceAsFractionOfToleranceAtSixteenRegressors(CovarianceUpdate form)
        {
            var cases = RecursiveGenerators.Cases(20, 200).Sample(100, new Rnd(20261202UL, 1442695040888963407UL), 50)
                .Select(c => c with { P = 16, Flag = form == CovarianceUpdate.JosephLike }).ToArray();
            double theta = 0, cov = 0, cost = 0, thetaMath = 0, covMath = 0;
            int compared = 0, skipped = 0;
            foreach (var c in cases)
            {
                var r = CovarianceFormPropertyTests.CompareAfterEverySample(c, checkEvery: 10);
                theta = Math.Max(theta, r.ThetaRatio);
                cov = Math.Max(cov, r.CovarianceRatio);
                cost = Math.Max(cost, r.CostRatio);
                thetaMath = Math.Max(thetaMath, r.ThetaRatioMathPath);
                covMath = Math.Max(covMath, r.CovarianceRatioMathPath);
                compared += r.Compared;
                skipped += r.Skipped;
            }

            output.WriteLine(FormattableString.Invariant(
                $"covariance form ({form}), p = 16, {cases.Length} problems, {compared} comparisons, {skipped} skipped (tol > 1e-2): max diff/tol θ {theta:E2}, P {cov:E2}, J* {cost:E2}; with κ_path exactly as in MATH §10 (no growth term): θ {thetaMath:E2}, P {covMath:E2}"));
            Assert.True(theta <= 1 && cov <= 1 && cost <= 1);
        }
    }
}
