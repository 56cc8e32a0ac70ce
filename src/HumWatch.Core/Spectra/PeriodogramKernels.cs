namespace HumWatch.Core.Spectra;

/// <summary>Creates periodogram kernels; the one place where the FFT implementation is chosen.</summary>
public static class PeriodogramKernels
{
    /// <summary>A kernel for <paramref name="segmentLength"/>-sample segments (≥ 2) at <paramref name="sampleRateHz"/> (> 0), scipy.signal.welch conventions.</summary>
    public static IPeriodogramKernel Create(int segmentLength, double sampleRateHz) =>
        new MathNetPeriodogramKernel(segmentLength, sampleRateHz);
}
