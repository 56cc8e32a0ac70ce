using HumWatch.Core.Findings;
using HumWatch.Core.Signals;
using HumWatch.Formats.Wire;
using HumWatch.Host.Composition;
using HumWatch.Host.Ingest;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Tests.EndToEnd;
using HumWatch.Host.Tests.Ingest.Support;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.DependencyInjection.Extensions;
using Microsoft.Extensions.Hosting;
using Xunit;

namespace HumWatch.Host.Tests.Ingest;

/// <summary>Decoded chunks rent pooled sample arrays; every path gives each back exactly once and never while in use.</summary>
[Collection(IngestSocketCollection.Name)]
public sealed class PooledChunkOwnershipTests
{
    [Fact]
    public async Task Pooled_arrays_are_reused_only_after_analysis_so_poisoned_returns_never_reach_a_frame()
    {
        using var temp = new TempFolder();
        var pool = new SampleBufferPool(8L * 1024 * 1024, poisonReturned: true);
        await using var service = await StartAsync(temp.Path, pool);
        using var messages = new MessageCollector(service.PublishEndpoint);
        using var pusher = new RoomPusher(service.IngestEndpoint);
        string[] names = ["pool-a", "pool-b"];
        var rooms = new[] { Rooms.WithMains(names[0], onSeconds: 0, offSeconds: null), Rooms.WithMains(names[1], onSeconds: 0, offSeconds: null, seed: 6) };
        await ServiceEndToEndTests.PushFirstAndWaitForStatus(pusher, messages, "pool-a", rooms[0]);
        var counters = service.Host.Services.GetRequiredService<IngestCounters>();

        // Two rounds with a pause between, so the second round can only be served by arrays the first gave back.
        var pushedChunks = Accepted(counters);
        long roundChunks = 0;
        for (var round = 0; round < 2; round++)
        {
            for (var r = 0; r < rooms.Length; r++)
            {
                pusher.Push(names[r], rooms[r], seconds: 15);
                pushedChunks += 30;
                roundChunks += 30;
            }

            await IngestHarness.WaitUntilAsync(() => Accepted(counters) >= pushedChunks && pool.RentedCount == 0, "every chunk analysed and returned");
        }

        var raised = await messages.WaitForAsync((t, b) => t == "alert/pool-b" && b.TryGetProperty("source", out var s) && s.GetString() == "mains", "the mains alert of pool-b");

        Assert.InRange(raised.Body.GetProperty("amplitudeUvRms").GetDouble(), 8 * 0.85, 8 * 1.15); // simulated 8 µV RMS on every channel
        var alerts = service.Store.Alerts.Between(Rooms.Start.AddYears(-30), Rooms.Start.AddYears(30));
        Assert.DoesNotContain(alerts, a => a.Key.Category == FindingCategory.ChannelFault); // NaN poison would show as non-finite samples
        Assert.True(pool.AllocatedCount < roundChunks, $"{pool.AllocatedCount} arrays allocated for {roundChunks} chunks: nothing was reused");
        Assert.Equal(0, counters.Snapshot().Sum(c => c.Dropped));
    }

    [Fact]
    public async Task Chunks_of_a_stream_over_the_limit_and_chunks_left_in_the_queue_at_stop_are_all_released()
    {
        using var temp = new TempFolder();
        var pool = new SampleBufferPool(8L * 1024 * 1024, poisonReturned: true);
        using var host = Build(temp.Path, pool, new Dictionary<string, string?> { ["Monitor:MaxStreams"] = "1" });
        var queue = host.Services.GetRequiredService<IngestQueue>();
        var counters = host.Services.GetRequiredService<IngestCounters>();
        var monitors = host.Services.GetRequiredService<StreamMonitorService>();
        var layout = Some.Layout(250, "A", "B");

        // Never started: everything stays in the ingest queue until the stop drains it.
        for (var k = 0; k < 6; k++)
        {
            Assert.True(queue.TryEnqueue(Pooled(pool, "kept", layout, k)));
            Assert.True(queue.TryEnqueue(Pooled(pool, "extra", layout, k)));
        }

        Assert.Equal(12, pool.RentedCount);
        await monitors.StopAsync(CancellationToken.None);
        var late = Pooled(pool, "kept", layout, 6);
        var queuedAfterStop = queue.TryEnqueue(late);

        Assert.Equal(0, pool.RentedCount);
        Assert.False(queuedAfterStop);
        Assert.Equal(6, counters.Get("extra")!.DroppedFor(IngestDropReason.TooManyStreams));
        Assert.Equal(1, counters.Get("kept")!.DroppedFor(IngestDropReason.ShuttingDown));
        Assert.Equal(0, counters.Get("kept")!.DroppedFor(IngestDropReason.TooManyStreams));
    }

    private static StreamChunk Pooled(SampleBufferPool pool, string streamId, StreamLayout layout, int k)
    {
        const int Samples = 125;
        return new StreamChunk(streamId, SampleChunkOwner.CopyOf(Some.Chunk(layout, k * Samples, Samples, 1), pool), "test");
    }

    private static long Accepted(IngestCounters counters) => counters.Snapshot().Sum(c => c.Accepted);

    private static IHost Build(string folder, SampleBufferPool pool, IReadOnlyDictionary<string, string?>? extra = null)
    {
        var settings = ServiceUnderTest.Settings(folder);
        foreach (var (key, value) in extra ?? new Dictionary<string, string?>())
        {
            settings[key] = value;
        }

        return HumWatchHost.Build(new HumWatchHostSettings
        {
            Sources = HumWatch.Host.Configuration.SettingsSources.Isolated(settings),
            ConfigureServices = (services, _) => services.TryAddSingleton(pool),
        });
    }

    private static async Task<ServiceUnderTest> StartAsync(string folder, SampleBufferPool pool) =>
        await ServiceUnderTest.StartAsync(folder, configureServices: (services, _) => services.TryAddSingleton(pool));
}
