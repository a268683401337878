using System;
using System.Globalization;
using OnlineRidge.Internal;

namespace OnlineRidge
{
    /// <summary>
    /// Builds the regressor vectors of an ARX (auto-regressive with exogenous inputs) model from a stream of output samples y(t) and
    /// input samples u₁(t) … u_m(t), one time step at a time, with a separate order and delay for every input.
    /// </summary>
    /// <remarks>
    /// <para>Model (sign convention of Ljung 1999, <i>System Identification: Theory for the User</i>, 2nd ed., §4.2):
    /// y(t) + a₁y(t−1) + … + a_na·y(t−na) = Σᵢ [bᵢ,₁uᵢ(t−nkᵢ) + … + bᵢ,nbᵢ·uᵢ(t−nkᵢ−nbᵢ+1)] + e(t), written as the linear regression
    /// y(t) = φ(t)ᵀθ + e(t) with</para>
    /// <para><c>φ(t) = [−y(t−1), …, −y(t−na), u₁(t−nk₁), …, u₁(t−nk₁−nb₁+1), …, u_m(t−nk_m), …, u_m(t−nk_m−nb_m+1)]</c> and
    /// <c>θ = [a₁, …, a_na, b₁,₁, …, b₁,nb₁, …, b_m,1, …, b_m,nb_m]</c>.</para>
    /// <para>So a coefficient fitted on these regressors is directly an aᵢ (note the minus sign on the past outputs) or a bᵢ,ⱼ. A delay
    /// nkᵢ = 0 means direct feedthrough: uᵢ(t) enters φ(t). An input with order nbᵢ = 0 contributes no regressor (its delay is ignored).</para>
    /// <para>Warm-up: φ(t) needs samples back to t − <see cref="WarmUpSamples"/>, where WarmUpSamples = max(na, maxᵢ(nkᵢ + nbᵢ − 1)) over
    /// the inputs with nbᵢ &gt; 0. The first WarmUpSamples calls of <see cref="TryPush"/> therefore return false and write nothing; every
    /// later call returns true and writes φ(t). From N samples one gets N − WarmUpSamples rows.</para>
    /// <para>Cost: O(na + Σnbᵢ) per sample (one copy per regressor, ring-buffer indexing), no allocation; the ring buffers
    /// ((1 + m)·(WarmUpSamples + 1) doubles) are allocated by the constructor. Exact: the regressors are copies of the samples (negated for
    /// the outputs), no rounding.</para>
    /// <para>Failures: invalid orders or delays throw <see cref="ArgumentOutOfRangeException"/> from the constructor; a non-finite sample
    /// or a span of the wrong length throws <see cref="ArgumentException"/> before any state changes. Not thread-safe: one thread pushes.</para>
    /// </remarks>
    public sealed class ArxRegressor
    {
        private readonly int na;
        private readonly int[] nb;
        private readonly int[] nk;
        private readonly int history;
        private readonly double[] ring; // signal s (0 = output, 1 + i = input i) at time t is ring[s * history + t mod history]
        private int position;

        /// <summary>Creates the builder for a model with one output and any number of inputs.</summary>
        /// <param name="outputOrder">na ≥ 0: number of past outputs in φ.</param>
        /// <param name="inputOrders">nbᵢ ≥ 0 for every input: number of samples of input i in φ; its length is the number of inputs m (may be 0 for a pure AR model).</param>
        /// <param name="inputDelays">nkᵢ ≥ 0 for every input (0 = direct feedthrough); same length as <paramref name="inputOrders"/>.</param>
        /// <exception cref="ArgumentOutOfRangeException">A negative order or delay, a lag beyond 1 000 000 samples, or na + Σnbᵢ = 0 (no regressor at all).</exception>
        /// <exception cref="ArgumentException">The two spans differ in length.</exception>
        public ArxRegressor(int outputOrder, ReadOnlySpan<int> inputOrders, ReadOnlySpan<int> inputDelays)
        {
            const int MaxLag = 1_000_000;
            if (outputOrder < 0 || outputOrder > MaxLag)
            {
                Guard.ThrowOutOfRange(nameof(outputOrder), outputOrder, "an output order must lie in [0, 1000000]");
            }

            Guard.Length(inputDelays.Length, inputOrders.Length, nameof(inputDelays));
            int lag = outputOrder;
            long count = outputOrder;
            for (int i = 0; i < inputOrders.Length; i++)
            {
                if (inputOrders[i] < 0 || inputOrders[i] > MaxLag)
                {
                    Guard.ThrowArgument(nameof(inputOrders), string.Format(CultureInfo.InvariantCulture, "inputOrders[{0}] = {1} is invalid: an input order must lie in [0, 1000000].", i, inputOrders[i]));
                }

                if (inputDelays[i] < 0 || inputDelays[i] > MaxLag)
                {
                    Guard.ThrowArgument(nameof(inputDelays), string.Format(CultureInfo.InvariantCulture, "inputDelays[{0}] = {1} is invalid: a delay must lie in [0, 1000000].", i, inputDelays[i]));
                }

                if (inputOrders[i] > 0)
                {
                    lag = Math.Max(lag, inputDelays[i] + inputOrders[i] - 1);
                    count += inputOrders[i];
                }
            }

            if (count == 0)
            {
                Guard.ThrowOutOfRange(nameof(outputOrder), outputOrder, "the model has no regressor (output order and all input orders are 0)");
            }

            if (count > int.MaxValue / 2)
            {
                Guard.ThrowOutOfRange(nameof(inputOrders), count, "too many regressors");
            }

            na = outputOrder;
            nb = inputOrders.ToArray();
            nk = inputDelays.ToArray();
            RegressorCount = (int)count;
            WarmUpSamples = lag;
            history = lag + 1;
            ring = new double[(1 + nb.Length) * history];
        }

        /// <summary>Creates the builder for a single-input model (na, nb, nk).</summary>
        /// <param name="outputOrder">na ≥ 0.</param>
        /// <param name="inputOrder">nb ≥ 0.</param>
        /// <param name="inputDelay">nk ≥ 0 (0 = direct feedthrough).</param>
        /// <exception cref="ArgumentOutOfRangeException">As for the general constructor.</exception>
        public ArxRegressor(int outputOrder, int inputOrder, int inputDelay)
            : this(outputOrder, new[] { inputOrder }, new[] { inputDelay })
        {
        }

        /// <summary>na, the number of past outputs in φ.</summary>
        public int OutputOrder => na;

        /// <summary>m, the number of inputs every <see cref="TryPush"/> expects.</summary>
        public int InputCount => nb.Length;

        /// <summary>p = na + Σnbᵢ, the length of φ.</summary>
        public int RegressorCount { get; }

        /// <summary>Number of initial samples that produce no row: max(na, maxᵢ(nkᵢ + nbᵢ − 1)) over inputs with nbᵢ &gt; 0.</summary>
        public int WarmUpSamples { get; }

        /// <summary>Number of samples pushed since construction or the last <see cref="Reset"/>.</summary>
        public long SampleCount { get; private set; }

        /// <summary>Order nbᵢ of input <paramref name="input"/>.</summary>
        /// <param name="input">Zero-based input index.</param>
        /// <returns>The order.</returns>
        /// <exception cref="ArgumentOutOfRangeException">No such input.</exception>
        public int InputOrder(int input)
        {
            CheckInput(input);
            return nb[input];
        }

        /// <summary>Delay nkᵢ of input <paramref name="input"/>.</summary>
        /// <param name="input">Zero-based input index.</param>
        /// <returns>The delay.</returns>
        /// <exception cref="ArgumentOutOfRangeException">No such input.</exception>
        public int InputDelay(int input)
        {
            CheckInput(input);
            return nk[input];
        }

        /// <summary>
        /// Takes the samples y(t) and u(t) of the next time step and, once the warm-up is over, writes φ(t) (which uses u(t) only for inputs
        /// with delay 0, and never y(t)) into <paramref name="regressors"/>. Pair the row with y(t) as its output.
        /// </summary>
        /// <param name="output">y(t), finite.</param>
        /// <param name="inputs">u₁(t) … u_m(t), length <see cref="InputCount"/>, finite.</param>
        /// <param name="regressors">Destination of φ(t), length ≥ <see cref="RegressorCount"/>; untouched when the call returns false.</param>
        /// <returns>False during the first <see cref="WarmUpSamples"/> samples, true afterwards.</returns>
        /// <exception cref="ArgumentException">A sample is NaN or infinite, or a span has the wrong length; nothing is changed.</exception>
        public bool TryPush(double output, ReadOnlySpan<double> inputs, Span<double> regressors)
        {
            if (!Guard.IsFinite(output))
            {
                Guard.ThrowOutOfRange(nameof(output), output, "a sample must be finite");
            }

            Guard.Length(inputs.Length, nb.Length, nameof(inputs));
            Guard.AllFinite(inputs, nameof(inputs));
            if (regressors.Length < RegressorCount)
            {
                Guard.ThrowLength(nameof(regressors), regressors.Length, RegressorCount);
            }

            int pos = position;
            ring[pos] = output;
            for (int i = 0; i < inputs.Length; i++)
            {
                ring[((1 + i) * history) + pos] = inputs[i];
            }

            bool ready = SampleCount >= WarmUpSamples;
            if (ready)
            {
                int k = 0;
                for (int j = 1; j <= na; j++)
                {
                    int idx = pos - j;
                    regressors[k++] = -ring[idx < 0 ? idx + history : idx];
                }

                for (int i = 0; i < nb.Length; i++)
                {
                    int offset = (1 + i) * history;
                    int idx = pos - nk[i];
                    if (idx < 0)
                    {
                        idx += history;
                    }

                    for (int j = 0; j < nb[i]; j++)
                    {
                        regressors[k++] = ring[offset + idx];
                        idx = idx == 0 ? history - 1 : idx - 1;
                    }
                }
            }

            position = pos + 1 == history ? 0 : pos + 1;
            SampleCount++;
            return ready;
        }

        /// <summary>Forgets all samples (the next <see cref="WarmUpSamples"/> pushes again produce no row). O(1), no allocation.</summary>
        public void Reset()
        {
            position = 0;
            SampleCount = 0;
        }

        private void CheckInput(int input)
        {
            if ((uint)input >= (uint)nb.Length)
            {
                Guard.ThrowOutOfRange(nameof(input), input, "no such input");
            }
        }
    }
}
