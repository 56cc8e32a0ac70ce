namespace HumWatch.Core.Signals;

/// <summary>
/// A read-only view of consecutive samples of every channel of a stream, in µV, channel-major (all samples of
/// channel 0, then channel 1, …) — the same order as the wire protocol.
/// </summary>
/// <remarks>
/// Ownership: a chunk made with the public constructor reads a caller's array and may be kept as long as the caller
/// leaves that array alone (readers and the simulator hand out a fresh array per chunk). A chunk whose array is lent
/// belongs to a <see cref="SampleChunkOwner"/>: it is borrowed, valid until the owner is disposed, and reading its
/// samples afterwards throws <see cref="ObjectDisposedException"/> instead of returning another chunk's data. Nothing
/// here releases anything; only the owner does.
/// </remarks>
public sealed class SampleChunk
{
    private readonly float[] _samplesUv;
    private readonly SampleChunkOwner? _owner;

    /// <param name="layout">Rate and channels.</param>
    /// <param name="firstSampleIndex">Index of the first sample counted from the stream's start; a jump from the previous chunk's end is a gap.</param>
    /// <param name="samplesPerChannel">Logical length per channel; <paramref name="samplesUv"/> may be longer (reused buffers).</param>
    /// <param name="samplesUv">Channel-major samples in µV.</param>
    /// <param name="startUtc">UTC time of the first sample, when the source knows it.</param>
    public SampleChunk(StreamLayout layout, long firstSampleIndex, int samplesPerChannel, float[] samplesUv, DateTimeOffset? startUtc = null)
        : this(layout, firstSampleIndex, samplesPerChannel, samplesUv, startUtc, owner: null)
    {
    }

    internal SampleChunk(StreamLayout layout, long firstSampleIndex, int samplesPerChannel, float[] samplesUv, DateTimeOffset? startUtc, SampleChunkOwner? owner)
    {
        ArgumentNullException.ThrowIfNull(layout);
        ArgumentNullException.ThrowIfNull(samplesUv);
        ArgumentOutOfRangeException.ThrowIfNegative(firstSampleIndex);
        ArgumentOutOfRangeException.ThrowIfNegative(samplesPerChannel);
        if ((long)samplesPerChannel * layout.ChannelCount > samplesUv.Length)
        {
            throw new ArgumentOutOfRangeException(nameof(samplesPerChannel), samplesPerChannel, $"Buffer holds {samplesUv.Length} samples, fewer than {layout.ChannelCount} channels × {samplesPerChannel}.");
        }

        (Layout, FirstSampleIndex, SamplesPerChannel, StartUtc) = (layout, firstSampleIndex, samplesPerChannel, startUtc);
        _samplesUv = samplesUv;
        _owner = owner;
    }

    public StreamLayout Layout { get; }

    public long FirstSampleIndex { get; }

    public int SamplesPerChannel { get; }

    public DateTimeOffset? StartUtc { get; }

    /// <summary>Index one past the last sample.</summary>
    public long EndSampleIndex => FirstSampleIndex + SamplesPerChannel;

    /// <summary>True when the chunk's owner has released it; its samples can no longer be read.</summary>
    public bool IsReleased => _owner?.IsReleased ?? false;

    /// <summary>The same samples placed at another index and time (a replay, a re-timed file); shares the array and the owner's loan.</summary>
    public SampleChunk At(long firstSampleIndex, DateTimeOffset? startUtc) =>
        new(Layout, firstSampleIndex, SamplesPerChannel, _samplesUv, startUtc, _owner);

    /// <summary>All logical samples, channel-major: channels × <see cref="SamplesPerChannel"/> values.</summary>
    /// <exception cref="ObjectDisposedException">The chunk's owner has released it.</exception>
    public ReadOnlySpan<float> SamplesUv
    {
        get
        {
            ThrowIfReleased();
            return _samplesUv.AsSpan(0, SamplesPerChannel * Layout.ChannelCount);
        }
    }

    /// <summary>One channel's logical samples.</summary>
    /// <exception cref="ObjectDisposedException">The chunk's owner has released it.</exception>
    public ReadOnlySpan<float> Channel(int channel)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(channel);
        ArgumentOutOfRangeException.ThrowIfGreaterThanOrEqual(channel, Layout.ChannelCount);
        ThrowIfReleased();
        return _samplesUv.AsSpan(channel * SamplesPerChannel, SamplesPerChannel);
    }

    private void ThrowIfReleased()
    {
        if (IsReleased)
        {
            throw new ObjectDisposedException(nameof(SampleChunk), $"The chunk at sample {FirstSampleIndex} ({SamplesPerChannel} samples × {Layout.ChannelCount} channels) was released by its owner; its array may hold another chunk's samples now.");
        }
    }
}
