using HumWatch.Core.Signals;
using HumWatch.Formats.Wire;

namespace HumWatch.Host.Ingest;

/// <summary>
/// A decoded chunk on its way to the stream's monitor. When its samples are rented from a <see cref="SampleBufferPool"/>,
/// whoever holds the chunk last (the analysis, or the code that drops it) calls <see cref="Release"/> exactly once.
/// </summary>
public sealed class StreamChunk
{
    private readonly SampleBufferPool? _pool;
    private int _released;

    /// <param name="streamId">Stream id from the wire header.</param>
    /// <param name="chunk">Samples in µV.</param>
    /// <param name="origin">Endpoint the chunk arrived on (for logs), e.g. "tcp://127.0.0.1:5710".</param>
    /// <param name="pool">Pool the chunk's sample array is rented from; null when the chunk owns its array.</param>
    public StreamChunk(string streamId, SampleChunk chunk, string origin, SampleBufferPool? pool = null)
    {
        ArgumentNullException.ThrowIfNull(streamId);
        ArgumentNullException.ThrowIfNull(chunk);
        ArgumentNullException.ThrowIfNull(origin);
        StreamId = streamId;
        Chunk = chunk;
        Origin = origin;
        _pool = pool;
    }

    /// <summary>Stream id from the wire header.</summary>
    public string StreamId { get; }

    /// <summary>Samples in µV; do not read them after <see cref="Release"/>.</summary>
    public SampleChunk Chunk { get; }

    /// <summary>Endpoint the chunk arrived on.</summary>
    public string Origin { get; }

    /// <summary>Bytes of the sample array.</summary>
    public long SampleBytes => 4L * Chunk.SamplesUv.Length;

    /// <summary>Gives a rented sample array back to its pool (nothing to do for an owned one). Call once, after the last read.</summary>
    /// <exception cref="InvalidOperationException">Called a second time: the array may already belong to another chunk.</exception>
    public void Release()
    {
        if (Interlocked.Exchange(ref _released, 1) != 0)
        {
            throw new InvalidOperationException($"Chunk of stream '{StreamId}' at sample {Chunk.FirstSampleIndex} was released twice.");
        }

        _pool?.Return(Chunk.SamplesUv);
    }
}
