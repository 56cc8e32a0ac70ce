namespace HumWatch.Core.Spectra;

/// <summary>
/// The seam for the FFT work: one-sided modified periodograms of equal-length segments with scipy.signal.welch's
/// conventions — constant detrend (segment mean removed), periodic Hann window, density scaling
/// 1/(fs·Σw²), every bin doubled except DC and (even length) Nyquist. Units: input µV, output µV²/Hz.
/// Implementations own their scratch buffers, are not thread-safe (one per stream/worker), and allocate
/// nothing per call.
/// </summary>
public interface IPeriodogramKernel
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
    void Compute(ReadOnlySpan<double> samples, int channelCount, int sampleStride, Span<double> periodograms);
}
