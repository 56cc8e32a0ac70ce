using HumWatch.Formats.Wire;
using HumWatch.Host.Ingest;
using HumWatch.Host.Tests.Ingest.Support;
using Microsoft.Extensions.Logging;
using Xunit;

namespace HumWatch.Host.Tests.Ingest;

public sealed class IngestMessageHandlingTests
{
    private const string Origin = "tcp://127.0.0.1:5999";

    [Fact]
    public async Task Full_queue_drops_and_counts_per_stream_with_one_warning_per_interval()
    {
        var options = IngestHarness.LoopbackOptions();
        options.QueueCapacity = 2;
        options.WarningInterval = TimeSpan.FromSeconds(10);
        await using var harness = new IngestHarness(options);
        var layout = Some.Layout(100, "A");

        for (var k = 0; k < 5; k++)
        {
            Handle(harness, ChunkWireCodec.Encode("busy", Some.Chunk(layout, k * 10, 10, 0)));
        }

        harness.Time.Advance(TimeSpan.FromSeconds(11));
        Handle(harness, ChunkWireCodec.Encode("busy", Some.Chunk(layout, 50, 10, 0)));

        var counts = harness.Counters.Get("busy")!;
        Assert.Equal(2, counts.Accepted);
        Assert.Equal(4, counts.Dropped);
        Assert.Equal(4, counts.DroppedFor(IngestDropReason.QueueFull));
        Assert.Equal(2, harness.Pool.RentedCount); // dropped chunks gave their arrays back
        Assert.Equal(20, counts.LastEndSampleIndex);
        var warnings = harness.QueueLogger.Entries.Where(e => e.Level == LogLevel.Warning).ToList();
        Assert.Equal(2, warnings.Count);
        Assert.Contains("busy", warnings[0].Message, StringComparison.Ordinal);
        Assert.Contains("2 more drops", warnings[1].Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task New_session_is_logged_only_when_rate_or_channels_change()
    {
        await using var harness = new IngestHarness(IngestHarness.LoopbackOptions());

        Handle(harness, ChunkWireCodec.Encode("s", Some.Chunk(Some.Layout(250, "A", "B"), 0, 5, 0)));
        Handle(harness, ChunkWireCodec.Encode("s", Some.Chunk(Some.Layout(250, "A", "B"), 5, 5, 0)));
        Handle(harness, ChunkWireCodec.Encode("s", Some.Chunk(Some.Layout(256, "A", "B"), 10, 5, 0)));
        Handle(harness, ChunkWireCodec.Encode("s", Some.Chunk(Some.Layout(256, "A", "B", "C"), 15, 5, 0)));

        Assert.Equal(3, harness.ServiceLogger.Entries.Count(e => e.EventId == 1106));
        var chunks = await harness.ReadAsync(4);
        Assert.Same(chunks[0].Chunk.Layout, chunks[1].Chunk.Layout);
        Assert.NotSame(chunks[1].Chunk.Layout, chunks[2].Chunk.Layout);
    }

    [Fact]
    public async Task Repeated_rejections_are_counted_every_time_but_logged_once_per_interval()
    {
        await using var harness = new IngestHarness(IngestHarness.LoopbackOptions());
        var header = Some.Utf8("""{"v":1,"stream":"noisy","fs":-1,"channels":["A"],"unit":"uV","index":0}""");

        for (var i = 0; i < 50; i++)
        {
            harness.Service.HandleMessage(header, new byte[4], 2, header.Length + 4, Origin);
        }

        Assert.Equal(50, harness.Counters.Get("noisy")!.RejectedFor(WireRejectReason.BadSampleRate));
        Assert.Single(harness.ServiceLogger.Entries, e => e.EventId == 1102);
    }

    [Fact]
    public async Task Spent_buffer_budget_drops_and_counts_good_chunks_until_analysis_gives_arrays_back()
    {
        var options = IngestHarness.LoopbackOptions();
        options.BufferBytes = 1024 * 1024;
        await using var harness = new IngestHarness(options);
        var layout = Some.Layout(1000, "A", "B");

        // 2 channels × 100 000 samples × 4 bytes = 800 000 bytes: one fits in 1 MiB, a second does not.
        Handle(harness, ChunkWireCodec.Encode("big", Some.Chunk(layout, 0, 100_000, 0)));
        Handle(harness, ChunkWireCodec.Encode("big", Some.Chunk(layout, 100_000, 100_000, 0)));
        Handle(harness, ChunkWireCodec.Encode("big", Some.Chunk(layout, 200_000, 100_000, 0)));
        var first = (await harness.ReadAsync(1))[0];
        first.Dispose();
        Handle(harness, ChunkWireCodec.Encode("big", Some.Chunk(layout, 300_000, 100_000, 0)));

        var counts = harness.Counters.Get("big")!;
        Assert.Equal(2, counts.Accepted);
        Assert.Equal(2, counts.DroppedFor(IngestDropReason.BufferFull));
        Assert.Equal(0, counts.RejectedTotal);
        var warning = Assert.Single(harness.ServiceLogger.Entries, e => e.EventId == 1103);
        Assert.Contains("Ingest:BufferBytes", warning.Message, StringComparison.Ordinal);
        var second = (await harness.ReadAsync(1))[0];
        Assert.Equal(300_000, second.Chunk.FirstSampleIndex);
        Assert.False(second.IsReleased);
        Assert.Equal(1, harness.Pool.RentedCount); // only the queued chunk's array is out
        second.Dispose();
        Assert.Equal(0, harness.Pool.RentedCount);
    }

    [Fact]
    public async Task A_disposed_chunk_refuses_reads_and_a_second_dispose_cannot_return_its_array_again()
    {
        await using var harness = new IngestHarness(IngestHarness.LoopbackOptions());
        Handle(harness, ChunkWireCodec.Encode("s", Some.Chunk(Some.Layout(250, "A"), 0, 10, 7)));
        var chunk = (await harness.ReadAsync(1))[0];
        var view = chunk.Chunk;
        Assert.Equal(7f, view.SamplesUv[0]);

        chunk.Dispose();

        Assert.Equal(0, harness.Pool.RentedCount);
        Assert.True(chunk.IsReleased);
        Assert.Throws<ObjectDisposedException>(() => view.SamplesUv[0]);
        Assert.Throws<ObjectDisposedException>(() => view.Channel(0)[0]);

        // The same shape again reuses the array; disposing the first chunk once more must not take it from the second.
        Handle(harness, ChunkWireCodec.Encode("s", Some.Chunk(Some.Layout(250, "A"), 10, 10, 9)));
        var next = (await harness.ReadAsync(1))[0];
        Assert.Equal(1, harness.Pool.AllocatedCount);
        chunk.Dispose();

        Assert.Equal(1, harness.Pool.RentedCount);
        Assert.Equal(9f + (10 * 0.5f), next.Chunk.SamplesUv[0]); // tag + index × 0.5, not the NaN of a returned array
        next.Dispose();
    }

    [Fact]
    public async Task A_16_MiB_header_frame_is_refused_unparsed_even_when_the_message_is_over_its_limit_too()
    {
        await using var harness = new IngestHarness(IngestHarness.LoopbackOptions());

        // A valid start naming a stream, then one label of 16 MiB: parsing it would allocate twice that.
        var header = new byte[16 << 20];
        var start = Some.Utf8("{\"v\":1,\"stream\":\"huge\",\"fs\":250,\"unit\":\"uV\",\"index\":0,\"channels\":[\"");
        start.CopyTo(header, 0);
        header.AsSpan(start.Length, header.Length - start.Length - 3).Fill((byte)'a');
        Some.Utf8("\"]}").CopyTo(header, header.Length - 3);

        var before = GC.GetAllocatedBytesForCurrentThread();
        harness.Service.HandleMessage(header, new byte[4], 2, header.Length + 4L, Origin);
        var allocated = GC.GetAllocatedBytesForCurrentThread() - before;

        var origin = Assert.Single(harness.Counters.UnattributedRejections());
        Assert.Equal(1, origin.RejectedFor(WireRejectReason.TooLarge));
        Assert.Null(harness.Counters.Get("huge"));
        var warning = Assert.Single(harness.ServiceLogger.Entries, e => e.EventId == 1102);
        Assert.Contains("over Ingest:MaxHeaderBytes (65536 bytes)", warning.Message, StringComparison.Ordinal);
        Assert.True(allocated < 64 * 1024, $"{allocated} bytes allocated to refuse a 16 MiB header");
    }

    private static void Handle(IngestHarness harness, WireMessage message) =>
        harness.Service.HandleMessage(message.Header, message.Samples, 2, message.Header.Length + message.Samples.Length, Origin);
}
