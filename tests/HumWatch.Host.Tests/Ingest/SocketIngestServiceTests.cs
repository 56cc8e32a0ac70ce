using HumWatch.Formats.Wire;
using HumWatch.Host.Ingest;
using HumWatch.Host.Tests.Ingest.Support;
using NetMQ;
using NetMQ.Sockets;
using Xunit;

namespace HumWatch.Host.Tests.Ingest;

[Collection(IngestSocketCollection.Name)]
public sealed class SocketIngestServiceTests
{
    [Fact]
    public async Task Good_chunks_of_two_streams_arrive_in_order_while_each_bad_message_is_counted_with_its_reason()
    {
        var options = IngestHarness.LoopbackOptions();
        options.MaxMessageBytes = 64 * 1024;
        await using var harness = new IngestHarness(options);
        await harness.StartAsync();
        var layoutA = Some.Layout(250, "Fp1", "Fp2");
        var layoutB = Some.Layout(500, "C3", "Cz", "C4");
        const int ChunksPerStream = 8;
        const int Samples = 25;

        var bad = new List<(string Label, byte[][] Frames)>
        {
            ("malformed JSON", [Some.Utf8("{oops"), new byte[8]]),
            ("three frames", [.. Frames(ChunkWireCodec.Encode("room-a", Some.Chunk(layoutA, 0, 1, 0))), [1]]),
            ("one frame", [ChunkWireCodec.Encode("room-b", Some.Chunk(layoutB, 0, 1, 0)).Header]),
            ("samples not a multiple", [ChunkWireCodec.Encode("room-a", Some.Chunk(layoutA, 0, 1, 0)).Header, new byte[10]]),
            ("NaN", [ChunkWireCodec.Encode("room-b", Some.Chunk(layoutB, 0, 1, 0)).Header, [0, 0, 0xC0, 0x7F, 0, 0, 0, 0, 0, 0, 0, 0]]),
            ("version 2", [Some.Utf8("""{"v":2,"stream":"room-a","fs":250,"channels":["Fp1","Fp2"],"unit":"uV","index":0}"""), new byte[8]]),
            ("fs 0", [Some.Utf8("""{"v":1,"stream":"room-b","fs":0,"channels":["C3","Cz","C4"],"unit":"uV","index":0}"""), new byte[12]]),
            ("too large", [ChunkWireCodec.Encode("room-a", Some.Chunk(layoutA, 0, 1, 0)).Header, new byte[80 * 1024]]),
        };

        using (var push = new PushSocket())
        {
            push.Options.Linger = TimeSpan.FromSeconds(5);
            push.Connect(harness.Endpoint);
            for (var k = 0; k < ChunksPerStream; k++)
            {
                push.SendMultipartBytes(Frames(ChunkWireCodec.Encode("room-a", Some.Chunk(layoutA, k * Samples, Samples, 0.25f))));
                push.SendMultipartBytes(bad[k].Frames);
                push.SendMultipartBytes(Frames(ChunkWireCodec.Encode("room-b", Some.Chunk(layoutB, k * Samples, Samples, 0.75f), WireUnit.Millivolts)));
            }

            var received = await harness.ReadAsync(2 * ChunksPerStream);

            // The last message was good and one connection keeps order, so every bad one before it has been handled.
            AssertInOrder(received, "room-a", layoutA.ChannelCount, ChunksPerStream, Samples, 0.25f);
            AssertInOrder(received, "room-b", layoutB.ChannelCount, ChunksPerStream, Samples, 0.75f);
        }

        var a = harness.Counters.Get("room-a")!;
        var b = harness.Counters.Get("room-b")!;
        Assert.Equal(ChunksPerStream, a.Accepted);
        Assert.Equal(ChunksPerStream, b.Accepted);
        Assert.Equal(ChunksPerStream * Samples, a.LastEndSampleIndex);
        Assert.Equal(1, a.RejectedFor(WireRejectReason.WrongFrameCount));
        Assert.Equal(1, a.RejectedFor(WireRejectReason.SampleLength));
        Assert.Equal(1, a.RejectedFor(WireRejectReason.UnknownVersion));
        Assert.Equal(1, a.RejectedFor(WireRejectReason.TooLarge));
        Assert.Equal(4, a.RejectedTotal);
        Assert.Equal(1, b.RejectedFor(WireRejectReason.WrongFrameCount));
        Assert.Equal(1, b.RejectedFor(WireRejectReason.NonFiniteSample));
        Assert.Equal(1, b.RejectedFor(WireRejectReason.BadSampleRate));
        Assert.Equal(3, b.RejectedTotal);
        var unattributed = Assert.Single(harness.Counters.UnattributedRejections());
        Assert.Equal(harness.Endpoint, unattributed.Origin);
        Assert.Equal(1, unattributed.RejectedFor(WireRejectReason.MalformedJson));
        var warnings = harness.ServiceLogger.Entries.Where(e => e.EventId == 1102).Select(e => e.Message).ToList();
        Assert.Equal(bad.Count, warnings.Count);
        Assert.Contains(warnings, w => w.Contains("stream 'room-b'", StringComparison.Ordinal) && w.Contains("NonFiniteSample", StringComparison.Ordinal) && w.Contains(harness.Endpoint, StringComparison.Ordinal));
    }

    [Fact]
    public async Task Sub_socket_connects_to_a_publisher_and_receives_chunks()
    {
        using var publisher = new PublisherSocket();
        publisher.Options.Linger = TimeSpan.Zero;
        var port = publisher.BindRandomPort("tcp://127.0.0.1");
        var options = IngestHarness.LoopbackOptions(e =>
        {
            e.Address = $"tcp://127.0.0.1:{port}";
            e.Mode = IngestSocketMode.Connect;
            e.SocketType = IngestSocketType.Sub;
        });
        await using var harness = new IngestHarness(options);
        await harness.StartAsync();
        var layout = Some.Layout(200, "O1", "O2");

        // PUB drops messages until the subscription arrives, so keep publishing until one gets through (bounded).
        var index = 0L;
        await IngestHarness.WaitUntilAsync(() =>
        {
            publisher.SendMultipartBytes(Frames(ChunkWireCodec.Encode("pub-1", Some.Chunk(layout, index, 10, 0))));
            index += 10;
            return harness.Queue.Count > 0;
        }, "a chunk through SUB");

        var chunk = (await harness.ReadAsync(1))[0];
        Assert.Equal("pub-1", chunk.StreamId);
        Assert.Equal(2, chunk.Chunk.Layout.ChannelCount);
    }

    [Fact]
    public async Task Endpoint_already_in_use_stops_startup_naming_the_configuration_key()
    {
        using var squatter = new PullSocket();
        squatter.Options.Linger = TimeSpan.Zero;
        var port = squatter.BindRandomPort("tcp://127.0.0.1");
        var options = IngestHarness.LoopbackOptions(e => e.Address = $"tcp://127.0.0.1:{port}");
        await using var harness = new IngestHarness(options);

        var ex = await Assert.ThrowsAsync<StartFailureException>(() => harness.Service.StartAsync(CancellationToken.None));

        Assert.Contains("Ingest:Endpoints:0:Address", ex.Message, StringComparison.Ordinal);
        Assert.Contains($"tcp://127.0.0.1:{port} is already in use", ex.Message, StringComparison.Ordinal);
        Assert.Contains("Another HumWatch", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Stopping_closes_the_socket_so_the_port_can_be_bound_again()
    {
        var harness = new IngestHarness(IngestHarness.LoopbackOptions());
        await harness.StartAsync();
        var endpoint = harness.Endpoint;

        await harness.DisposeAsync();

        // NetMQ closes a listener on its I/O thread after Dispose returns, so retry the bind (bounded).
        using var again = new PullSocket();
        again.Options.Linger = TimeSpan.Zero;
        await IngestHarness.WaitUntilAsync(() =>
        {
            try
            {
                again.Bind(endpoint);
                return true;
            }
            catch (AddressAlreadyInUseException)
            {
                return false;
            }
        }, $"{endpoint} to be free again");
        Assert.Contains(harness.ServiceLogger.Entries, e => e.EventId == 1105);
    }

    internal static byte[][] Frames(WireMessage message) => [message.Header, message.Samples];

    private static void AssertInOrder(List<StreamChunk> received, string stream, int channels, int chunks, int samples, float tag)
    {
        var mine = received.Where(c => c.StreamId == stream).ToList();
        Assert.Equal(chunks, mine.Count);
        for (var k = 0; k < chunks; k++)
        {
            var chunk = mine[k].Chunk;
            Assert.Equal(k * samples, chunk.FirstSampleIndex);
            Assert.Same(mine[0].Chunk.Layout, chunk.Layout);
            var expected = Some.Chunk(chunk.Layout, k * samples, samples, tag).SamplesUv;
            for (var i = 0; i < channels * samples; i++)
            {
                // mV on the wire for room-b: one float32 rounding each way.
                Assert.True(Math.Abs(expected[i] - chunk.SamplesUv[i]) <= 1e-6 * Math.Max(1, Math.Abs(expected[i])), $"{stream} chunk {k} sample {i}");
            }
        }
    }
}

/// <summary>Socket tests run one class at a time: they share NetMQ's global context and the two cores.</summary>
[CollectionDefinition(Name)]
public sealed class IngestSocketCollection
{
    public const string Name = "Ingest sockets";
}
