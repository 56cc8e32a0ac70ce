namespace HumWatch.Core.Lines;

/// <summary>The single-segment periodograms of the current span, for dating a line within the span.</summary>
internal interface ISpanSegments
{
    /// <summary>Segments in the span (K), oldest first.</summary>
    int SegmentCount { get; }

    /// <summary>Samples per segment.</summary>
    int SegmentLength { get; }

    /// <summary>Periodogram of <paramref name="segment"/> (0 = oldest) for <paramref name="channel"/>, µV²/Hz.</summary>
    ReadOnlySpan<double> Periodogram(int channel, int segment);

    /// <summary>Stream sample index of the segment's first sample.</summary>
    long SegmentStartSampleIndex(int segment);
}
