using HumWatch.Core.Signals;

namespace HumWatch.Host.Ingest;

/// <summary>
/// A decoded chunk on its way to the stream's monitor, and the owner of its samples. It is handed on, never shared:
/// whoever holds it last disposes it, once — the monitor after analysis, or the stage that drops it (the ingest queue
/// when full, the router when no monitor takes it). Disposing gives a rented array back to its pool; a second dispose
/// does nothing, and reading <see cref="Chunk"/>'s samples after it throws.
/// </summary>
public sealed class StreamChunk : IDisposable
{
    private readonly SampleChunkOwner _samples;

    /// <param name="streamId">Stream id from the wire header.</param>
    /// <param name="samples">The samples, now owned by this chunk.</param>
    /// <param name="origin">Endpoint the chunk arrived on (for logs), e.g. "tcp://127.0.0.1:5710".</param>
    public StreamChunk(string streamId, SampleChunkOwner samples, string origin)
    {
        ArgumentNullException.ThrowIfNull(streamId);
        ArgumentNullException.ThrowIfNull(samples);
        ArgumentNullException.ThrowIfNull(origin);
        (StreamId, _samples, Origin) = (streamId, samples, origin);
    }

    /// <summary>Stream id from the wire header.</summary>
    public string StreamId { get; }

    /// <summary>Samples in µV, borrowed from this chunk: do not keep them past <see cref="Dispose"/>.</summary>
    public SampleChunk Chunk => _samples.Chunk;

    /// <summary>Endpoint the chunk arrived on.</summary>
    public string Origin { get; }

    /// <summary>True once disposed.</summary>
    public bool IsReleased => _samples.IsReleased;

    /// <summary>Gives the samples back (to their pool when rented); call after the last read. Later calls do nothing.</summary>
    public void Dispose() => _samples.Dispose();
}
