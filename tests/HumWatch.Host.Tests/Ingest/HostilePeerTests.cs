using System.Globalization;
using System.Net.Sockets;
using System.Text.RegularExpressions;
using HumWatch.Formats.Wire;
using HumWatch.Host.Ingest;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Tests.Ingest.Support;
using NetMQ;
using NetMQ.Sockets;
using Xunit;

namespace HumWatch.Host.Tests.Ingest;

/// <summary>
/// A seeded flood of new stream ids and of broken frames through the real socket ingest (loopback, ephemeral port,
/// fake clock): every message ends counted under its reason, the state kept stays bounded by the limits, warnings stay
/// capped with one summary line, and a good stream is served afterwards. Expected counts follow from how the flood
/// is built; nothing depends on timing (every wait is a bounded poll for a count).
/// </summary>
[Collection(IngestSocketCollection.Name)]
public sealed class HostilePeerTests
{
    private const int MaxStreams = 50;
    private const int NewIds = 100_000;
    private const int Junk = 20_000;

    [Fact]
    public async Task A_flood_of_new_ids_and_broken_frames_is_counted_by_reason_keeps_bounded_state_and_a_good_stream_still_gets_in()
    {
        var options = IngestHarness.LoopbackOptions();
        options.MaxChannels = 8;
        options.MaxSampleRateHz = 2000;
        options.MaxChunkSamples = 1000;
        options.MaxHeaderBytes = 1024;
        options.MaxMessageBytes = 256 * 1024;
        options.QueueCapacity = 1000;
        options.MaxWarningsPerInterval = 20;
        options.RateBurstSeconds = 30;
        var monitor = new MonitorOptions { MaxStreams = MaxStreams, IdleCloseSeconds = 60 };
        await using var harness = new IngestHarness(options, monitor);
        await harness.StartAsync();
        var random = new Random(1313);
        var expected = new Dictionary<WireRejectReason, long>();
        void Expect(WireRejectReason reason) => expected[reason] = expected.GetValueOrDefault(reason) + 1;

        using var push = new PushSocket();
        push.Options.SendHighWatermark = 0;
        push.Options.Linger = TimeSpan.FromSeconds(5);
        push.Connect(harness.Endpoint);

        // Phase 1: 100 000 streams nobody asked for, each one valid one-sample chunk. The first MaxStreams are admitted.
        var tiny = Some.Layout(250, "Cz");
        for (var i = 0; i < NewIds; i++)
        {
            push.SendMultipartBytes(Frames(ChunkWireCodec.Encode($"flood-{i}", Some.Chunk(tiny, 0, 1, 0))));
        }

        // Phase 2: broken frames under fresh ids, the kind picked by the seeded random.
        for (var i = 0; i < Junk; i++)
        {
            var id = $"junk-{i}";
            switch (random.Next(8))
            {
                case 0:
                    push.SendMultipartBytes(RandomBytes(random, 1 + random.Next(200)), RandomBytes(random, 1 + random.Next(64)));
                    Expect(WireRejectReason.MalformedJson);
                    break;
                case 1:
                    push.SendMultipartBytes(Some.Utf8(Header(id, 250, 2, "furlong")), new byte[8]);
                    Expect(WireRejectReason.BadUnit);
                    break;
                case 2:
                    // Over Ingest:MaxHeaderBytes: refused before it is parsed.
                    push.SendMultipartBytes(Some.Utf8(Header(id, 250, 2, "uV") + new string(' ', 2000)), new byte[8]);
                    Expect(WireRejectReason.TooLarge);
                    break;
                case 3:
                    push.SendMultipartBytes(Some.Utf8(Header(id, 250, 9, "uV")), new byte[9 * 4]);
                    Expect(WireRejectReason.BadChannels);
                    break;
                case 4:
                    push.SendMultipartBytes(Some.Utf8(Header(id, 4000, 2, "uV")), new byte[8]);
                    Expect(WireRejectReason.BadSampleRate);
                    break;
                case 5:
                    // 1001 samples per channel, over Ingest:MaxChunkSamples.
                    push.SendMultipartBytes(Some.Utf8(Header(id, 250, 2, "uV")), new byte[2 * 1001 * 4]);
                    Expect(WireRejectReason.TooLarge);
                    break;
                case 6:
                    push.SendFrame(Some.Utf8(Header(id, 250, 2, "uV")));
                    Expect(WireRejectReason.WrongFrameCount);
                    break;
                default:
                    push.SendMultipartBytes(Some.Utf8(Header(id, 250, 2, "uV")), [0, 0, 0xC0, 0x7F, 0, 0, 0, 0]);
                    Expect(WireRejectReason.NonFiniteSample);
                    break;
            }
        }

        // A sentinel on the same connection (so after everything above): a second chunk of an admitted stream.
        push.SendMultipartBytes(Frames(ChunkWireCodec.Encode("flood-0", Some.Chunk(tiny, 1, 1, 0))));
        await IngestHarness.WaitUntilAsync(() => harness.Counters.Get("flood-0")?.Accepted == 2, "the sentinel", 60);
        var total = NewIds + Junk + 1;
        Assert.Equal(total, Handled(harness));

        // Drops and rejections by reason; the never-admitted ids are counted under the endpoint, not per id.
        var origin = Assert.Single(harness.Counters.UnattributedRejections());
        Assert.Equal(NewIds - MaxStreams, origin.DroppedFor(IngestDropReason.TooManyStreams));
        // Ids never accepted are counted in a small table that is folded into the endpoint's counts when full.
        var rejectedOnly = harness.Counters.Snapshot().Where(s => s.Accepted == 0).ToList();
        Assert.InRange(rejectedOnly.Count, 1, IngestCounters.MaxRejectedOnlyStreams);
        Assert.Equal(rejectedOnly.Count, harness.Counters.RejectedOnlyStreamCount);
        foreach (var (reason, count) in expected)
        {
            var counted = origin.RejectedFor(reason) + rejectedOnly.Sum(s => s.RejectedFor(reason));
            Assert.True(count == counted, $"{reason}: expected {count}, counted {counted}");
        }

        Assert.Equal(expected.Values.Sum(), origin.Rejected.Values.Sum() + rejectedOnly.Sum(s => s.RejectedTotal));

        // Bounded state: MaxStreams admitted streams, layouts and counters; arrays only for the chunks queued.
        Assert.Equal(MaxStreams, harness.Service.AdmittedStreamCount);
        Assert.Equal(MaxStreams, harness.Service.RememberedLayoutCount);
        Assert.Equal(MaxStreams + rejectedOnly.Count, harness.Counters.Snapshot().Count);
        Assert.Equal(MaxStreams + 1, harness.Queue.Count);
        Assert.Equal(MaxStreams + 1, harness.Pool.RentedCount);
        foreach (var chunk in await harness.ReadAsync(MaxStreams + 1))
        {
            chunk.Dispose();
        }

        Assert.Equal(0, harness.Pool.RentedCount);

        // Warnings: on the frozen clock everything fell into one interval, so at most the cap was written.
        var written = Warnings(harness);
        Assert.InRange(written, 1, options.MaxWarningsPerInterval);
        Assert.Equal(NewIds - MaxStreams + expected.Values.Sum(), written + harness.Service.SuppressedWarnings);

        // The interval ends: one summary line with what the cap held back (the socket's quiet poll writes it).
        harness.Time.Advance(TimeSpan.FromSeconds(61));
        await IngestHarness.WaitUntilAsync(() => Summaries(harness).Count > 0, "the summary line");
        var summary = Assert.Single(Summaries(harness));
        var held = long.Parse(Regex.Match(summary, @"^(\d+) ingest warnings").Groups[1].Value, CultureInfo.InvariantCulture);
        Assert.InRange(held, 1, harness.Service.SuppressedWarnings);

        // Peers that connect and send nothing: a raw TCP connection and a ZeroMQ one.
        var port = int.Parse(harness.Endpoint[(harness.Endpoint.LastIndexOf(':') + 1)..], CultureInfo.InvariantCulture);
        using var raw = new TcpClient();
        await raw.ConnectAsync("127.0.0.1", port);
        using var silent = new PushSocket();
        silent.Connect(harness.Endpoint);

        // A good stream after the flood: the idle flood streams gave up their slots (60 s passed), so it is admitted.
        // Its rate allowance (token bucket, see StreamAdmission): 30 s × 250 Hz = 7500 samples at once, so 30 chunks
        // of 250 go through on the frozen clock and the next 10 are dropped; one more second refills 2 × 250 = 500
        // samples, two chunks' worth.
        var good = Some.Layout(250, "C3", "C4");
        for (var k = 0; k < 40; k++)
        {
            push.SendMultipartBytes(Frames(ChunkWireCodec.Encode("ward-1", Some.Chunk(good, k * 250, 250, 0.5f))));
        }

        await IngestHarness.WaitUntilAsync(() => harness.Counters.Get("ward-1") is { } c && c.Accepted + c.Dropped == 40, "40 chunks of ward-1");
        harness.Time.Advance(TimeSpan.FromSeconds(1));
        for (var k = 40; k < 43; k++)
        {
            push.SendMultipartBytes(Frames(ChunkWireCodec.Encode("ward-1", Some.Chunk(good, k * 250, 250, 0.5f))));
        }

        await IngestHarness.WaitUntilAsync(() => harness.Counters.Get("ward-1") is { } c && c.Accepted + c.Dropped == 43, "43 chunks of ward-1");
        var ward = harness.Counters.Get("ward-1")!;
        Assert.Equal(32, ward.Accepted);
        Assert.Equal(11, ward.DroppedFor(IngestDropReason.RateExceeded));
        var received = await harness.ReadAsync(32);
        Assert.All(received, c => Assert.Equal("ward-1", c.StreamId));
        Assert.Equal(Enumerable.Range(0, 30).Concat([40, 41]).Select(k => k * 250L), received.Select(c => c.Chunk.FirstSampleIndex));
        foreach (var chunk in received)
        {
            chunk.Dispose();
        }

        // The flood's streams are gone; the silent peers left nothing behind.
        Assert.Equal(1, harness.Service.AdmittedStreamCount);
        Assert.Equal(1, harness.Service.RememberedLayoutCount);
        Assert.Equal(1, harness.Counters.Snapshot().Count(s => s.Accepted > 0));
        Assert.Equal(0, harness.Pool.RentedCount);
        // The flood streams' own counts (51 accepted chunks) went with their slots; everything else is still counted.
        Assert.Equal(total - (MaxStreams + 1) + 43, Handled(harness));
    }

    [Fact]
    public void Limits_out_of_range_are_refused_at_start_naming_the_setting()
    {
        var options = new IngestOptions
        {
            MaxChannels = 2000,
            MaxSampleRateHz = 0,
            MaxChunkSamples = 0,
            MaxHeaderBytes = 10,
            RateAllowance = 0.5,
            RateBurstSeconds = 0,
            ReceiveHighWatermark = 0,
            MaxWarningsPerInterval = 0,
        };
        var failures = new IngestOptionsValidator().Validate(null, options).Failures!.ToList();
        foreach (var key in new[] { "MaxChannels", "MaxSampleRateHz", "MaxChunkSamples", "MaxHeaderBytes", "RateAllowance", "RateBurstSeconds", "ReceiveHighWatermark", "MaxWarningsPerInterval" })
        {
            Assert.Contains(failures, f => f.StartsWith($"Ingest:{key} must", StringComparison.Ordinal));
        }

        Assert.Equal(8, failures.Count);
    }

    [Fact]
    public void Default_limits_hold_the_measured_capacity_and_the_demo()
    {
        // bench/README.md's measured shapes: 2000 streams of 32 ch × 500 Hz and 600 of 64 ch × 1 kHz; the demo rooms
        // are 500 Hz. A chunk of 0.5 s (what the demo and bench send) must pass every limit.
        var ingest = new IngestOptions();
        var monitor = new MonitorOptions();
        Assert.True(monitor.MaxStreams >= 2000);
        foreach (var (channels, rateHz) in new[] { (32, 500.0), (64, 1000.0) })
        {
            Assert.True(channels <= ingest.MaxChannels);
            Assert.True(rateHz <= ingest.MaxSampleRateHz);
            var samples = (int)(rateHz / 2);
            Assert.True(samples <= ingest.MaxChunkSamples);
            Assert.True(Some.Utf8(Header("room-0001", rateHz, channels, "uV")).Length <= ingest.MaxHeaderBytes);
            Assert.True(4L * channels * samples <= ingest.MaxMessageBytes);
        }
    }

    private static long Handled(IngestHarness harness)
    {
        var streams = harness.Counters.Snapshot().Sum(s => s.Accepted + s.Dropped + s.RejectedTotal);
        var origins = harness.Counters.UnattributedRejections().Sum(o => o.Rejected.Values.Sum() + o.DroppedByReason.Values.Sum());
        return streams + origins;
    }

    private static int Warnings(IngestHarness harness) =>
        harness.ServiceLogger.Entries.Count(e => e.EventId.Id is 1102 or 1103);

    private static List<string> Summaries(IngestHarness harness) =>
        [.. harness.ServiceLogger.Entries.Where(e => e.EventId.Id == 1320).Select(e => e.Message)];

    private static string Header(string id, double rateHz, int channels, string unit)
    {
        var labels = string.Join(",", Enumerable.Range(0, channels).Select(c => $"\"E{c}\""));
        return $$"""{"v":1,"stream":"{{id}}","fs":{{rateHz.ToString(CultureInfo.InvariantCulture)}},"channels":[{{labels}}],"unit":"{{unit}}","index":0}""";
    }

    private static byte[] RandomBytes(Random random, int length)
    {
        var bytes = new byte[length];
        random.NextBytes(bytes);

        // A random first byte of '{' could by chance start valid JSON; keep the frame surely not an object.
        if (length > 0)
        {
            bytes[0] = (byte)'#';
        }
        return bytes;
    }

    private static byte[][] Frames(WireMessage message) => [message.Header, message.Samples];
}
