using System.Diagnostics.CodeAnalysis;
using HumWatch.Core.Signals;

namespace HumWatch.Formats.Wire;

/// <summary>Outcome of <see cref="ChunkWireCodec.Decode"/>: a stream id with its chunk, a rejection, or no buffer for a good message.</summary>
public readonly struct WireDecodeResult
{
    private WireDecodeResult(string? streamId, SampleChunk? chunk, WireRejection? rejection, bool startsNewLayout, bool bufferFull)
    {
        StartsNewLayout = startsNewLayout;
        StreamId = streamId;
        Chunk = chunk;
        Rejection = rejection;
        IsBufferFull = bufferFull;
    }

    /// <summary>True when the message decoded into <see cref="Chunk"/>.</summary>
    [MemberNotNullWhen(true, nameof(Chunk), nameof(StreamId))]
    public bool IsSuccess => Chunk is not null;

    /// <summary>True when the message was refused; <see cref="Rejection"/> says why.</summary>
    [MemberNotNullWhen(true, nameof(Rejection))]
    public bool IsRejected => Rejection is not null;

    /// <summary>True when the message was valid but the <see cref="SampleBufferPool"/> budget was spent, so it was not decoded; <see cref="StreamId"/> names its stream.</summary>
    [MemberNotNullWhen(true, nameof(StreamId))]
    public bool IsBufferFull { get; }

    /// <summary>Stream id of a decoded chunk, or of a rejected message whose header named a valid one.</summary>
    public string? StreamId { get; }

    /// <summary>The decoded chunk in µV; it owns its sample array, or rents it from the pool passed to the decoder.</summary>
    public SampleChunk? Chunk { get; }

    /// <summary>Why the message was refused, when it was.</summary>
    public WireRejection? Rejection { get; }

    /// <summary>True when the chunk's layout is a new instance: the stream's first chunk or a change of rate or channels (always true without a cache).</summary>
    public bool StartsNewLayout { get; }

    internal static WireDecodeResult Accept(string streamId, SampleChunk chunk, bool startsNewLayout) => new(streamId, chunk, null, startsNewLayout, false);

    internal static WireDecodeResult Reject(WireRejection rejection) => new(rejection.StreamId, null, rejection, false, false);

    internal static WireDecodeResult BufferFull(string streamId) => new(streamId, null, null, false, true);
}
