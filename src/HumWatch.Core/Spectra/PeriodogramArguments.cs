namespace HumWatch.Core.Spectra;

/// <summary>The argument rules of <see cref="IPeriodogramKernel.Compute"/>, shared by every kernel (Core's and the callers' wrappers).</summary>
public static class PeriodogramArguments
{
    /// <summary>Throws when the spans cannot hold the batch; returns false when there is nothing to do.</summary>
    public static bool Check<T>(int segmentLength, int binCount, ReadOnlySpan<T> samples, int channelCount, int sampleStride, Span<T> periodograms)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(channelCount);
        ArgumentOutOfRangeException.ThrowIfNegative(sampleStride);
        if (channelCount == 0)
        {
            return false;
        }

        var needed = ((long)(channelCount - 1) * sampleStride) + segmentLength;
        if (samples.Length < needed)
        {
            throw new ArgumentException($"Needs at least {needed} samples for {channelCount} segments of {segmentLength} with stride {sampleStride} (got {samples.Length}).", nameof(samples));
        }

        if (periodograms.Length < (long)channelCount * binCount)
        {
            throw new ArgumentException($"Needs room for {channelCount} × {binCount} bins (got {periodograms.Length}).", nameof(periodograms));
        }

        return true;
    }
}
