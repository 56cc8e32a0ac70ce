using System.Runtime.Intrinsics;
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

    /// <summary>The MathNet.Numerics reference kernel for any <paramref name="segmentLength"/> (≥ 2) at <paramref name="sampleRateHz"/> (> 0); slower, allocates per transform.</summary>
    public static IPeriodogramKernel CreateReference(int segmentLength, double sampleRateHz) =>
        new MathNetPeriodogramKernel(segmentLength, sampleRateHz);

    /// <summary>
    /// Channels per vector group of <see cref="Create"/>'s FFT kernel (8 with AVX-512, 4 with AVX, else 1): a caller that
    /// splits a batch of channels over several kernels (Host's parallel check) keeps whole groups together, so every
    /// channel meets the same lane arithmetic as in one batch and the results are bit-identical.
    /// </summary>
    public static int ChannelGroup => FftPeriodogramKernel.DefaultLanes;
}
