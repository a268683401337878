using System;
using System.IO;
using OnlineRidge.Tests.Support;
using Xunit;

namespace OnlineRidge.Tests.Recursive
{
    /// <summary>
    /// Contract of the windup policies (DESIGN.md tier 1, <see cref="WindupProtection"/> and <see cref="CovarianceFormEstimator"/> docs):
    /// invalid parameters are refused naming the parameter and the value, the cross conditions of MATH.md §2.4b–c are checked at
    /// construction, and every policy with its state survives a snapshot bit for bit.
    /// </summary>
    public class CovarianceWindupContractTests
    {
        public static TheoryData<string, double> BadParameters => new()
        {
            { "traceLimit", 0.0 },
            { "traceLimit", double.PositiveInfinity },
            { "traceLimit", double.NaN },
            { "gain", 1.0 },
            { "gain", 0.0 },
            { "addition", -1e-3 },
            { "contraction", double.NaN },
            { "directionalFactor", 0.0 },
            { "directionalFactor", 1.5 },
            { "deadZone", -1.0 },
        };

        /// <summary>Claim (factory docs): each out-of-range or NaN parameter throws ArgumentOutOfRangeException naming it and its value.</summary>
        [Theory]
        [MemberData(nameof(BadParameters))]
        public void FactoriesRefuseBadParametersNamingThem(string parameter, double value)
        {
            Action create = parameter switch
            {
                "traceLimit" => () => WindupProtection.TraceBound(value),
                "gain" => () => WindupProtection.ExponentialResetting(value, 0.005, 0.005),
                "addition" => () => WindupProtection.ExponentialResetting(0.5, value, 0.005),
                "contraction" => () => WindupProtection.ExponentialResetting(0.5, 0.005, value),
                "directionalFactor" => () => WindupProtection.Directional(value),
                _ => () => WindupProtection.Directional(0.9, value),
            };
            var ex = Assert.Throws<ArgumentOutOfRangeException>(create);
            Assert.Equal(parameter, ex.ParamName);
            Assert.Contains(value.ToString("R", System.Globalization.CultureInfo.InvariantCulture), ex.Message, StringComparison.Ordinal);
        }

        /// <summary>
        /// Claim (MATH.md §2.4b–d, constructor docs): tr(P₀) &gt; c_max, EFRA with β = 1 or with η² + 4bc &gt; (1 − α)², and directional
        /// forgetting with β &lt; 1 are refused with ArgumentException naming settings (or initialCovariance) and the offending values.
        /// </summary>
        [Fact]
        public void CrossConditionsAreCheckedAtConstruction()
        {
            var ex = Assert.Throws<ArgumentException>(() => new CovarianceFormEstimator(2, new CovarianceFormSettings { PriorWeight = 0.1, Windup = WindupProtection.TraceBound(19.0) }));
            Assert.Equal("settings", ex.ParamName);
            Assert.Contains("20", ex.Message, StringComparison.Ordinal);
            ex = Assert.Throws<ArgumentException>(() => new CovarianceFormEstimator(2, new CovarianceFormSettings { Windup = WindupProtection.TraceBound(5.0) }, new[] { 3.0, 0.0, 0.0, 3.0 }));
            Assert.Equal("initialCovariance", ex.ParamName);
            ex = Assert.Throws<ArgumentException>(() => new CovarianceFormEstimator(2, new CovarianceFormSettings { Windup = WindupProtection.ExponentialResetting(0.5, 0.005, 0.005) }));
            Assert.Equal("settings", ex.ParamName);
            ex = Assert.Throws<ArgumentException>(() => new CovarianceFormEstimator(2, new CovarianceFormSettings { ForgettingFactor = 0.95, Windup = WindupProtection.ExponentialResetting(0.5, 0.3, 0.3) }));
            Assert.Equal("settings", ex.ParamName);
            Assert.Contains("η² + 4bc ≤ (1 − α)²", ex.Message, StringComparison.Ordinal);
            ex = Assert.Throws<ArgumentException>(() => new CovarianceFormEstimator(2, new CovarianceFormSettings { ForgettingFactor = 0.99, Windup = WindupProtection.Directional(0.9) }));
            Assert.Equal("settings", ex.ParamName);
            Assert.Throws<ArgumentNullException>(() => new CovarianceFormSettings { Windup = null! });
        }

        /// <summary>
        /// Claim (MATH.md §2.4c): the typical values β = 0.95, α = 0.5, b = c = 0.005 give [σ_lo, σ_hi] = [0.0112, 10.6] (to the digits MATH.md
        /// quotes), and the estimator starts from P₀ = σ_hi·I whatever the prior weight.
        /// </summary>
        [Fact]
        public void ResettingBoundsMatchTheQuotedValuesAndStartAtTheUpperBound()
        {
            var policy = WindupProtection.ExponentialResetting(0.5, 0.005, 0.005);
            (double lo, double hi) = policy.Bounds(0.95);
            Assert.Equal(0.0112, lo, 4);
            Assert.Equal(10.6, hi, 1);
            var est = new CovarianceFormEstimator(3, new CovarianceFormSettings { ForgettingFactor = 0.95, PriorWeight = 7.0, Windup = policy });
            var cov = new double[9];
            est.CopyCovarianceTo(cov);
            Assert.Equal(new[] { hi, 0, 0, 0, hi, 0, 0, 0, hi }, cov);
        }

        /// <summary>
        /// Theorem (snapshot docs): for every policy, restore∘write gives the same bytes, the same settings (policy equal by value) and the same
        /// log product of recorded factors and last factor bit for bit, and the restored estimator continues bit-identically.
        /// </summary>
        [Theory]
        [InlineData(WindupProtectionKind.None)]
        [InlineData(WindupProtectionKind.TraceBound)]
        [InlineData(WindupProtectionKind.ExponentialResetting)]
        [InlineData(WindupProtectionKind.Directional)]
        public void EveryPolicyRoundTripsBitExactly(WindupProtectionKind kind)
        {
            WindupProtection policy = kind switch
            {
                WindupProtectionKind.TraceBound => WindupProtection.TraceBound(400.0),
                WindupProtectionKind.ExponentialResetting => WindupProtection.ExponentialResetting(0.5, 0.005, 0.005),
                WindupProtectionKind.Directional => WindupProtection.Directional(0.9, 1e-3),
                _ => WindupProtection.None,
            };
            var settings = new CovarianceFormSettings { ForgettingFactor = kind == WindupProtectionKind.Directional ? 1.0 : 0.9, PriorWeight = 0.01, Windup = policy };
            var est = new CovarianceFormEstimator(4, settings);
            var rng = new Random(99);
            var x = new double[4];
            for (int i = 0; i < 300; i++)
            {
                for (int j = 0; j < 4; j++)
                {
                    x[j] = i % 100 < 50 ? rng.NextDouble() - 0.5 : 0.0; // idle stretches make the trace bound raise βₙ
                }

                est.Update(x, rng.NextDouble(), i % 7 == 0 ? 0.0 : 1.0);
            }

            if (kind == WindupProtectionKind.TraceBound)
            {
                Assert.NotEqual(300 * Math.Log(0.9), est.LogForgettingProduct);
            }

            foreach (SnapshotEncoding encoding in new[] { SnapshotEncoding.Binary, SnapshotEncoding.Json })
            {
                byte[] bytes = SnapshotBytes.Of((s, e) => est.WriteSnapshot(s, e), encoding);
                CovarianceFormEstimator back = CovarianceFormEstimator.ReadSnapshot(new MemoryStream(bytes));
                SnapshotBytes.AssertSame(bytes, SnapshotBytes.Of((s, e) => back.WriteSnapshot(s, e), encoding), $"{encoding}");
                Assert.Equal(policy, back.Settings.Windup);
                Assert.Equal(BitConverter.DoubleToInt64Bits(est.LogForgettingProduct), BitConverter.DoubleToInt64Bits(back.LogForgettingProduct));
                Assert.Equal(BitConverter.DoubleToInt64Bits(est.LastForgettingFactor), BitConverter.DoubleToInt64Bits(back.LastForgettingFactor));
                Assert.Equal(est.CovarianceUpperBound, back.CovarianceUpperBound);
                x[0] = 0.3;
                est.Update(x, 1.0);
                back.Update(x, 1.0);
                SnapshotBytes.AssertSame(SnapshotBytes.Of((s, e) => est.WriteSnapshot(s, e)), SnapshotBytes.Of((s, e) => back.WriteSnapshot(s, e)), $"{encoding} continued");
                if (encoding == SnapshotEncoding.Json)
                {
                    string json = System.Text.Encoding.UTF8.GetString(bytes);
                    Assert.Contains("\"" + kind + "\"", json, StringComparison.Ordinal);
                }
            }
        }

        /// <summary>
        /// Claim (DESIGN.md hot path, policy docs): an update allocates nothing under any policy. Bytes allocated on the thread around 20 000
        /// updates, measured in a second round (dynamic PGO may allocate once during the first).
        /// </summary>
        [Theory]
        [InlineData(WindupProtectionKind.None)]
        [InlineData(WindupProtectionKind.TraceBound)]
        [InlineData(WindupProtectionKind.ExponentialResetting)]
        [InlineData(WindupProtectionKind.Directional)]
        public void UpdatesAllocateNothingUnderEveryPolicy(WindupProtectionKind kind)
        {
            WindupProtection policy = kind switch
            {
                WindupProtectionKind.TraceBound => WindupProtection.TraceBound(1e5),
                WindupProtectionKind.ExponentialResetting => WindupProtection.ExponentialResetting(0.5, 0.005, 0.005),
                WindupProtectionKind.Directional => WindupProtection.Directional(0.95),
                _ => WindupProtection.None,
            };
            var est = new CovarianceFormEstimator(5, new CovarianceFormSettings { ForgettingFactor = kind == WindupProtectionKind.Directional ? 1.0 : 0.95, Windup = policy });
            var x = new double[5];
            long allocated = long.MaxValue;
            for (int round = 0; round < 2; round++)
            {
                long start = GC.GetAllocatedBytesForCurrentThread();
                for (int i = 0; i < 20_000; i++)
                {
                    x[i % 5] = ((i * 7919) % 13) - 6.0;
                    est.Update(x, x[0] + 0.5, (i % 3) * 0.5);
                }

                allocated = GC.GetAllocatedBytesForCurrentThread() - start;
            }

            Assert.Equal(0, allocated);
        }
    }
}
