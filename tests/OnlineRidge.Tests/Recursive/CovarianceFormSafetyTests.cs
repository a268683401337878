using System;
using System.Collections.Generic;
using System.Linq;
using OnlineRidge.Tests.Persistence;
using OnlineRidge.Tests.Properties;
using Xunit;

namespace OnlineRidge.Tests.Recursive
{
    /// <summary>
    /// Long-running safety of <see cref="CovarianceFormEstimator"/> (DESIGN.md failure tiers; InvalidSamplePolicy; WriteSnapshot/ReadSnapshot
    /// docs). References: a second estimator fed the same clean data, and the binary snapshot as the fingerprint of the whole state.
    /// </summary>
    public class CovarianceFormSafetyTests
    {
        private const int Cases = 150;

        internal static SafetyForm<CovarianceFormEstimator> Form { get; } = new()
        {
            Kind = "CovarianceFormEstimator",
            Create = (c, policy) => new CovarianceFormEstimator(c.P, new CovarianceFormSettings
            {
                ForgettingFactor = c.Beta,
                PriorWeight = c.Penalty > 0.0 ? c.Penalty : CovarianceFormSettings.DefaultPriorWeight,
                Prior = c.Prior,
                Update = (c.Seed / 2) % 2 == 0 ? CovarianceUpdate.Symmetric : CovarianceUpdate.JosephLike,
                InvalidSamples = policy,
                Windup = WindupOf(c),
            }),
            Update = (e, x, y, w) => e.Update(x, y, w),
            TryUpdate = (e, x, y, w) => (e.TryUpdate(x, y, w, out BreakdownInfo bd), bd),
            Write = (e, s, enc) => e.WriteSnapshot(s, enc),
            Read = CovarianceFormEstimator.ReadSnapshot,
            SampleCount = e => e.SampleCount,
            SkippedCount = e => e.SkippedSampleCount,
            Results = e =>
            {
                var theta = new double[e.ParameterCount];
                var cov = new double[e.ParameterCount * e.ParameterCount];
                e.CopyParametersTo(theta);
                e.CopyCovarianceTo(cov);
                return theta.Concat(cov).Concat(new[] { e.MinimumCost, e.LastPriorError, e.Predict(theta), e.LogForgettingProduct, e.LastForgettingFactor }).ToArray();
            },
            BadQueries = (e, badX) => new (string, Action)[]
            {
                ("x", () => e.Predict(badX)),
                ("x", () => e.Predict(new double[e.ParameterCount + 1])),
                ("destination", () => e.CopyParametersTo(new double[e.ParameterCount - 1])),
                ("destination", () => e.CopyCovarianceTo(new double[(e.ParameterCount * e.ParameterCount) - 1])),
            },
            NegativeAllowed = new[] { "lastPriorError", "logForgettingProduct" },
        };

        /// <summary>
        /// A windup policy chosen by the case's seed so that the safety properties cover all four: none; a trace bound twice tr(P₀); EFRA with
        /// α = 0.5, b = c = 10⁻³ when β allows it (η² + 4bc ≤ (1 − α)², MATH.md §2.4c); directional forgetting μ = 0.95 (with a dead zone in
        /// half of those cases) when β = 1.
        /// </summary>
        internal static WindupProtection WindupOf(SquareRootCase c)
        {
            double eta = (1.0 - c.Beta) / c.Beta;
            double delta = c.Penalty > 0.0 ? c.Penalty : CovarianceFormSettings.DefaultPriorWeight;
            return (((uint)c.Seed / 4) % 4) switch
            {
                1 => WindupProtection.TraceBound(2.0 * c.P / delta),
                2 when c.Beta < 1.0 && (eta * eta) + 4e-6 <= 0.25 => WindupProtection.ExponentialResetting(0.5, 1e-3, 1e-3),
                3 when c.Beta == 1.0 => WindupProtection.Directional(0.95, (c.Seed / 16) % 2 == 0 ? 0.0 : 1e-3),
                _ => WindupProtection.None,
            };
        }

        private static CovarianceFormEstimator Reference()
        {
            var est = new CovarianceFormEstimator(3, new CovarianceFormSettings
            {
                ForgettingFactor = 0.97,
                PriorWeight = 0.01,
                Prior = new[] { 1.0, 2.0, 3.0 },
                Update = CovarianceUpdate.JosephLike,
                InvalidSamples = InvalidSamplePolicy.SkipAndCount,
            });
            var rng = new Random(23);
            for (int i = 0; i < 20; i++)
            {
                est.Update(new[] { rng.NextDouble(), rng.NextDouble(), rng.NextDouble() }, rng.NextDouble());
            }

            return est;
        }

        /// <summary>Theorem (DESIGN.md tier 1): bad samples and bad queries throw naming the parameter; the snapshot bytes are unchanged.</summary>
        [Fact]
        public void BadInputLeavesTheSnapshotBytesUnchanged() => SafetyHarness.BadInputChangesNothing(Form, 0x5AFE_0101UL, Cases);

        /// <summary>Theorem (SkipAndCount docs): dropouts leave exactly the state of the clean stream; the counter equals their number.</summary>
        [Fact]
        public void SkipAndCountIgnoresExactlyTheDropouts() => SafetyHarness.SkipAndCountIgnoresExactlyTheDropouts(Form, 0x5AFE_0102UL, Cases);

        /// <summary>
        /// Theorem (DESIGN.md tier 2): a regressor of 10²⁰⁰ makes xᵀPx overflow — reported as NonFinite under either policy, state
        /// bit-identical, nothing skipped; skipping allocates nothing.
        /// </summary>
        [Theory]
        [InlineData(InvalidSamplePolicy.Throw)]
        [InlineData(InvalidSamplePolicy.SkipAndCount)]
        public void OverflowIsReportedNotSkipped(InvalidSamplePolicy policy) =>
            SafetyHarness.OverflowIsReportedNotSkipped(Form, policy, new[] { 1.0, 1e200, 2.0 }, 1.0, BreakdownKind.NonFinite);

        /// <summary>Theorem (snapshot docs): restore∘write is the identity on the bytes (both encodings) and on every result's bits.</summary>
        [Fact]
        public void SnapshotRoundTripIsBitExact() => SafetyHarness.RoundTripIsBitExact(Form, 0x5AFE_0103UL, Cases);

        /// <summary>Theorem (restart contract): restored mid-stream and fed the rest, the results equal the uninterrupted run's bit for bit.</summary>
        [Fact]
        public void RestoredMidStreamContinuesBitIdentically() => SafetyHarness.RestoredMidStreamContinuesBitIdentically(Form, 0x5AFE_0104UL, Cases);

        /// <summary>Claim (ReadSnapshot docs): corrupt, truncated, foreign and inconsistent snapshots throw SnapshotFormatException.</summary>
        [Fact]
        public void CorruptTruncatedForeignAndInconsistentSnapshotsAreRejected()
        {
            CovarianceFormEstimator est = Reference();
            double[] cov = Support.SnapshotBytes.Array(Form.Bytes(est), "covariance");
            SafetyHarness.BadSnapshotsAreRejected(Form, est, new List<(string, object)>
            {
                ("covariance", cov.Select((v, i) => i == 0 ? 0.0 : v).ToArray()), // non-positive diagonal
                ("covariance", cov.Select((v, i) => i == 3 ? -v : v).ToArray()),   // (1, 1) of the packed 3×3
                ("lastPriorError", double.PositiveInfinity),
                ("priorWeight", 0.0),
                ("forgettingFactor", 1.5),
                ("parameterCount", 4L),
                ("prior", new[] { 1.0, double.NaN, 3.0 }),
                ("covarianceScale", 0.5),                    // below 1: σ only grows
                ("covarianceScale", 2.0),                    // the Joseph-like form keeps σ = 1
                ("covarianceScale", double.PositiveInfinity),
            });
        }

        /// <summary>
        /// Claim (ReadSnapshot docs): a layout-1 snapshot (P stored as is, no scale entry) of a symmetric-form estimator restores to the same
        /// θ, P and J* bit for bit, and fed the same further data agrees with the original to rounding (10⁻¹² relative): the layout-2 scale
        /// σ (P = σ·P̃) is a representation, not part of the model. The layout-1 bytes are built from the original's reported P.
        /// </summary>
        [Fact]
        public void LayoutOneSnapshotStillRestores()
        {
            const int P = 5;
            var rng = new Random(20261202);
            var est = new CovarianceFormEstimator(P, new CovarianceFormSettings { ForgettingFactor = 0.97 });
            var x = new double[P];
            void Feed(CovarianceFormEstimator e, Random r, int count)
            {
                for (int k = 0; k < count; k++)
                {
                    for (int j = 0; j < P; j++)
                    {
                        x[j] = r.NextDouble() - 0.5;
                    }

                    e.Update(x, x[0] - (2.0 * x[3]) + (0.01 * (r.NextDouble() - 0.5)));
                }
            }

            Feed(est, rng, 800);
            var cov = new double[P * P];
            est.CopyCovarianceTo(cov);
            var packed = new List<double>();
            for (int i = 0; i < P; i++)
            {
                for (int j = i; j < P; j++)
                {
                    packed.Add(cov[(i * P) + j]);
                }
            }

            byte[] v2 = Support.SnapshotBytes.Of((st, enc) => est.WriteSnapshot(st, enc));
            Assert.NotEqual(1.0, OnlineRidge.Persistence.SnapshotCodec.Read(new System.IO.MemoryStream(v2)).GetDouble("covarianceScale"));
            byte[] v1 = Support.SnapshotBytes.Edit(Support.SnapshotBytes.Edit(v2, "covariance", packed.ToArray()), "covarianceScale", null, version: 1);
            CovarianceFormEstimator old = CovarianceFormEstimator.ReadSnapshot(new System.IO.MemoryStream(v1));
            Support.SnapshotBytes.AssertBitEqual(Form.Results(est), Form.Results(old), "restored from layout 1");

            Feed(est, new Random(7), 300);
            Feed(old, new Random(7), 300);
            double[] a = Form.Results(est);
            double[] b = Form.Results(old);
            for (int i = 0; i < a.Length; i++)
            {
                Assert.True(Math.Abs(a[i] - b[i]) <= 1e-12 * Math.Max(1.0, Math.Abs(a[i])), $"result {i}: {a[i]:R} vs {b[i]:R}");
            }
        }

        /// <summary>Claim (SnapshotEncoding.Json docs): the JSON names the kind, every setting and state entry, and the values read as text.</summary>
        [Fact]
        public void JsonSnapshotNamesTheSettings() =>
            SafetyHarness.JsonNamesEveryEntry(Form, Reference(), "\"forgettingFactor\"", "0.97", "\"priorWeight\"", "0.01", "\"JosephLike\"", "\"SkipAndCount\"");

        /// <summary>Theorem (DESIGN.md tier 1): an undefined policy is refused by the setting, naming it and the value.</summary>
        [Fact]
        public void UndefinedPolicyIsRefusedNamingTheSetting()
        {
            var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new CovarianceFormSettings { InvalidSamples = (InvalidSamplePolicy)2 });
            Assert.Equal(nameof(CovarianceFormSettings.InvalidSamples), ex.ParamName);
            Assert.Contains("2", ex.Message, StringComparison.Ordinal);
        }
    }
}
