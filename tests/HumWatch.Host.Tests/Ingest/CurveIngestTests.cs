using HumWatch.Formats.Wire;
using HumWatch.Host.Ingest;
using HumWatch.Host.Security;
using HumWatch.Host.Tests.Ingest.Support;
using NetMQ;
using NetMQ.Monitoring;
using NetMQ.Sockets;
using Xunit;

namespace HumWatch.Host.Tests.Ingest;

[Collection(IngestSocketCollection.Name)]
public sealed class CurveIngestTests
{
    [Fact]
    public async Task Client_that_knows_the_server_key_is_accepted_and_clients_with_an_unknown_key_or_no_CURVE_are_not()
    {
        using var temp = new TempFolder();
        var keyFile = Path.Combine(temp.Path, "ingest.key");
        var server = CurveKeyFile.Create(keyFile);
        await using var harness = new IngestHarness(IngestHarness.LoopbackOptions(e => e.Curve = new IngestCurveOptions { ServerKeyFile = keyFile }));
        await harness.StartAsync();
        var layout = Some.Layout(250, "Pz");

        // Wrong server key: the CURVE handshake fails, the connection is dropped, nothing is delivered.
        using var unknown = new PushSocket();
        unknown.Options.Linger = TimeSpan.Zero;
        unknown.Options.CurveServerKey = new NetMQCertificate().PublicKey;
        unknown.Options.CurveCertificate = new NetMQCertificate();
        await ConnectExpectingDisconnect(unknown, harness.Endpoint);
        unknown.SendMultipartBytes(SocketIngestServiceTests.Frames(ChunkWireCodec.Encode("intruder", Some.Chunk(layout, 0, 10, 0))));

        // No CURVE at all: refused by the server's security mechanism.
        using var plain = new PushSocket();
        plain.Options.Linger = TimeSpan.Zero;
        await ConnectExpectingDisconnect(plain, harness.Endpoint);
        plain.SendMultipartBytes(SocketIngestServiceTests.Frames(ChunkWireCodec.Encode("plain", Some.Chunk(layout, 0, 10, 0))));

        using var trusted = new PushSocket();
        trusted.Options.Linger = TimeSpan.FromSeconds(5);
        trusted.Options.CurveServerKey = server.PublicKey;
        trusted.Options.CurveCertificate = new NetMQCertificate();
        trusted.Connect(harness.Endpoint);
        trusted.SendMultipartBytes(SocketIngestServiceTests.Frames(ChunkWireCodec.Encode("trusted", Some.Chunk(layout, 0, 10, 0))));

        var chunk = Assert.Single(await harness.ReadAsync(1));
        Assert.Equal("trusted", chunk.StreamId);
        Assert.Null(harness.Counters.Get("intruder"));
        Assert.Null(harness.Counters.Get("plain"));
        Assert.Equal(0, harness.Queue.Count);
    }

    [Fact]
    public async Task Missing_key_file_stops_startup_naming_the_key()
    {
        using var temp = new TempFolder();
        var missing = Path.Combine(temp.Path, "absent.key");
        await using var harness = new IngestHarness(IngestHarness.LoopbackOptions(e => e.Curve = new IngestCurveOptions { ServerKeyFile = missing }));

        var ex = await Assert.ThrowsAsync<StartFailureException>(() => harness.Service.StartAsync(CancellationToken.None));

        Assert.Contains("Ingest:Endpoints:0:Curve:ServerKeyFile", ex.Message, StringComparison.Ordinal);
        Assert.Contains(missing, ex.Message, StringComparison.Ordinal);
    }

    /// <summary>Connects and waits (bounded) until the server drops the connection during the handshake.</summary>
    private static async Task ConnectExpectingDisconnect(NetMQSocket socket, string endpoint)
    {
        var disconnected = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
        using var monitor = new NetMQMonitor(socket, $"inproc://monitor-{Guid.NewGuid():N}", SocketEvents.Disconnected);
        monitor.Disconnected += (_, _) => disconnected.TrySetResult();
        var running = monitor.StartAsync();
        socket.Connect(endpoint);
        var finished = await Task.WhenAny(disconnected.Task, Task.Delay(TimeSpan.FromSeconds(30)));
        monitor.Stop();
        await running;
        Assert.True(finished == disconnected.Task, "The server never dropped the unauthenticated connection.");
    }
}
