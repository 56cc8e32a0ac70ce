using System.Runtime.Intrinsics;
using HumWatch.Core.Spectra;
using HumWatch.Core.Spectra.Fft;

namespace HumWatch.Bench.Float32;

/// <summary>
/// The float32 periodogram kernel, kept for the benchmarks: Core's <see cref="LaneGroupPeriodogram{TOps, TVec, TScalar}"/>
/// instantiated with float32 lanes — eight channels per Vector256&lt;float&gt;, or float scalars without hardware Vector256.
/// The product runs float64 (<see cref="PeriodogramKernels.Create"/>): its PSDs agree with scipy float64 to ~1e-12, which
/// float32 (~1e-6) cannot. Allocates nothing after construction.
/// </summary>
internal sealed class FftPeriodogramKernel32 : IPeriodogramKernel32
{
    private readonly ILanePeriodogram<float> _lanes;

    /// <summary>Creates a kernel for <paramref name="segmentLength"/>-sample segments (≥ 2, 2·3·5-smooth) at <paramref name="sampleRateHz"/> (> 0).</summary>
    public FftPeriodogramKernel32(int segmentLength, double sampleRateHz)
        : this(segmentLength, sampleRateHz, Vector256Lanes<float>.IsSupported, 0)
    {
    }

    /// <summary>As the public constructor, choosing the lane width (<paramref name="vectorized"/>) and a deliberate scratch misalignment in bytes.</summary>
    public FftPeriodogramKernel32(int segmentLength, double sampleRateHz, bool vectorized, int misalignBytes)
    {
        PowerSteps.CheckKernelArguments(segmentLength, sampleRateHz);
        SegmentLength = segmentLength;
        BinCount = (segmentLength / 2) + 1;
        _lanes = vectorized && Vector256Lanes<float>.IsSupported
            ? new LaneGroupPeriodogram<Vector256Lanes<float>, Vector256<float>, float>(segmentLength, sampleRateHz, misalignBytes)
            : new LaneGroupPeriodogram<ScalarLanes<float>, float, float>(segmentLength, sampleRateHz, misalignBytes);
    }

    /// <inheritdoc/>
    public int SegmentLength { get; }

    /// <inheritdoc/>
    public int BinCount { get; }

    /// <summary>True when channels go eight to a Vector256&lt;float&gt;; false on the scalar path.</summary>
    public bool Vectorized => _lanes.Lanes > 1;

    /// <summary>
    /// A float32 kernel for <paramref name="segmentLength"/>-sample segments at <paramref name="sampleRateHz"/>: this one for
    /// 2·3·5-smooth lengths, otherwise the float64 MathNet kernel behind a float32 adapter (widen, compute, round).
    /// </summary>
    public static IPeriodogramKernel32 Create(int segmentLength, double sampleRateHz) =>
        FftPeriodogramKernel.Supports(segmentLength)
            ? new FftPeriodogramKernel32(segmentLength, sampleRateHz)
            : new WidenedPeriodogramKernel32(PeriodogramKernels.CreateReference(segmentLength, sampleRateHz));

    /// <inheritdoc/>
    public void Compute(ReadOnlySpan<float> samples, int channelCount, int sampleStride, Span<float> periodograms)
    {
        if (PeriodogramArguments.Check(SegmentLength, BinCount, samples, channelCount, sampleStride, periodograms))
        {
            _lanes.Compute(samples, channelCount, sampleStride, periodograms);
        }
    }
}
