using System.Buffers.Binary;
using System.Text;
using System.Text.Json;
using HumWatch.Core.Signals;
using HumWatch.Formats.Wire;
using Xunit;

namespace HumWatch.Formats.Tests.Wire;

public sealed class ChunkWireCodecTests
{
    private static SampleChunk MakeChunk(int channels, int samplesPerChannel, long firstIndex = 0, double fs = 250, DateTimeOffset? t0 = null)
    {
        var random = new Random(1234);
        var data = new float[channels * samplesPerChannel];
        for (var i = 0; i < data.Length; i++)
        {
            data[i] = (float)((random.NextDouble() - 0.5) * 200.0);
        }

        var labels = new ChannelInfo[channels];
        for (var c = 0; c < channels; c++)
        {
            labels[c] = new ChannelInfo("E" + c);
        }

        return new SampleChunk(new StreamLayout(fs, labels), firstIndex, samplesPerChannel, data, t0);
    }

    [Fact]
    public void Round_trip_in_microvolts_keeps_every_sample_and_header_field()
    {
        var t0 = new DateTimeOffset(2025, 3, 1, 8, 0, 0, 125, TimeSpan.Zero);
        var chunk = MakeChunk(channels: 5, samplesPerChannel: 37, firstIndex: 123_456_789_012, fs: 512, t0: t0);

        var message = ChunkWireCodec.Encode("ward-3.bed_2", chunk);
        var result = ChunkWireCodec.Decode(message.Header, message.Samples);

        Assert.True(result.IsSuccess, result.Rejection?.Message);
        Assert.Equal("ward-3.bed_2", result.StreamId);
        var decoded = result.Chunk!;
        Assert.Equal(512, decoded.Layout.SampleRateHz);
        Assert.Equal(["E0", "E1", "E2", "E3", "E4"], decoded.Layout.Channels.Select(c => c.Label));
        Assert.Equal(123_456_789_012, decoded.FirstSampleIndex);
        Assert.Equal(37, decoded.SamplesPerChannel);
        Assert.Equal(t0, decoded.StartUtc);
        Assert.Equal(chunk.SamplesUv, decoded.SamplesUv);
    }

    [Theory]
    [InlineData(WireUnit.Millivolts, "mV")]
    [InlineData(WireUnit.Volts, "V")]
    public void Round_trip_in_other_units_arrives_in_microvolts(WireUnit unit, string unitText)
    {
        var chunk = MakeChunk(channels: 3, samplesPerChannel: 50);

        var message = ChunkWireCodec.Encode("lab-1", chunk, unit);
        using var header = JsonDocument.Parse(message.Header);
        var result = ChunkWireCodec.Decode(message.Header, message.Samples);

        Assert.Equal(unitText, header.RootElement.GetProperty("unit").GetString());
        Assert.True(result.IsSuccess, result.Rejection?.Message);
        for (var i = 0; i < chunk.SamplesUv.Length; i++)
        {
            // Two float32 roundings (encode, decode): relative error within a few ulp. // IEEE 754 binary32: 24-bit significand (from memory)
            Assert.True(Math.Abs(chunk.SamplesUv[i] - result.Chunk!.SamplesUv[i]) <= 4e-7 * Math.Abs(chunk.SamplesUv[i]) + 1e-9, $"sample {i}");
        }
    }

    [Fact]
    public void Samples_are_written_as_little_endian_binary32_channel_major()
    {
        var layout = new StreamLayout(100, [new ChannelInfo("A"), new ChannelInfo("B")]);
        var chunk = new SampleChunk(layout, 0, 2, [1.0f, -2.0f, 0.5f, 0.0f]);

        var samples = ChunkWireCodec.Encode("s", chunk).Samples;

        // IEEE 754-2008 binary32: 1.0 = 0x3F800000, -2.0 = 0xC0000000, 0.5 = 0x3F000000 (from memory); little-endian byte order.
        Assert.Equal(new byte[] { 0x00, 0x00, 0x80, 0x3F, 0x00, 0x00, 0x00, 0xC0, 0x00, 0x00, 0x00, 0x3F, 0x00, 0x00, 0x00, 0x00 }, samples);
    }

    [Theory]
    [InlineData("python_v1_mV", "fixture.python-1", 256.0, 3, 8, 1000L, "2025-03-01T08:00:00.125Z")]
    [InlineData("python_v1_V", "fixture.python-2", 500.0, 2, 5, 0L, null)]
    public void Message_written_by_python_decodes_to_the_values_python_computed(string folder, string stream, double fs, int channels, int samples, long index, string? t0)
    {
        // Debian python3 3.11.2 json + struct.pack('<f'), via tests/fixtures/zmq/push_chunk.py --write-fixture
        var dir = Path.Combine(AppContext.BaseDirectory, "fixtures", "zmq", folder);
        var header = File.ReadAllBytes(Path.Combine(dir, "header.json"));
        var frame = File.ReadAllBytes(Path.Combine(dir, "samples.bin"));
        var expected = JsonSerializer.Deserialize<double[]>(File.ReadAllText(Path.Combine(dir, "expected_uV.json")))!;

        var result = ChunkWireCodec.Decode(header, frame);

        Assert.True(result.IsSuccess, result.Rejection?.Message);
        Assert.Equal(stream, result.StreamId);
        Assert.Equal(fs, result.Chunk!.Layout.SampleRateHz);
        Assert.Equal(channels, result.Chunk.Layout.ChannelCount);
        Assert.Equal(samples, result.Chunk.SamplesPerChannel);
        Assert.Equal(index, result.Chunk.FirstSampleIndex);
        Assert.Equal(t0 is null ? null : DateTimeOffset.Parse(t0, System.Globalization.CultureInfo.InvariantCulture), result.Chunk.StartUtc);
        Assert.Equal(expected.Length, result.Chunk.SamplesUv.Length);
        for (var i = 0; i < expected.Length; i++)
        {
            // float32 on the wire in mV/V: half an ulp of the wire value, scaled, plus the final rounding to float µV.
            Assert.True(Math.Abs(expected[i] - result.Chunk.SamplesUv[i]) <= 2e-6 * Math.Max(1, Math.Abs(expected[i])), $"sample {i}: {expected[i]} vs {result.Chunk.SamplesUv[i]}");
        }
    }

    [Fact]
    public void Layout_instance_is_kept_while_rate_and_labels_are_unchanged()
    {
        var cache = new StreamLayoutCache();
        var first = ChunkWireCodec.Decode(Header("""{"v":1,"stream":"s1","fs":250,"channels":["A","B"],"unit":"uV","index":0}"""), Floats(4), cache);
        var same = ChunkWireCodec.Decode(Header("""{"v":1,"stream":"s1","fs":250,"channels":["A","B"],"unit":"mV","index":2}"""), Floats(4), cache);
        var otherStream = ChunkWireCodec.Decode(Header("""{"v":1,"stream":"s2","fs":250,"channels":["A","B"],"unit":"uV","index":0}"""), Floats(4), cache);
        var newRate = ChunkWireCodec.Decode(Header("""{"v":1,"stream":"s1","fs":500,"channels":["A","B"],"unit":"uV","index":4}"""), Floats(4), cache);
        var newLabels = ChunkWireCodec.Decode(Header("""{"v":1,"stream":"s1","fs":500,"channels":["A","C"],"unit":"uV","index":6}"""), Floats(4), cache);

        Assert.True(first.StartsNewLayout);
        Assert.Same(first.Chunk!.Layout, same.Chunk!.Layout);
        Assert.False(same.StartsNewLayout);
        Assert.NotSame(first.Chunk.Layout, otherStream.Chunk!.Layout);
        Assert.NotSame(first.Chunk.Layout, newRate.Chunk!.Layout);
        Assert.True(newRate.StartsNewLayout);
        Assert.NotSame(newRate.Chunk.Layout, newLabels.Chunk!.Layout);
        Assert.True(newLabels.StartsNewLayout);
    }

    [Fact]
    public void Start_time_with_an_offset_is_converted_to_UTC_and_unknown_fields_are_ignored()
    {
        var result = ChunkWireCodec.Decode(
            Header("""{"future":{"x":[1,2]},"index":7,"unit":"uV","channels":["Cz"],"fs":128,"stream":"r","v":1,"t0":"2025-06-01T10:00:00.5+02:00"}"""),
            Floats(3));

        Assert.True(result.IsSuccess, result.Rejection?.Message);
        Assert.Equal(new DateTimeOffset(2025, 6, 1, 8, 0, 0, 500, TimeSpan.Zero), result.Chunk!.StartUtc);
        Assert.Equal(TimeSpan.Zero, result.Chunk.StartUtc!.Value.Offset);
    }

    public static TheoryData<string, string, int, WireRejectReason, bool> Rejections() => new()
    {
        // name, header, sample bytes, reason, stream "lab-1" named
        { "not JSON", "{not json", 8, WireRejectReason.MalformedJson, false },
        { "not an object", "[1,2]", 8, WireRejectReason.MalformedJson, false },
        { "trailing content", Good() + " x", 8, WireRejectReason.MalformedJson, false },
        { "duplicate field", """{"v":1,"v":1,"stream":"lab-1","fs":250,"channels":["A","B"],"unit":"uV","index":0}""", 8, WireRejectReason.MalformedJson, false },
        { "empty header", "", 8, WireRejectReason.MalformedJson, false },
        { "bytes not multiple of 4 x channels", Good(), 12, WireRejectReason.SampleLength, true },
        { "zero samples", Good(), 0, WireRejectReason.SampleLength, true },
        { "unknown version", Good().Replace("\"v\":1", "\"v\":2", StringComparison.Ordinal), 8, WireRejectReason.UnknownVersion, true },
        { "version as string", Good().Replace("\"v\":1", "\"v\":\"1\"", StringComparison.Ordinal), 8, WireRejectReason.UnknownVersion, true },
        { "missing version", Good().Replace("\"v\":1,", "", StringComparison.Ordinal), 8, WireRejectReason.MissingField, false },
        { "missing stream", Good().Replace("\"stream\":\"lab-1\",", "", StringComparison.Ordinal), 8, WireRejectReason.MissingField, false },
        { "missing fs", Good().Replace("\"fs\":250,", "", StringComparison.Ordinal), 8, WireRejectReason.MissingField, true },
        { "missing channels", Good().Replace("\"channels\":[\"A\",\"B\"],", "", StringComparison.Ordinal), 8, WireRejectReason.MissingField, true },
        { "missing unit", Good().Replace("\"unit\":\"uV\",", "", StringComparison.Ordinal), 8, WireRejectReason.MissingField, true },
        { "missing index", Good().Replace(",\"index\":0", "", StringComparison.Ordinal), 8, WireRejectReason.MissingField, true },
        { "stream id with a space", Good().Replace("lab-1", "lab 1", StringComparison.Ordinal), 8, WireRejectReason.BadStreamId, false },
        { "stream id of 65 chars", Good().Replace("lab-1", new string('a', 65), StringComparison.Ordinal), 8, WireRejectReason.BadStreamId, false },
        { "empty stream id", Good().Replace("lab-1", "", StringComparison.Ordinal), 8, WireRejectReason.BadStreamId, false },
        { "non-ASCII stream id", Good().Replace("lab-1", "läb", StringComparison.Ordinal), 8, WireRejectReason.BadStreamId, false },
        { "stream id as number", Good().Replace("\"lab-1\"", "7", StringComparison.Ordinal), 8, WireRejectReason.BadStreamId, false },
        { "fs zero", Good().Replace("\"fs\":250", "\"fs\":0", StringComparison.Ordinal), 8, WireRejectReason.BadSampleRate, true },
        { "fs negative", Good().Replace("\"fs\":250", "\"fs\":-250", StringComparison.Ordinal), 8, WireRejectReason.BadSampleRate, true },
        { "fs absurd", Good().Replace("\"fs\":250", "\"fs\":5e9", StringComparison.Ordinal), 8, WireRejectReason.BadSampleRate, true },
        { "fs as string", Good().Replace("\"fs\":250", "\"fs\":\"250\"", StringComparison.Ordinal), 8, WireRejectReason.BadSampleRate, true },
        { "no channels", Good().Replace("[\"A\",\"B\"]", "[]", StringComparison.Ordinal), 8, WireRejectReason.BadChannels, true },
        { "duplicate labels", Good().Replace("[\"A\",\"B\"]", "[\"A\",\"A\"]", StringComparison.Ordinal), 8, WireRejectReason.BadChannels, true },
        { "empty label", Good().Replace("[\"A\",\"B\"]", "[\"A\",\"\"]", StringComparison.Ordinal), 8, WireRejectReason.BadChannels, true },
        { "blank label", Good().Replace("[\"A\",\"B\"]", "[\" \",\"B\"]", StringComparison.Ordinal), 8, WireRejectReason.BadChannels, true },
        { "label not a string", Good().Replace("[\"A\",\"B\"]", "[\"A\",2]", StringComparison.Ordinal), 8, WireRejectReason.BadChannels, true },
        { "channels not an array", Good().Replace("[\"A\",\"B\"]", "\"A,B\"", StringComparison.Ordinal), 8, WireRejectReason.BadChannels, true },
        { "1025 channels", Good().Replace("[\"A\",\"B\"]", ManyLabels(1025), StringComparison.Ordinal), 4 * 1025, WireRejectReason.BadChannels, true },
        { "unknown unit", Good().Replace("\"uV\"", "\"nV\"", StringComparison.Ordinal), 8, WireRejectReason.BadUnit, true },
        { "unit as number", Good().Replace("\"uV\"", "1", StringComparison.Ordinal), 8, WireRejectReason.BadUnit, true },
        { "negative index", Good().Replace("\"index\":0", "\"index\":-1", StringComparison.Ordinal), 8, WireRejectReason.BadIndex, true },
        { "fractional index", Good().Replace("\"index\":0", "\"index\":1.5", StringComparison.Ordinal), 8, WireRejectReason.BadIndex, true },
        { "index beyond int64", Good().Replace("\"index\":0", "\"index\":9223372036854775808", StringComparison.Ordinal), 8, WireRejectReason.BadIndex, true },
        { "chunk end beyond int64", Good().Replace("\"index\":0", "\"index\":9223372036854775807", StringComparison.Ordinal), 16, WireRejectReason.BadIndex, true },
        { "t0 not a time", Good().Replace("}", ",\"t0\":\"yesterday\"}", StringComparison.Ordinal), 8, WireRejectReason.BadStartTime, true },
        { "t0 without zone", Good().Replace("}", ",\"t0\":\"2025-03-01T08:00:00\"}", StringComparison.Ordinal), 8, WireRejectReason.BadStartTime, true },
        { "t0 as number", Good().Replace("}", ",\"t0\":1740816000}", StringComparison.Ordinal), 8, WireRejectReason.BadStartTime, true },
    };

    [Theory]
    [MemberData(nameof(Rejections))]
    public void Bad_message_is_rejected_with_its_reason_and_the_stream_named_when_valid(string name, string header, int sampleBytes, WireRejectReason reason, bool streamNamed)
    {
        var result = ChunkWireCodec.Decode(Encoding.UTF8.GetBytes(header), new byte[sampleBytes]);

        Assert.False(result.IsSuccess, name);
        Assert.Equal(reason, result.Rejection!.Reason);
        Assert.False(string.IsNullOrWhiteSpace(result.Rejection.Message));
        if (streamNamed)
        {
            Assert.Equal("lab-1", result.Rejection.StreamId);
            Assert.Contains("stream 'lab-1'", result.Rejection.Message, StringComparison.Ordinal);
        }
        else
        {
            Assert.Null(result.Rejection.StreamId);
        }
    }

    [Theory]
    [InlineData(float.NaN, "uV")]
    [InlineData(float.PositiveInfinity, "uV")]
    [InlineData(float.NegativeInfinity, "mV")]
    [InlineData(3e38f, "V")] // finite volts, but beyond float range once in µV
    public void Non_finite_sample_is_rejected_naming_stream_channel_and_sample(float bad, string unit)
    {
        var samples = Floats(6);
        BinaryPrimitives.WriteSingleLittleEndian(samples.AsSpan(4 * 4), bad); // channel B (index 1), sample 1 of 3

        var result = ChunkWireCodec.Decode(Header(Good().Replace("\"uV\"", $"\"{unit}\"", StringComparison.Ordinal)), samples);

        Assert.Equal(WireRejectReason.NonFiniteSample, result.Rejection!.Reason);
        Assert.Equal("lab-1", result.Rejection.StreamId);
        Assert.Contains("sample 1 of channel 'B'", result.Rejection.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(0, "uV")]
    [InlineData(517, "mV")]
    [InlineData(999, "V")] // last sample: past any whole vector
    public void Non_finite_sample_anywhere_in_a_long_chunk_is_found(int position, string unit)
    {
        var samples = Floats(1000); // two channels of 500
        BinaryPrimitives.WriteSingleLittleEndian(samples.AsSpan(position * 4), float.NaN);

        var result = ChunkWireCodec.Decode(Header(Good().Replace("\"uV\"", $"\"{unit}\"", StringComparison.Ordinal)), samples);

        Assert.Equal(WireRejectReason.NonFiniteSample, result.Rejection!.Reason);
        Assert.Contains($"sample {position % 500} of channel '{(position < 500 ? "A" : "B")}'", result.Rejection.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_chunk_ending_exactly_at_the_largest_64_bit_index_is_accepted()
    {
        // 2 channels × 2 samples from 2^63 − 3: the next chunk would start at 2^63 − 1, the largest index.
        var header = Good().Replace("\"index\":0", "\"index\":9223372036854775805", StringComparison.Ordinal);

        var result = ChunkWireCodec.Decode(Header(header), Floats(4));

        Assert.True(result.IsSuccess, result.Rejection?.Message);
        Assert.Equal(long.MaxValue, result.Chunk.EndSampleIndex);
        result.Samples.Dispose();
    }

    [Fact]
    public void Wrong_frame_count_and_oversize_name_the_stream_when_the_header_is_readable()
    {
        var frames = ChunkWireCodec.RejectFrameCount(3, Header(Good()));
        var unreadable = ChunkWireCodec.RejectFrameCount(1, [0xFF, 0x00]);
        var large = ChunkWireCodec.RejectTooLarge(20_000_000, 16_777_216, Header(Good()));

        Assert.Equal(WireRejectReason.WrongFrameCount, frames.Reason);
        Assert.Equal("lab-1", frames.StreamId);
        Assert.Contains("3 frame(s)", frames.Message, StringComparison.Ordinal);
        Assert.Null(unreadable.StreamId);
        Assert.Equal(WireRejectReason.TooLarge, large.Reason);
        Assert.Contains("stream 'lab-1'", large.Message, StringComparison.Ordinal);
        Assert.Contains("16777216", large.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Exactly_1024_channels_are_accepted()
    {
        var result = ChunkWireCodec.Decode(Header(Good().Replace("[\"A\",\"B\"]", ManyLabels(1024), StringComparison.Ordinal)), new byte[4 * 1024]);

        Assert.True(result.IsSuccess, result.Rejection?.Message);
        Assert.Equal(1024, result.Chunk!.Layout.ChannelCount);
    }

    [Fact]
    public void Encode_refuses_an_invalid_stream_id_naming_the_parameter()
    {
        var chunk = MakeChunk(1, 1);

        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => ChunkWireCodec.Encode("no spaces allowed", chunk));

        Assert.Equal("streamId", ex.ParamName);
    }

    [Fact]
    public void Rejection_message_hides_control_characters_from_untrusted_text()
    {
        var result = ChunkWireCodec.Decode(Header(Good().Replace("lab-1", "evil\\nline", StringComparison.Ordinal)), Floats(2));

        Assert.Equal(WireRejectReason.BadStreamId, result.Rejection!.Reason);
        Assert.DoesNotContain('\n', result.Rejection.Message);
    }

    private static string Good() => """{"v":1,"stream":"lab-1","fs":250,"channels":["A","B"],"unit":"uV","index":0}""";

    private static string ManyLabels(int count) => JsonSerializer.Serialize(Enumerable.Range(0, count).Select(i => "L" + i));

    private static byte[] Header(string json) => Encoding.UTF8.GetBytes(json);

    private static byte[] Floats(int count)
    {
        var bytes = new byte[count * 4];
        for (var i = 0; i < count; i++)
        {
            BinaryPrimitives.WriteSingleLittleEndian(bytes.AsSpan(i * 4), i * 0.25f);
        }

        return bytes;
    }
}
