using HumWatch.Core.Signals;
using HumWatch.Formats.Wire;
using HumWatch.Host.Composition;
using HumWatch.Host.Ingest;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Tests.EndToEnd;
using HumWatch.Host.Tests.Ingest;
using HumWatch.Host.Tests.Ingest.Support;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging.Abstractions;
using Microsoft.Extensions.Time.Testing;
using Xunit;

namespace HumWatch.Host.Tests.Monitoring;

/// <summary>
/// Every path a pooled chunk can take from the decoder to the analysis gives its array back exactly once: a counting
/// pool records each return, so a missed release and a double one both fail.
/// </summary>
[Collection(IngestSocketCollection.Name)]
public sealed class ChunkReleaseTests
{
    private static readonly StreamLayout Layout = Some.Layout(250, "A", "B");

    [Fact]
    public async Task Analysed_chunks_are_returned_once_each_by_the_monitor()
    {
        var pool = new CountingSamplePool();
        using var harness = new SessionHarness();
        var monitor = harness.Monitor("room-n");
        for (var k = 0; k < 8; k++)
        {
            Assert.True(monitor.TryPost(pool.Chunk("room-n", Layout, k * 125L), out _));
        }

        await monitor.DisposeAsync(); // the worker finishes what is queued

        pool.AssertEachReturnedOnce(8);
    }

    [Fact]
    public async Task A_chunk_whose_session_cannot_start_is_still_returned_once()
    {
        var pool = new CountingSamplePool();
        using var harness = new SessionHarness();
        await using var monitor = harness.Monitor("room-e");

        // 1 Hz cannot hold a Welch segment of the default length, so the analyser refuses the layout.
        var chunk = pool.Chunk("room-e", Some.Layout(1, "A"), 0, samplesPerChannel: 4);
        var error = Record.Exception(() => monitor.Process(StreamMonitor.MonitorItem.ForChunk(chunk)));

        Assert.IsType<ArgumentOutOfRangeException>(error, exactMatch: false);
        Assert.False(monitor.IsOpen);
        Assert.True(chunk.IsReleased);
        pool.AssertEachReturnedOnce(1);
    }

    [Fact]
    public async Task A_monitor_that_refuses_a_chunk_leaves_it_with_the_caller()
    {
        var pool = new CountingSamplePool();
        using var harness = new SessionHarness();
        var monitor = harness.Monitor("room-c");
        await monitor.DisposeAsync();
        var chunk = pool.Chunk("room-c", Layout, 0);

        Assert.False(monitor.TryPost(chunk, out var reason));

        Assert.Equal(IngestDropReason.ShuttingDown, reason);
        Assert.False(chunk.IsReleased); // the router disposes what no monitor takes
        chunk.Dispose();
        pool.AssertEachReturnedOnce(1);
    }

    [Fact]
    public void A_full_ingest_queue_returns_each_chunk_it_drops_once()
    {
        var pool = new CountingSamplePool();
        var counters = new IngestCounters();
        var queue = new IngestQueue(2, counters, new RecordingLogger<IngestQueue>(), new FakeTimeProvider(), TimeSpan.FromSeconds(10));

        var queued = Enumerable.Range(0, 5).Select(k => queue.TryEnqueue(pool.Chunk("busy", Layout, k * 125L))).ToList();

        Assert.Equal([true, true, false, false, false], queued);
        Assert.Equal(3, pool.RentalCount - pool.OutstandingCount);
        while (queue.Reader.TryRead(out var chunk))
        {
            chunk.Dispose();
        }

        pool.AssertEachReturnedOnce(5);
        Assert.Equal(3, counters.Get("busy")!.DroppedFor(IngestDropReason.QueueFull));
    }

    [Fact]
    public async Task Chunks_over_the_stream_limit_queued_at_a_stop_and_after_it_are_returned_once_each()
    {
        var pool = new CountingSamplePool();
        using var temp = new TempFolder();
        using var host = Build(temp.Path, new Dictionary<string, string?> { ["Monitor:MaxStreams"] = "1" });
        var queue = host.Services.GetRequiredService<IngestQueue>();
        var monitors = host.Services.GetRequiredService<StreamMonitorService>();
        await monitors.StartAsync(CancellationToken.None);
        for (var k = 0; k < 5; k++)
        {
            Assert.True(queue.TryEnqueue(pool.Chunk("kept", Layout, k * 125L)));
            Assert.True(queue.TryEnqueue(pool.Chunk("extra", Layout, k * 125L)));
        }

        // Stopping cancels the router part-way: what it has not routed yet is drained and routed by the stop.
        await monitors.StopAsync(CancellationToken.None);
        Assert.False(queue.TryEnqueue(pool.Chunk("kept", Layout, 5 * 125L)));

        pool.AssertEachReturnedOnce(11);
        var counters = host.Services.GetRequiredService<IngestCounters>();
        Assert.Equal(5, counters.Get("extra")!.DroppedFor(IngestDropReason.TooManyStreams));
        Assert.Equal(1, counters.Get("kept")!.DroppedFor(IngestDropReason.ShuttingDown));
    }

    [Fact]
    public void A_message_found_bad_after_its_array_was_rented_returns_it_once()
    {
        var pool = new CountingSamplePool();
        var bad = ChunkWireCodec.Encode("lab-1", new SampleChunk(Layout, 0, 2, [1, 2, float.PositiveInfinity, 4]));
        var good = ChunkWireCodec.Encode("lab-1", new SampleChunk(Layout, 2, 2, [1, 2, 3, 4]));

        var rejected = ChunkWireCodec.Decode(bad.Header, bad.Samples, pool: pool);
        var accepted = ChunkWireCodec.Decode(good.Header, good.Samples, pool: pool);
        Assert.True(rejected.IsRejected);
        Assert.True(accepted.IsSuccess);
        Assert.Equal(1, pool.OutstandingCount);
        accepted.Samples.Dispose();

        pool.AssertEachReturnedOnce(2);
    }

    private static IHost Build(string folder, IReadOnlyDictionary<string, string?> extra)
    {
        var settings = ServiceUnderTest.Settings(folder);
        foreach (var (key, value) in extra)
        {
            settings[key] = value;
        }

        return HumWatchHost.Build(new HumWatchHostSettings { Sources = HumWatch.Host.Configuration.SettingsSources.Isolated(settings) });
    }
}
