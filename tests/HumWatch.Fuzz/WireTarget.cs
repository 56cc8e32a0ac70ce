using System.Buffers.Binary;
using System.Globalization;
using HumWatch.Formats.Wire;

namespace HumWatch.Fuzz;

/// <summary>
/// The chunk wire codec (docs/protocol.md): the input is up to <see cref="MaxMessages"/> messages, each a 2-byte
/// little-endian header length, the header frame, a 2-byte sample frame length and the sample frame (a length past the
/// end takes what is left). They go through <see cref="ChunkWireCodec.Decode"/> as the socket ingest calls it: one
/// layout cache and one bounded sample pool for all of them. A <see cref="WireRejection"/> is the accepted refusal; an
/// accepted chunk must be what the frames say, encode back to frames that decode to the same chunk, and give its array
/// back to the pool.
/// </summary>
internal sealed class WireTarget : IFuzzTarget
{
    public const int MaxMessages = 8;

    // The decoder's own allocations are its strings and lists (a few per header byte) and the float array of an
    // accepted chunk (one float per 4 sample bytes, rented from the pool); 8 bytes per input byte leaves room for both.
    private const long FixedAllowanceBytes = 256L << 10;
    private const int AllowancePerInputByte = 8;

    public string Name => "wire";

    public string Execute(byte[] input)
    {
        var layouts = new StreamLayoutCache(maxStreams: 4);
        var pool = new SampleBufferPool(SampleBufferPool.MinBudgetBytes * 16, poisonReturned: true);
        var outcomes = new List<string>();
        var budget = AllocationBudget.Start(input.Length, FixedAllowanceBytes, AllowancePerInputByte);
        var rest = input.AsSpan();
        while (rest.Length > 0 && outcomes.Count < MaxMessages)
        {
            var header = TakeFrame(ref rest);
            var samples = TakeFrame(ref rest);
            outcomes.Add(DecodeOne(header, samples, layouts, pool));
        }

        budget.Check("decoding the messages");
        if (pool.RentedBytes != 0 || pool.RentedCount != 0)
        {
            throw new FuzzCheckFailedException($"{pool.RentedCount} sample arrays ({pool.RentedBytes} bytes) not given back to the pool");
        }

        return string.Join("; ", outcomes);
    }

    private static ReadOnlySpan<byte> TakeFrame(ref Span<byte> rest)
    {
        if (rest.Length < 2)
        {
            var all = rest;
            rest = [];
            return all;
        }

        var length = Math.Min(BinaryPrimitives.ReadUInt16LittleEndian(rest), rest.Length - 2);
        var frame = rest.Slice(2, length);
        rest = rest[(2 + length)..];
        return frame;
    }

    private static string DecodeOne(ReadOnlySpan<byte> header, ReadOnlySpan<byte> samples, StreamLayoutCache layouts, SampleBufferPool pool)
    {
        // The helpers the ingest calls on refusals before decoding must hold up on any header too.
        _ = ChunkWireCodec.TryReadStreamId(header);
        CheckRejection(ChunkWireCodec.RejectFrameCount(3, header));

        var result = ChunkWireCodec.Decode(header, samples, layouts, pool);
        if (result.IsRejected)
        {
            CheckRejection(result.Rejection);
            return "rejected " + result.Rejection.Reason + ": " + result.Rejection.Message;
        }

        if (result.IsBufferFull)
        {
            return "buffer full";
        }

        if (!result.IsSuccess)
        {
            throw new FuzzCheckFailedException("decode returned neither a chunk, a rejection nor a full buffer");
        }

        using var owner = result.Samples;
        var chunk = owner.Chunk;
        var layout = chunk.Layout;
        if (!ChunkWireCodec.IsValidStreamId(result.StreamId) || layout.ChannelCount is < 1 or > ChunkWireCodec.MaxChannels
            || !(layout.SampleRateHz > 0 && layout.SampleRateHz <= ChunkWireCodec.MaxSampleRateHz)
            || (long)chunk.SamplesPerChannel * layout.ChannelCount * 4 != samples.Length
            || chunk.EndSampleIndex < chunk.FirstSampleIndex)
        {
            throw new FuzzCheckFailedException($"accepted a chunk that breaks the protocol: stream '{result.StreamId}', {layout.ChannelCount} channels at {layout.SampleRateHz} Hz, {chunk.SamplesPerChannel} samples from {samples.Length} bytes");
        }

        var values = chunk.SamplesUv;
        for (var i = 0; i < values.Length; i++)
        {
            if (!float.IsFinite(values[i]))
            {
                throw new FuzzCheckFailedException($"accepted a non-finite sample at {i}");
            }
        }

        CheckRoundTrip(result.StreamId, chunk);
        return string.Create(CultureInfo.InvariantCulture, $"accepted {result.StreamId}: {layout.ChannelCount} ch × {chunk.SamplesPerChannel} at {layout.SampleRateHz} Hz");
    }

    /// <summary>What the codec accepted, it can also write: encoded again, the frames decode to the same chunk.</summary>
    private static void CheckRoundTrip(string streamId, HumWatch.Core.Signals.SampleChunk chunk)
    {
        var message = ChunkWireCodec.Encode(streamId, chunk);
        var again = ChunkWireCodec.Decode(message.Header, message.Samples);
        if (!again.IsSuccess)
        {
            throw new FuzzCheckFailedException($"an accepted chunk, encoded again, is refused: {again.Rejection?.Message}");
        }

        using var owner = again.Samples;
        var copy = owner.Chunk;
        var same = again.StreamId == streamId && copy.FirstSampleIndex == chunk.FirstSampleIndex && copy.StartUtc == chunk.StartUtc
            && copy.Layout.SampleRateHz.Equals(chunk.Layout.SampleRateHz) && copy.Layout.IsSameShape(chunk.Layout)
            && copy.SamplesUv.SequenceEqual(chunk.SamplesUv);
        if (!same)
        {
            throw new FuzzCheckFailedException("an accepted chunk, encoded and decoded again, differs");
        }
    }

    private static void CheckRejection(WireRejection rejection)
    {
        if (!Enum.IsDefined(rejection.Reason) || string.IsNullOrWhiteSpace(rejection.Message)
            || (rejection.StreamId is not null && !ChunkWireCodec.IsValidStreamId(rejection.StreamId)))
        {
            throw new FuzzCheckFailedException($"rejection without a reason, a message or with an invalid stream id: {rejection}");
        }
    }
}
