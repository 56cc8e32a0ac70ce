namespace HumWatch.Core.Signals;

/// <summary>
/// A block of consecutive samples of every channel of a stream, in µV, channel-major
/// (all samples of channel 0, then channel 1, …) — the same order as the wire protocol.
/// </summary>
public sealed class SampleChunk
{
    /// <param name="layout">Rate and channels.</param>
    /// <param name="firstSampleIndex">Index of the first sample counted from the stream's start; a jump from the previous chunk's end is a gap.</param>
    /// <param name="samplesPerChannel">Logical length per channel; <paramref name="samplesUv"/> may be longer (pooled buffers).</param>
    /// <param name="samplesUv">Channel-major samples in µV.</param>
    /// <param name="startUtc">UTC time of the first sample, when the source knows it.</param>
    public SampleChunk(StreamLayout layout, long firstSampleIndex, int samplesPerChannel, float[] samplesUv, DateTimeOffset? startUtc = null)
    {
        ArgumentNullException.ThrowIfNull(layout);
        ArgumentNullException.ThrowIfNull(samplesUv);
        ArgumentOutOfRangeException.ThrowIfNegative(firstSampleIndex);
        ArgumentOutOfRangeException.ThrowIfNegative(samplesPerChannel);
        if ((long)samplesPerChannel * layout.ChannelCount > samplesUv.Length)
        {
            throw new ArgumentOutOfRangeException(nameof(samplesPerChannel), samplesPerChannel, $"Buffer holds {samplesUv.Length} samples, fewer than {layout.ChannelCount} channels × {samplesPerChannel}.");
        }

        Layout = layout;
        FirstSampleIndex = firstSampleIndex;
        SamplesPerChannel = samplesPerChannel;
        SamplesUv = samplesUv;
        StartUtc = startUtc;
    }

    public StreamLayout Layout { get; }

    public long FirstSampleIndex { get; }

    public int SamplesPerChannel { get; }

    /// <summary>Backing buffer; use <see cref="Channel"/> for one channel's logical samples.</summary>
    public float[] SamplesUv { get; }

    public DateTimeOffset? StartUtc { get; }

    /// <summary>Index one past the last sample.</summary>
    public long EndSampleIndex => FirstSampleIndex + SamplesPerChannel;

    public ReadOnlySpan<float> Channel(int channel)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(channel);
        ArgumentOutOfRangeException.ThrowIfGreaterThanOrEqual(channel, Layout.ChannelCount);
        return SamplesUv.AsSpan(channel * SamplesPerChannel, SamplesPerChannel);
    }
}
