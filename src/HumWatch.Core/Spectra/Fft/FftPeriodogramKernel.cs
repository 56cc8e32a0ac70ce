using System.Runtime.Intrinsics;

namespace HumWatch.Core.Spectra.Fft;

/// <summary>
/// Periodogram kernel on our own mixed-radix FFT (radix 4/2/3/5), for segment lengths with no prime factor other than
/// 2, 3 and 5 (<see cref="Supports"/>), float64. Channels go through in groups of eight per Vector512 (with AVX-512) or
/// four per Vector256 (<see cref="LaneGroupPeriodogram{TOps, TVec, TScalar}"/>); without hardware Vector256 the same code runs on scalars,
/// one channel at a time. Conventions as scipy.signal.welch (see <see cref="IPeriodogramKernel"/>). Allocates nothing
/// after construction.
/// </summary>
internal sealed class FftPeriodogramKernel : IPeriodogramKernel
{
    private readonly ILanePeriodogram<double> _lanes;

    /// <summary>Creates a kernel for <paramref name="segmentLength"/>-sample segments (≥ 2, 2·3·5-smooth) at <paramref name="sampleRateHz"/> (> 0).</summary>
    public FftPeriodogramKernel(int segmentLength, double sampleRateHz)
        : this(segmentLength, sampleRateHz, WidestAccelerated, 0)
    {
    }

    /// <summary>As the public constructor, choosing the lane width (<paramref name="vectorized"/>: Vector256 when the hardware has it) and a deliberate scratch misalignment in bytes (for tests and benchmarks).</summary>
    internal FftPeriodogramKernel(int segmentLength, double sampleRateHz, bool vectorized, int misalignBytes)
        : this(segmentLength, sampleRateHz, vectorized && Vector256Lanes<double>.IsSupported ? 256 : 0, misalignBytes)
    {
    }

    /// <summary>As the public constructor with <paramref name="vectorBits"/> = 512, 256 or 0 (scalar); 512 runs on two Vector256 halves where AVX-512 is missing (for tests).</summary>
    internal FftPeriodogramKernel(int segmentLength, double sampleRateHz, int vectorBits, int misalignBytes)
    {
        PowerSteps.CheckKernelArguments(segmentLength, sampleRateHz);
        SegmentLength = segmentLength;
        BinCount = (segmentLength / 2) + 1;
        _lanes = vectorBits switch
        {
            512 when Vector256Lanes<double>.IsSupported => new LaneGroupPeriodogram<Vector512Lanes<double>, Vector512<double>, double>(segmentLength, sampleRateHz, misalignBytes),
            256 when Vector256Lanes<double>.IsSupported => new LaneGroupPeriodogram<Vector256Lanes<double>, Vector256<double>, double>(segmentLength, sampleRateHz, misalignBytes),
            _ => new LaneGroupPeriodogram<ScalarLanes<double>, double, double>(segmentLength, sampleRateHz, misalignBytes),
        };
    }

    /// <summary>Channels per vector group of the public constructor's kernel: 8 with AVX-512, 4 with AVX, else 1.</summary>
    public static int DefaultLanes => WidestAccelerated switch
    {
        512 => Vector512<double>.Count,
        256 => Vector256<double>.Count,
        _ => 1,
    };

    // Eight channels per Vector512 where AVX-512 runs at full width, else four per Vector256, else scalars. The widths
    // give the same bits lane for lane (FftPeriodogramKernelTests), so the choice changes speed only.
    private static int WidestAccelerated => Vector512Lanes<double>.IsAccelerated ? 512 : Vector256Lanes<double>.IsSupported ? 256 : 0;

    /// <inheritdoc/>
    public int SegmentLength { get; }

    /// <inheritdoc/>
    public int BinCount { get; }

    /// <summary>True when channels go several to a vector; false on the scalar path.</summary>
    public bool Vectorized => _lanes.Lanes > 1;

    /// <summary>Channels per vector group (1 on the scalar path).</summary>
    public int Lanes => _lanes.Lanes;

    /// <summary>True when this kernel handles <paramref name="segmentLength"/>: ≥ 2 with no prime factor other than 2, 3 and 5.</summary>
    public static bool Supports(int segmentLength) => segmentLength >= 2 && ComplexFftPlan.Supports(segmentLength);

    /// <inheritdoc/>
    public void Compute(ReadOnlySpan<double> samples, int channelCount, int sampleStride, Span<double> periodograms)
    {
        if (PeriodogramArguments.Check(SegmentLength, BinCount, samples, channelCount, sampleStride, periodograms))
        {
            _lanes.Compute(samples, channelCount, sampleStride, periodograms);
        }
    }
}
