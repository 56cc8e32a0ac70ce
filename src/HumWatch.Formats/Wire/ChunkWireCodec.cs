using System.Buffers;
using System.Globalization;
using System.Text.Json;
using HumWatch.Core.Signals;

namespace HumWatch.Formats.Wire;

/// <summary>
/// Chunk wire protocol v1 (docs/protocol.md): frame 1 a UTF-8 JSON header, frame 2 float32 little-endian samples,
/// channel-major. Decoding is stateless apart from the optional <see cref="StreamLayoutCache"/>; the header is read by
/// <see cref="WireHeaderReader"/>, judged by <see cref="WireHeaderCheck"/>, the samples converted by <see cref="WireSamples"/>.
/// </summary>
/// <remarks>
/// Ownership: a decoded chunk arrives as a <see cref="SampleChunkOwner"/> that the caller disposes after the last read.
/// Without a pool its array is a fresh one (disposing only ends the view); with a pool the array is rented from it and
/// disposing gives it back. A message found bad after renting is disposed here. Frames are decoded straight from the
/// socket's message buffers either way.
/// </remarks>
public static class ChunkWireCodec
{
    /// <summary>The protocol version this codec reads and writes (1).</summary>
    public const int ProtocolVersion = 1;

    /// <summary>Most channels in one stream (1024).</summary>
    public const int MaxChannels = 1024;

    /// <summary>Highest accepted sample rate, 1 MHz; anything above is treated as a broken header.</summary>
    public const double MaxSampleRateHz = 1_000_000;

    /// <summary>Longest stream id in characters (64).</summary>
    public const int MaxStreamIdLength = 64;

    /// <summary>Frames in one message (2).</summary>
    public const int FrameCount = 2;

    /// <summary>Decodes one message's two frames into a chunk in µV, or says why it is refused.</summary>
    /// <param name="header">Frame 1: UTF-8 JSON header.</param>
    /// <param name="samples">Frame 2: float32 little-endian samples, channel-major.</param>
    /// <param name="layouts">When given, one layout instance is kept per stream while its shape is unchanged.</param>
    /// <param name="pool">When given, the sample array is rented from it (see remarks); when it has no room the result is <see cref="WireDecodeResult.IsBufferFull"/>.</param>
    public static WireDecodeResult Decode(ReadOnlySpan<byte> header, ReadOnlySpan<byte> samples, StreamLayoutCache? layouts = null, ISampleArrayPool? pool = null)
    {
        var fields = new WireHeaderFields();
        var malformed = WireHeaderReader.Parse(header, ref fields);
        if (malformed is not null)
        {
            return Reject(WireRejectReason.MalformedJson, null, malformed);
        }

        var problem = WireHeaderCheck.Check(ref fields, out var streamId);
        if (problem is not null)
        {
            return WireDecodeResult.Reject(problem);
        }

        var labels = fields.Channels!;
        var layout = layouts?.Find(streamId!, fields.SampleRateHz, labels);
        var startsNewLayout = layout is null;
        if (layout is null)
        {
            var duplicate = WireHeaderCheck.FindDuplicate(labels);
            if (duplicate is not null)
            {
                return Reject(WireRejectReason.BadChannels, streamId, $"channel label '{Printable(duplicate)}' appears more than once");
            }

            var channels = new ChannelInfo[labels.Count];
            for (var i = 0; i < channels.Length; i++)
            {
                channels[i] = new ChannelInfo(labels[i]);
            }

            layout = new StreamLayout(fields.SampleRateHz, channels);
        }

        var channelCount = labels.Count;
        var bytesPerSampleRow = 4 * channelCount;
        if (samples.Length == 0)
        {
            return Reject(WireRejectReason.SampleLength, streamId, "sample frame is empty (zero samples)");
        }

        if (samples.Length % bytesPerSampleRow != 0)
        {
            return Reject(WireRejectReason.SampleLength, streamId,
                $"sample frame has {samples.Length} bytes, not a multiple of 4 × {channelCount} channels = {bytesPerSampleRow}");
        }

        var samplesPerChannel = samples.Length / bytesPerSampleRow;
        if (fields.Index > long.MaxValue - samplesPerChannel)
        {
            // The index one past the chunk's end must exist too: it is where the stream's next chunk starts.
            return Reject(WireRejectReason.BadIndex, streamId,
                string.Create(CultureInfo.InvariantCulture, $"'index' {fields.Index} + {samplesPerChannel} samples per channel does not fit in 64 bits"));
        }

        var count = samples.Length / 4;
        var data = pool is null ? new float[count] : pool.TryRent(count);
        if (data is null)
        {
            return WireDecodeResult.BufferFull(streamId!);
        }

        // The owner from the moment the array exists, so a bad sample gives a rented array back through it too.
        var owner = new SampleChunkOwner(data, pool, layout, fields.Index, samplesPerChannel, fields.StartUtc);
        var nonFinite = WireSamples.Read(samples, data.AsSpan(0, count), WireSamples.Scale(fields.Unit));
        if (nonFinite >= 0)
        {
            owner.Dispose();
            return Reject(WireRejectReason.NonFiniteSample, streamId,
                $"sample {nonFinite % samplesPerChannel} of channel '{Printable(labels[nonFinite / samplesPerChannel])}' is not a finite number (in µV)");
        }

        if (startsNewLayout)
        {
            layouts?.Store(streamId!, layout);
        }

        return WireDecodeResult.Accept(streamId!, owner, startsNewLayout);
    }

    /// <summary>A rejection for a message that did not have exactly two frames; names the stream when frame 1 is a readable header.</summary>
    /// <param name="frameCount">Frames received.</param>
    /// <param name="firstFrame">Frame 1, used only to find the stream id.</param>
    public static WireRejection RejectFrameCount(int frameCount, ReadOnlySpan<byte> firstFrame)
    {
        var streamId = TryReadStreamId(firstFrame);
        return new WireRejection(WireRejectReason.WrongFrameCount, streamId,
            $"{WireHeaderCheck.Subject(streamId)}message has {frameCount} frame(s), expected {FrameCount} (JSON header, samples)");
    }

    /// <summary>A rejection for a message over the size limit; names the stream when frame 1 is a readable header.</summary>
    /// <param name="messageBytes">Total bytes of all frames received.</param>
    /// <param name="maxMessageBytes">Configured limit.</param>
    /// <param name="firstFrame">Frame 1, used only to find the stream id.</param>
    public static WireRejection RejectTooLarge(long messageBytes, long maxMessageBytes, ReadOnlySpan<byte> firstFrame)
    {
        var streamId = TryReadStreamId(firstFrame);
        return new WireRejection(WireRejectReason.TooLarge, streamId,
            $"{WireHeaderCheck.Subject(streamId)}message has {messageBytes} bytes, over the limit of {maxMessageBytes} bytes");
    }

    /// <summary>The valid stream id named by a header, or null when the header is unreadable or the id invalid.</summary>
    public static string? TryReadStreamId(ReadOnlySpan<byte> header)
    {
        var fields = new WireHeaderFields();
        if (WireHeaderReader.Parse(header, ref fields) is not null || fields.StreamId is null)
        {
            return null;
        }

        return IsValidStreamId(fields.StreamId) ? fields.StreamId : null;
    }

    /// <summary>True for 1–64 characters of [A-Za-z0-9._-].</summary>
    public static bool IsValidStreamId(ReadOnlySpan<char> streamId)
    {
        if (streamId.Length is 0 or > MaxStreamIdLength)
        {
            return false;
        }

        foreach (var c in streamId)
        {
            if (!(char.IsAsciiLetterOrDigit(c) || c is '.' or '_' or '-'))
            {
                return false;
            }
        }

        return true;
    }

    /// <summary>Encodes a chunk as the two frames of one message.</summary>
    /// <param name="streamId">1–64 characters of [A-Za-z0-9._-].</param>
    /// <param name="chunk">Samples in µV; converted to <paramref name="unit"/> on the wire.</param>
    /// <param name="unit">Unit written on the wire; the default is µV (no conversion).</param>
    public static WireMessage Encode(string streamId, SampleChunk chunk, WireUnit unit = WireUnit.Microvolts)
    {
        ArgumentNullException.ThrowIfNull(chunk);
        var header = EncodeHeader(streamId, chunk.Layout, chunk.FirstSampleIndex, chunk.StartUtc, unit);
        var count = chunk.SamplesPerChannel * chunk.Layout.ChannelCount;
        var samples = new byte[count * 4];
        EncodeSamples(chunk.SamplesUv, samples, unit);
        return new WireMessage(header, samples);
    }

    /// <summary>Writes frame 1, the JSON header.</summary>
    /// <param name="streamId">1–64 characters of [A-Za-z0-9._-].</param>
    /// <param name="layout">Rate and channel labels.</param>
    /// <param name="firstSampleIndex">Index of the chunk's first sample since the stream's start, ≥ 0.</param>
    /// <param name="startUtc">Optional time of the first sample; written in UTC.</param>
    /// <param name="unit">Unit named in the header.</param>
    public static byte[] EncodeHeader(string streamId, StreamLayout layout, long firstSampleIndex, DateTimeOffset? startUtc, WireUnit unit = WireUnit.Microvolts)
    {
        ArgumentNullException.ThrowIfNull(streamId);
        ArgumentNullException.ThrowIfNull(layout);
        if (!IsValidStreamId(streamId))
        {
            throw new ArgumentOutOfRangeException(nameof(streamId), streamId, "Must be 1–64 characters of [A-Za-z0-9._-].");
        }

        ArgumentOutOfRangeException.ThrowIfNegative(firstSampleIndex);
        if (layout.ChannelCount > MaxChannels)
        {
            throw new ArgumentOutOfRangeException(nameof(layout), layout.ChannelCount, $"At most {MaxChannels} channels.");
        }

        var buffer = new ArrayBufferWriter<byte>(128 + (16 * layout.ChannelCount));
        using (var writer = new Utf8JsonWriter(buffer))
        {
            writer.WriteStartObject();
            writer.WriteNumber("v"u8, ProtocolVersion);
            writer.WriteString("stream"u8, streamId);
            writer.WriteNumber("fs"u8, layout.SampleRateHz);
            writer.WriteStartArray("channels"u8);
            for (var i = 0; i < layout.ChannelCount; i++)
            {
                writer.WriteStringValue(layout.Channels[i].Label);
            }

            writer.WriteEndArray();
            writer.WriteString("unit"u8, UnitText(unit));
            writer.WriteNumber("index"u8, firstSampleIndex);
            if (startUtc is { } t0)
            {
                writer.WriteString("t0"u8, t0.UtcDateTime.ToString("yyyy-MM-dd'T'HH:mm:ss.fffffff'Z'", CultureInfo.InvariantCulture));
            }

            writer.WriteEndObject();
        }

        return buffer.WrittenSpan.ToArray();
    }

    /// <summary>Writes frame 2: µV samples converted to <paramref name="unit"/> as float32 little-endian.</summary>
    /// <param name="samplesUv">Channel-major samples in µV.</param>
    /// <param name="destination">At least 4 bytes per sample.</param>
    /// <param name="unit">Unit written on the wire.</param>
    /// <returns>Bytes written.</returns>
    public static int EncodeSamples(ReadOnlySpan<float> samplesUv, Span<byte> destination, WireUnit unit = WireUnit.Microvolts) =>
        WireSamples.Write(samplesUv, destination, unit);

    /// <summary>The header text for a unit: "uV", "mV" or "V".</summary>
    public static string UnitText(WireUnit unit) => unit switch
    {
        WireUnit.Microvolts => "uV",
        WireUnit.Millivolts => "mV",
        WireUnit.Volts => "V",
        _ => throw new ArgumentOutOfRangeException(nameof(unit), unit, "Must be Microvolts, Millivolts or Volts."),
    };

    private static WireDecodeResult Reject(WireRejectReason reason, string? streamId, string problem) =>
        WireDecodeResult.Reject(WireHeaderCheck.Rejection(reason, streamId, problem));

    /// <summary>Shortens untrusted text and hides control characters so it is safe in a log line.</summary>
    internal static string Printable(string text)
    {
        const int MaxLength = 80;
        var span = text.AsSpan(0, Math.Min(text.Length, MaxLength));
        var chars = new char[span.Length];
        for (var i = 0; i < span.Length; i++)
        {
            chars[i] = char.IsControl(span[i]) ? '?' : span[i];
        }

        var result = new string(chars);
        return text.Length > MaxLength ? result + "…" : result;
    }
}
