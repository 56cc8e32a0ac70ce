using HumWatch.Core.Spectra;

namespace HumWatch.Bench.Float32;

/// <summary>
/// The float32 twin of <see cref="IPeriodogramKernel"/>: the same one-sided modified periodograms with scipy.signal.welch's
/// conventions (constant detrend, periodic Hann window, density scaling 1/(fs·Σw²), every bin doubled except DC and
/// even-length Nyquist), on float32 samples (µV) into float32 periodograms (µV²/Hz). About 7 significant digits per bin
/// instead of 15, for twice the channels per vector. Not thread-safe (one per stream/worker); allocates nothing per call.
/// </summary>
internal interface IPeriodogramKernel32
{
    /// <summary>Samples per segment (nperseg = nfft).</summary>
    int SegmentLength { get; }

    /// <summary>One-sided bins: SegmentLength / 2 + 1.</summary>
    int BinCount { get; }

    /// <summary>
    /// Periodograms of <paramref name="channelCount"/> segments. Segment c is
    /// <c>samples.Slice(c * sampleStride, SegmentLength)</c>; its periodogram is written to
    /// <c>periodograms.Slice(c * BinCount, BinCount)</c>. Non-finite input is the caller's job to remove.
    /// </summary>
    void Compute(ReadOnlySpan<float> samples, int channelCount, int sampleStride, Span<float> periodograms);
}
