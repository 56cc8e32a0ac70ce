using HumWatch.Core.Spectra.Fft;

namespace HumWatch.Core.Spectra;

/// <summary>Creates periodogram kernels; the one place where the FFT implementation is chosen.</summary>
public static class PeriodogramKernels
{
    /// <summary>
    /// A kernel for <paramref name="segmentLength"/>-sample segments (≥ 2) at <paramref name="sampleRateHz"/> (> 0), scipy.signal.welch
    /// conventions: our batched mixed-radix FFT when the length has no prime factor other than 2, 3 and 5 (1000, 1024, 2000, 2048,
    /// 4000, 8192, …), otherwise (e.g. 1001 = 7·11·13) MathNet.Numerics' FFT, which handles any length.
    /// </summary>
    public static IPeriodogramKernel Create(int segmentLength, double sampleRateHz) =>
        FftPeriodogramKernel.Supports(segmentLength)
            ? new FftPeriodogramKernel(segmentLength, sampleRateHz)
            : new MathNetPeriodogramKernel(segmentLength, sampleRateHz);

    /// <summary>
    /// A float32 kernel for <paramref name="segmentLength"/>-sample segments (≥ 2) at <paramref name="sampleRateHz"/> (> 0), same
    /// conventions as <see cref="Create"/>: our batched FFT on eight channels per Vector256&lt;float&gt; for 2·3·5-smooth lengths,
    /// otherwise the float64 kernel of <see cref="Create"/> behind a float32 adapter (widen, compute, round).
    /// </summary>
    public static IPeriodogramKernel32 CreateSingle(int segmentLength, double sampleRateHz) =>
        FftPeriodogramKernel.Supports(segmentLength)
            ? new FftPeriodogramKernel32(segmentLength, sampleRateHz)
            : new WidenedPeriodogramKernel32(new MathNetPeriodogramKernel(segmentLength, sampleRateHz));

    /// <summary>The MathNet.Numerics reference kernel for any <paramref name="segmentLength"/> (≥ 2) at <paramref name="sampleRateHz"/> (> 0); slower, allocates per transform.</summary>
    public static IPeriodogramKernel CreateReference(int segmentLength, double sampleRateHz) =>
        new MathNetPeriodogramKernel(segmentLength, sampleRateHz);

    /// <summary>
    /// A kernel that spreads each batch of channels over <paramref name="ways"/> threads (≥ 1) — for analysing one long
    /// recording on every core. Same results as <see cref="Create"/>; allocates a little per call.
    /// </summary>
    public static IPeriodogramKernel CreateParallel(int segmentLength, double sampleRateHz, int ways) =>
        ways <= 1 ? Create(segmentLength, sampleRateHz) : new ParallelPeriodogramKernel(segmentLength, sampleRateHz, ways);
}
