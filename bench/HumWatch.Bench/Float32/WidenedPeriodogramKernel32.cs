using HumWatch.Core.Spectra;

namespace HumWatch.Bench.Float32;

/// <summary>
/// The float32 interface over a float64 kernel, for segment lengths the float32 FFT kernel does not handle (a prime
/// factor other than 2, 3, 5): samples are widened to float64, the periodograms rounded back to float32. Its buffers
/// grow to the largest batch seen and are then reused.
/// </summary>
internal sealed class WidenedPeriodogramKernel32 : IPeriodogramKernel32
{
    private readonly IPeriodogramKernel _inner;
    private double[] _samples = [];
    private double[] _periodograms = [];

    /// <summary>Wraps <paramref name="inner"/> (not null).</summary>
    public WidenedPeriodogramKernel32(IPeriodogramKernel inner)
    {
        ArgumentNullException.ThrowIfNull(inner);
        _inner = inner;
    }

    /// <inheritdoc/>
    public int SegmentLength => _inner.SegmentLength;

    /// <inheritdoc/>
    public int BinCount => _inner.BinCount;

    /// <inheritdoc/>
    public void Compute(ReadOnlySpan<float> samples, int channelCount, int sampleStride, Span<float> periodograms)
    {
        if (!PeriodogramArguments.Check(SegmentLength, BinCount, samples, channelCount, sampleStride, periodograms))
        {
            return;
        }

        // Only the samples the segments cover are widened (the caller's span may be a whole recording).
        var used = (int)(((long)(channelCount - 1) * sampleStride) + SegmentLength);
        var outputs = channelCount * BinCount;
        if (_samples.Length < used)
        {
            _samples = new double[used];
        }

        if (_periodograms.Length < outputs)
        {
            _periodograms = new double[outputs];
        }

        var wide = _samples.AsSpan(0, used);
        for (var i = 0; i < used; i++)
        {
            wide[i] = samples[i];
        }

        var result = _periodograms.AsSpan(0, outputs);
        _inner.Compute(wide, channelCount, sampleStride, result);
        for (var i = 0; i < outputs; i++)
        {
            periodograms[i] = (float)result[i];
        }
    }
}
