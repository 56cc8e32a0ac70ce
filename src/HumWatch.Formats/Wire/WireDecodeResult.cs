using System.Diagnostics.CodeAnalysis;
using HumWatch.Core.Signals;

namespace HumWatch.Formats.Wire;

/// <summary>Outcome of <see cref="ChunkWireCodec.Decode"/>: a stream id with its chunk, a rejection, or no buffer for a good message.</summary>
public readonly struct WireDecodeResult
{
    private WireDecodeResult(string? streamId, SampleChunkOwner? samples, WireRejection? rejection, bool startsNewLayout, bool bufferFull)
    {
        StartsNewLayout = startsNewLayout;
        StreamId = streamId;
        Samples = samples;
        Rejection = rejection;
        IsBufferFull = bufferFull;
    }

    /// <summary>True when the message decoded into <see cref="Samples"/>.</summary>
    [MemberNotNullWhen(true, nameof(Samples), nameof(Chunk), nameof(StreamId))]
    public bool IsSuccess => Samples is not null;

    /// <summary>True when the message was refused; <see cref="Rejection"/> says why.</summary>
    [MemberNotNullWhen(true, nameof(Rejection))]
    public bool IsRejected => Rejection is not null;

    /// <summary>True when the message was valid but the pool had no room, so it was not decoded; <see cref="StreamId"/> names its stream.</summary>
    [MemberNotNullWhen(true, nameof(StreamId))]
    public bool IsBufferFull { get; }

    /// <summary>Stream id of a decoded chunk, or of a rejected message whose header named a valid one.</summary>
    public string? StreamId { get; }

    /// <summary>The decoded chunk's owner: the caller's to dispose after the last read (it gives a rented array back to its pool).</summary>
    public SampleChunkOwner? Samples { get; }

    /// <summary>The decoded chunk in µV, borrowed from <see cref="Samples"/>.</summary>
    public SampleChunk? Chunk => Samples?.Chunk;

    /// <summary>Why the message was refused, when it was.</summary>
    public WireRejection? Rejection { get; }

    /// <summary>True when the chunk's layout is a new instance: the stream's first chunk or a change of rate or channels (always true without a cache).</summary>
    public bool StartsNewLayout { get; }

    internal static WireDecodeResult Accept(string streamId, SampleChunkOwner samples, bool startsNewLayout) => new(streamId, samples, null, startsNewLayout, false);

    internal static WireDecodeResult Reject(WireRejection rejection) => new(rejection.StreamId, null, rejection, false, false);

    internal static WireDecodeResult BufferFull(string streamId) => new(streamId, null, null, false, true);
}
