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
    public async Task With_an_allow_list_only_a_sender_proving_a_listed_client_key_is_accepted()
    {
        using var temp = new TempFolder();
        var keyFile = Path.Combine(temp.Path, "ingest.key");
        var server = CurveKeyFile.Create(keyFile);
        var listed = new NetMQCertificate();
        var unlisted = new NetMQCertificate();
        var allowFile = temp.WriteText("senders.keys", $"# ward 3 amplifier PC\n{listed.PublicKeyZ85}   # added by the lab\n\n");
        await using var harness = new IngestHarness(IngestHarness.LoopbackOptions(e =>
            e.Curve = new IngestCurveOptions { ServerKeyFile = keyFile, AllowedClientKeysFile = allowFile }));
        await harness.StartAsync();
        var layout = Some.Layout(250, "Pz");

        // Both senders pass the CURVE handshake (they know the server key); only the message check tells them apart.
        using var stranger = CurvePush(unlisted, server, harness.Endpoint);
        stranger.SendMultipartBytes([.. Frames("stranger", layout), ClientKeyProof.Create(unlisted, server.PublicKey)]);

        // Claims the listed public key but cannot make its box without the listed secret key.
        var forged = ClientKeyProof.Create(unlisted, server.PublicKey);
        listed.PublicKey.CopyTo(forged, 0);
        stranger.SendMultipartBytes([.. Frames("forger", layout), forged]);

        // A sender that knows nothing of the allow-list sends the plain two frames.
        stranger.SendMultipartBytes(Frames("unproved", layout));

        using var member = CurvePush(listed, server, harness.Endpoint);
        member.SendMultipartBytes([.. Frames("member", layout), ClientKeyProof.Create(listed, server.PublicKey)]);

        var chunk = Assert.Single(await harness.ReadAsync(1));
        Assert.Equal("member", chunk.StreamId);
        await IngestHarness.WaitUntilAsync(() => harness.Service.ClientKeyRefusals == 3, "three refused messages");
        Assert.Null(harness.Counters.Get("stranger"));
        Assert.Null(harness.Counters.Get("forger"));
        Assert.Null(harness.Counters.Get("unproved"));
        // The ingest thread counts a chunk just after it queues it, so the reader can see the chunk first.
        await IngestHarness.WaitUntilAsync(() => harness.Counters.Get("member")?.Accepted == 1, "the member's chunk counted");
        Assert.Equal(0, harness.Queue.Count);

        // Refusals are logged once per warning interval with a running count (the fake clock does not move here).
        var refusal = Assert.Single(harness.ServiceLogger.Entries, e => e.EventId.Id == 1201);
        Assert.Contains("Ingest:Endpoints:0:Curve:AllowedClientKeysFile", refusal.Message, StringComparison.Ordinal);
        Assert.Contains(harness.ServiceLogger.Entries, e => e.EventId.Id == 1202 && e.Message.Contains(allowFile, StringComparison.Ordinal));
    }

    [Fact]
    public async Task A_bad_allow_list_or_an_open_server_key_file_stops_startup_naming_the_setting_and_the_file()
    {
        using var temp = new TempFolder();
        var keyFile = Path.Combine(temp.Path, "ingest.key");
        CurveKeyFile.Create(keyFile);
        var allowFile = temp.WriteText("senders.keys", "# nothing yet\nnot-a-key\n");
        await using (var harness = new IngestHarness(IngestHarness.LoopbackOptions(e =>
            e.Curve = new IngestCurveOptions { ServerKeyFile = keyFile, AllowedClientKeysFile = allowFile })))
        {
            var ex = await Assert.ThrowsAsync<StartFailureException>(() => harness.Service.StartAsync(CancellationToken.None));
            Assert.Contains("Ingest:Endpoints:0:Curve:AllowedClientKeysFile", ex.Message, StringComparison.Ordinal);
            Assert.Contains($"'{allowFile}' line 2", ex.Message, StringComparison.Ordinal);
        }

        if (OperatingSystem.IsWindows())
        {
            return; // no Unix mode bits to check
        }

        File.SetUnixFileMode(keyFile, UnixFileMode.UserRead | UnixFileMode.UserWrite | UnixFileMode.OtherRead);
        await using (var harness = new IngestHarness(IngestHarness.LoopbackOptions(e => e.Curve = new IngestCurveOptions { ServerKeyFile = keyFile })))
        {
            var ex = await Assert.ThrowsAsync<StartFailureException>(() => harness.Service.StartAsync(CancellationToken.None));
            Assert.Contains("Ingest:Endpoints:0:Curve:ServerKeyFile", ex.Message, StringComparison.Ordinal);
            Assert.Contains("mode 0604", ex.Message, StringComparison.Ordinal);
            Assert.Contains($"chmod 600 {keyFile}", ex.Message, StringComparison.Ordinal);
        }
    }

    [Fact]
    public async Task An_off_host_endpoint_with_the_insecure_flag_starts_and_warns_once()
    {
        // Connect mode to a TEST-NET-1 address (RFC 5737, never routed): ZeroMQ connects in the background, so the
        // socket opens without anything listening and nothing here is reachable from other hosts.
        var options = new IngestOptions();
        options.Endpoints.Add(new IngestEndpointOptions { Address = "tcp://192.0.2.1:5710", Mode = IngestSocketMode.Connect, AllowInsecureRemote = true });
        await using var harness = new IngestHarness(options);

        await harness.StartAsync();

        var warning = Assert.Single(harness.ServiceLogger.Entries, e => e.Level == Microsoft.Extensions.Logging.LogLevel.Warning);
        Assert.Equal(1200, warning.EventId.Id);
        Assert.Contains("tcp://192.0.2.1:5710", warning.Message, StringComparison.Ordinal);
        Assert.Contains("Ingest:Endpoints:0:AllowInsecureRemote", warning.Message, StringComparison.Ordinal);
        Assert.Contains("Ingest:Endpoints:0:Curve:ServerKeyFile", warning.Message, StringComparison.Ordinal);
    }

    private static PushSocket CurvePush(NetMQCertificate client, NetMQCertificate server, string endpoint)
    {
        var push = new PushSocket();
        push.Options.Linger = TimeSpan.FromSeconds(5);
        push.Options.CurveServerKey = server.PublicKey;
        push.Options.CurveCertificate = client;
        push.Connect(endpoint);
        return push;
    }

    private static byte[][] Frames(string streamId, HumWatch.Core.Signals.StreamLayout layout) =>
        SocketIngestServiceTests.Frames(ChunkWireCodec.Encode(streamId, Some.Chunk(layout, 0, 10, 0)));

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
