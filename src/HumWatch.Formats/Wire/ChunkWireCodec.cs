using System.Buffers;
using System.Buffers.Binary;
using System.Globalization;
using System.Numerics;
using System.Runtime.InteropServices;
using System.Text.Json;
using HumWatch.Core.Signals;

namespace HumWatch.Formats.Wire;

/// <summary>
/// Chunk wire protocol v1 (docs/protocol.md): frame 1 a UTF-8 JSON header, frame 2 float32 little-endian samples,
/// channel-major. Decoding is stateless apart from the optional <see cref="StreamLayoutCache"/>.
/// </summary>
/// <remarks>
/// Ownership: without a pool every decoded <see cref="SampleChunk"/> gets a fresh, exactly sized float array that it
/// owns outright. With a <see cref="SampleBufferPool"/> the array is rented from it: the caller owns the decoded chunk's
/// array and must return it to that pool exactly once, after the last read (a rejected message's array is returned
/// here). Frames are decoded straight from the socket's message buffers either way.
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

    private const int MaxJsonDepth = 4;

    /// <summary>Decodes one message's two frames into a chunk in µV, or says why it is refused.</summary>
    /// <param name="header">Frame 1: UTF-8 JSON header.</param>
    /// <param name="samples">Frame 2: float32 little-endian samples, channel-major.</param>
    /// <param name="layouts">When given, one layout instance is kept per stream while its shape is unchanged.</param>
    /// <param name="pool">When given, the sample array is rented from it (see remarks); when its budget is spent the result is <see cref="WireDecodeResult.IsBufferFull"/>.</param>
    public static WireDecodeResult Decode(ReadOnlySpan<byte> header, ReadOnlySpan<byte> samples, StreamLayoutCache? layouts = null, SampleBufferPool? pool = null)
    {
        var fields = new HeaderFields();
        var malformed = ParseHeader(header, ref fields);
        if (malformed is not null)
        {
            return Reject(WireRejectReason.MalformedJson, null, malformed);
        }

        var problem = CheckFields(ref fields, out var streamId);
        if (problem is not null)
        {
            return WireDecodeResult.Reject(problem);
        }

        var labels = fields.Channels!;
        var layout = layouts?.Find(streamId!, fields.SampleRateHz, labels);
        var startsNewLayout = layout is null;
        if (layout is null)
        {
            var duplicate = FindDuplicate(labels);
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
        float[] data;
        if (pool is null)
        {
            data = new float[samples.Length / 4];
        }
        else if (pool.TryRent(samples.Length / 4) is { } rented)
        {
            data = rented;
        }
        else
        {
            return WireDecodeResult.BufferFull(streamId!);
        }

        var nonFinite = ReadSamples(samples, data, Scale(fields.Unit));
        if (nonFinite >= 0)
        {
            pool?.Return(data);
            return Reject(WireRejectReason.NonFiniteSample, streamId,
                $"sample {nonFinite % samplesPerChannel} of channel '{Printable(labels[nonFinite / samplesPerChannel])}' is not a finite number (in µV)");
        }

        if (startsNewLayout)
        {
            layouts?.Store(streamId!, layout);
        }

        var chunk = new SampleChunk(layout, fields.Index, samplesPerChannel, data, fields.StartUtc);
        return WireDecodeResult.Accept(streamId!, chunk, startsNewLayout);
    }

    /// <summary>A rejection for a message that did not have exactly two frames; names the stream when frame 1 is a readable header.</summary>
    /// <param name="frameCount">Frames received.</param>
    /// <param name="firstFrame">Frame 1, used only to find the stream id.</param>
    public static WireRejection RejectFrameCount(int frameCount, ReadOnlySpan<byte> firstFrame)
    {
        var streamId = TryReadStreamId(firstFrame);
        return new WireRejection(WireRejectReason.WrongFrameCount, streamId,
            $"{Subject(streamId)}message has {frameCount} frame(s), expected {FrameCount} (JSON header, samples)");
    }

    /// <summary>A rejection for a message over the size limit; names the stream when frame 1 is a readable header.</summary>
    /// <param name="messageBytes">Total bytes of all frames received.</param>
    /// <param name="maxMessageBytes">Configured limit.</param>
    /// <param name="firstFrame">Frame 1, used only to find the stream id.</param>
    public static WireRejection RejectTooLarge(long messageBytes, long maxMessageBytes, ReadOnlySpan<byte> firstFrame)
    {
        var streamId = TryReadStreamId(firstFrame);
        return new WireRejection(WireRejectReason.TooLarge, streamId,
            $"{Subject(streamId)}message has {messageBytes} bytes, over the limit of {maxMessageBytes} bytes");
    }

    /// <summary>The valid stream id named by a header, or null when the header is unreadable or the id invalid.</summary>
    public static string? TryReadStreamId(ReadOnlySpan<byte> header)
    {
        var fields = new HeaderFields();
        if (ParseHeader(header, ref fields) is not null || fields.StreamId is null)
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
        EncodeSamples(chunk.SamplesUv.AsSpan(0, count), samples, unit);
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
    public static int EncodeSamples(ReadOnlySpan<float> samplesUv, Span<byte> destination, WireUnit unit = WireUnit.Microvolts)
    {
        var bytes = samplesUv.Length * 4;
        if (destination.Length < bytes)
        {
            throw new ArgumentOutOfRangeException(nameof(destination), destination.Length, $"Needs at least {bytes} bytes (4 per sample).");
        }

        var inverse = 1.0 / Scale(unit);
        for (var i = 0; i < samplesUv.Length; i++)
        {
            var value = inverse == 1.0 ? samplesUv[i] : (float)(samplesUv[i] * inverse);
            BinaryPrimitives.WriteSingleLittleEndian(destination.Slice(i * 4, 4), value);
        }

        return bytes;
    }

    /// <summary>The header text for a unit: "uV", "mV" or "V".</summary>
    public static string UnitText(WireUnit unit) => unit switch
    {
        WireUnit.Microvolts => "uV",
        WireUnit.Millivolts => "mV",
        WireUnit.Volts => "V",
        _ => throw new ArgumentOutOfRangeException(nameof(unit), unit, "Must be Microvolts, Millivolts or Volts."),
    };

    private static double Scale(WireUnit unit) => unit switch
    {
        WireUnit.Millivolts => 1e3,
        WireUnit.Volts => 1e6,
        _ => 1.0,
    };

    /// <summary>Copies and scales samples; returns the flat index of the first non-finite value, or -1.</summary>
    private static int ReadSamples(ReadOnlySpan<byte> source, float[] destination, double scale)
    {
        if (BitConverter.IsLittleEndian)
        {
            MemoryMarshal.Cast<byte, float>(source).CopyTo(destination);
        }
        else
        {
            for (var k = 0; k < destination.Length; k++)
            {
                destination[k] = BinaryPrimitives.ReadSingleLittleEndian(source.Slice(k * 4, 4));
            }
        }

        // 1000 and 1e6 are exact in float32 and a float × float product is exact in double, so one float multiply
        // rounds exactly like multiplying in double and rounding once.
        var span = destination.AsSpan();
        var factor = (float)scale;
        var scaleNeeded = factor != 1f;
        var i = 0;
        if (Vector.IsHardwareAccelerated && span.Length >= Vector<float>.Count)
        {
            var vectors = MemoryMarshal.Cast<float, Vector<float>>(span);
            var scaleVector = new Vector<float>(factor);

            // x − x is 0 for every finite x and NaN for NaN or ±∞, so one sum tells whether any value is non-finite.
            var check = Vector<float>.Zero;
            for (var v = 0; v < vectors.Length; v++)
            {
                var value = scaleNeeded ? vectors[v] * scaleVector : vectors[v];
                vectors[v] = value;
                check += value - value;
            }

            i = vectors.Length * Vector<float>.Count;
            if (!Vector.EqualsAll(check, Vector<float>.Zero))
            {
                return FirstNonFinite(span);
            }
        }

        for (; i < span.Length; i++)
        {
            var value = scaleNeeded ? span[i] * factor : span[i];
            if (!float.IsFinite(value))
            {
                return i;
            }

            span[i] = value;
        }

        return -1;
    }

    private static int FirstNonFinite(ReadOnlySpan<float> samples)
    {
        for (var i = 0; i < samples.Length; i++)
        {
            if (!float.IsFinite(samples[i]))
            {
                return i;
            }
        }

        return -1;
    }

    private static string? ParseHeader(ReadOnlySpan<byte> header, ref HeaderFields fields)
    {
        if (header.IsEmpty)
        {
            return "header frame is empty";
        }

        try
        {
            var reader = new Utf8JsonReader(header, new JsonReaderOptions { MaxDepth = MaxJsonDepth });
            if (!reader.Read() || reader.TokenType != JsonTokenType.StartObject)
            {
                return "header is not a JSON object";
            }

            while (reader.Read() && reader.TokenType == JsonTokenType.PropertyName)
            {
                var duplicate = ReadProperty(ref reader, ref fields);
                if (duplicate is not null)
                {
                    return $"header field '{duplicate}' appears more than once";
                }
            }

            // Anything after the closing brace other than whitespace makes the reader throw.
            if (reader.Read())
            {
                return "header has content after the JSON object";
            }

            return null;
        }
        catch (JsonException ex)
        {
            return $"header is not valid JSON ({ex.Message})";
        }
        catch (InvalidOperationException ex)
        {
            // Invalid UTF-8 inside a string surfaces here when the value is transcoded.
            return $"header is not valid UTF-8 JSON ({ex.Message})";
        }
    }

    /// <summary>Reads one property; returns its name when it was already seen.</summary>
    private static string? ReadProperty(ref Utf8JsonReader reader, ref HeaderFields fields)
    {
        if (reader.ValueTextEquals("v"u8))
        {
            if (!fields.Seen(HeaderFields.VersionBit))
            {
                return "v";
            }

            reader.Read();
            if (reader.TokenType == JsonTokenType.Number && reader.TryGetInt64(out var version))
            {
                fields.Version = version;
            }
            else
            {
                fields.VersionText = reader.TokenType == JsonTokenType.String ? reader.GetString() : reader.TokenType.ToString();
                reader.Skip();
            }
        }
        else if (reader.ValueTextEquals("stream"u8))
        {
            if (!fields.Seen(HeaderFields.StreamBit))
            {
                return "stream";
            }

            reader.Read();
            if (reader.TokenType == JsonTokenType.String)
            {
                fields.StreamId = reader.GetString();
            }
            else
            {
                // Reported as BadStreamId in CheckFields: present but not a string.
                reader.Skip();
            }
        }
        else if (reader.ValueTextEquals("fs"u8))
        {
            if (!fields.Seen(HeaderFields.RateBit))
            {
                return "fs";
            }

            reader.Read();
            if (reader.TokenType == JsonTokenType.Number && reader.TryGetDouble(out var rate))
            {
                fields.SampleRateHz = rate;
            }
            else
            {
                fields.FieldError(WireRejectReason.BadSampleRate, $"'fs' must be a number of Hz, not {reader.TokenType}");
                reader.Skip();
            }
        }
        else if (reader.ValueTextEquals("channels"u8))
        {
            if (!fields.Seen(HeaderFields.ChannelsBit))
            {
                return "channels";
            }

            reader.Read();
            ReadChannels(ref reader, ref fields);
        }
        else if (reader.ValueTextEquals("unit"u8))
        {
            if (!fields.Seen(HeaderFields.UnitBit))
            {
                return "unit";
            }

            reader.Read();
            ReadUnit(ref reader, ref fields);
        }
        else if (reader.ValueTextEquals("index"u8))
        {
            if (!fields.Seen(HeaderFields.IndexBit))
            {
                return "index";
            }

            reader.Read();
            if (reader.TokenType == JsonTokenType.Number && reader.TryGetInt64(out var index) && index >= 0)
            {
                fields.Index = index;
            }
            else
            {
                fields.FieldError(WireRejectReason.BadIndex, "'index' must be a non-negative 64-bit integer");
                reader.Skip();
            }
        }
        else if (reader.ValueTextEquals("t0"u8))
        {
            if (!fields.Seen(HeaderFields.StartBit))
            {
                return "t0";
            }

            reader.Read();
            ReadStartTime(ref reader, ref fields);
        }
        else
        {
            // Unknown fields are ignored so later minor additions stay readable by this version.
            reader.Read();
            reader.Skip();
        }

        return null;
    }

    private static void ReadChannels(ref Utf8JsonReader reader, ref HeaderFields fields)
    {
        if (reader.TokenType != JsonTokenType.StartArray)
        {
            fields.FieldError(WireRejectReason.BadChannels, $"'channels' must be an array of labels, not {reader.TokenType}");
            reader.Skip();
            return;
        }

        var labels = new List<string>();
        var count = 0;
        while (reader.Read() && reader.TokenType != JsonTokenType.EndArray)
        {
            count++;
            if (reader.TokenType != JsonTokenType.String)
            {
                fields.FieldError(WireRejectReason.BadChannels, $"channel {count - 1} label must be a string, not {reader.TokenType}");
                reader.Skip();
                continue;
            }

            if (count > MaxChannels)
            {
                continue;
            }

            var label = reader.GetString()!;
            if (string.IsNullOrWhiteSpace(label))
            {
                fields.FieldError(WireRejectReason.BadChannels, $"channel {count - 1} label is empty");
            }

            labels.Add(label);
        }

        if (count > MaxChannels)
        {
            fields.FieldError(WireRejectReason.BadChannels, $"{count} channels, more than the limit of {MaxChannels}");
        }

        fields.Channels = labels;
    }

    private static void ReadUnit(ref Utf8JsonReader reader, ref HeaderFields fields)
    {
        if (reader.TokenType == JsonTokenType.String)
        {
            if (reader.ValueTextEquals("uV"u8) || reader.ValueTextEquals("µV"u8) || reader.ValueTextEquals("μV"u8))
            {
                fields.Unit = WireUnit.Microvolts;
                return;
            }

            if (reader.ValueTextEquals("mV"u8))
            {
                fields.Unit = WireUnit.Millivolts;
                return;
            }

            if (reader.ValueTextEquals("V"u8))
            {
                fields.Unit = WireUnit.Volts;
                return;
            }

            fields.FieldError(WireRejectReason.BadUnit, $"'unit' is '{Printable(reader.GetString()!)}', expected uV, mV or V");
            return;
        }

        fields.FieldError(WireRejectReason.BadUnit, $"'unit' must be a string (uV, mV or V), not {reader.TokenType}");
        reader.Skip();
    }

    private static void ReadStartTime(ref Utf8JsonReader reader, ref HeaderFields fields)
    {
        if (reader.TokenType == JsonTokenType.Null)
        {
            return;
        }

        if (reader.TokenType != JsonTokenType.String)
        {
            fields.FieldError(WireRejectReason.BadStartTime, $"'t0' must be an ISO-8601 string, not {reader.TokenType}");
            reader.Skip();
            return;
        }

        var text = reader.GetString()!;
        var timeStart = text.IndexOf('T', StringComparison.OrdinalIgnoreCase);
        var hasZone = timeStart > 0 && text.AsSpan(timeStart).IndexOfAny("Zz+-") > 0;
        if (!hasZone || !reader.TryGetDateTimeOffset(out var t0))
        {
            fields.FieldError(WireRejectReason.BadStartTime,
                $"'t0' is '{Printable(text)}', expected an ISO-8601 date and time with Z or an offset (e.g. 2025-03-01T08:00:00.000Z)");
            return;
        }

        fields.StartUtc = t0.ToUniversalTime();
    }

    private static WireRejection? CheckFields(ref HeaderFields fields, out string? streamId)
    {
        streamId = null;
        if (!fields.Has(HeaderFields.VersionBit))
        {
            return new WireRejection(WireRejectReason.MissingField, null, "header has no 'v' (protocol version)");
        }

        if (fields.VersionText is not null || fields.Version != ProtocolVersion)
        {
            var seen = fields.VersionText ?? fields.Version.ToString(CultureInfo.InvariantCulture);
            return new WireRejection(WireRejectReason.UnknownVersion, ValidOrNull(fields.StreamId),
                $"{Subject(ValidOrNull(fields.StreamId))}protocol version '{Printable(seen)}' is not supported (this build reads v{ProtocolVersion})");
        }

        if (fields.StreamId is null)
        {
            return fields.Has(HeaderFields.StreamBit)
                ? new WireRejection(WireRejectReason.BadStreamId, null, "'stream' must be a string id")
                : new WireRejection(WireRejectReason.MissingField, null, "header has no 'stream' id");
        }

        if (!IsValidStreamId(fields.StreamId))
        {
            return new WireRejection(WireRejectReason.BadStreamId, null,
                $"stream id '{Printable(fields.StreamId)}' is not 1–{MaxStreamIdLength} characters of [A-Za-z0-9._-]");
        }

        streamId = fields.StreamId;
        if (fields.ErrorReason is { } reason)
        {
            return Rejection(reason, streamId, fields.ErrorMessage!);
        }

        if (!fields.Has(HeaderFields.RateBit))
        {
            return Rejection(WireRejectReason.MissingField, streamId, "header has no 'fs' (sample rate in Hz)");
        }

        if (!double.IsFinite(fields.SampleRateHz) || fields.SampleRateHz <= 0 || fields.SampleRateHz > MaxSampleRateHz)
        {
            return Rejection(WireRejectReason.BadSampleRate, streamId,
                $"'fs' = {fields.SampleRateHz.ToString(CultureInfo.InvariantCulture)} Hz is outside (0, {MaxSampleRateHz.ToString(CultureInfo.InvariantCulture)}] Hz");
        }

        if (!fields.Has(HeaderFields.ChannelsBit))
        {
            return Rejection(WireRejectReason.MissingField, streamId, "header has no 'channels' (list of labels)");
        }

        if (fields.Channels!.Count == 0)
        {
            return Rejection(WireRejectReason.BadChannels, streamId, "'channels' is empty; a stream needs at least one channel");
        }

        if (!fields.Has(HeaderFields.UnitBit))
        {
            return Rejection(WireRejectReason.MissingField, streamId, "header has no 'unit' (uV, mV or V)");
        }

        if (!fields.Has(HeaderFields.IndexBit))
        {
            return Rejection(WireRejectReason.MissingField, streamId, "header has no 'index' (first sample's index since the stream's start)");
        }

        return null;
    }

    private static string? FindDuplicate(List<string> labels)
    {
        if (labels.Count < 2)
        {
            return null;
        }

        var seen = new HashSet<string>(labels.Count, StringComparer.Ordinal);
        foreach (var label in labels)
        {
            if (!seen.Add(label))
            {
                return label;
            }
        }

        return null;
    }

    private static string? ValidOrNull(string? streamId) => streamId is not null && IsValidStreamId(streamId) ? streamId : null;

    private static string Subject(string? streamId) => streamId is null ? string.Empty : $"stream '{streamId}': ";

    private static WireRejection Rejection(WireRejectReason reason, string? streamId, string problem) =>
        new(reason, streamId, Subject(streamId) + problem);

    private static WireDecodeResult Reject(WireRejectReason reason, string? streamId, string problem) =>
        WireDecodeResult.Reject(Rejection(reason, streamId, problem));

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

    private struct HeaderFields
    {
        public const int VersionBit = 1;
        public const int StreamBit = 2;
        public const int RateBit = 4;
        public const int ChannelsBit = 8;
        public const int UnitBit = 16;
        public const int IndexBit = 32;
        public const int StartBit = 64;

        public int Present;
        public long Version;
        public string? VersionText;
        public string? StreamId;
        public double SampleRateHz;
        public List<string>? Channels;
        public WireUnit Unit;
        public long Index;
        public DateTimeOffset? StartUtc;
        public WireRejectReason? ErrorReason;
        public string? ErrorMessage;

        /// <summary>Marks a field present; false when it already was.</summary>
        public bool Seen(int bit)
        {
            if ((Present & bit) != 0)
            {
                return false;
            }

            Present |= bit;
            return true;
        }

        public readonly bool Has(int bit) => (Present & bit) != 0;

        /// <summary>Keeps the first field problem; the version is checked before it is reported.</summary>
        public void FieldError(WireRejectReason reason, string message)
        {
            if (ErrorReason is null)
            {
                ErrorReason = reason;
                ErrorMessage = message;
            }
        }
    }
}
