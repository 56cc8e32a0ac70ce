using System.Text.Json;
using HumWatch.Formats.Wire;
using HumWatch.Host.Security;
using HumWatch.Host.Tests.Ingest.Support;
using NetMQ;
using NetMQ.Sockets;
using Xunit;

namespace HumWatch.Host.Tests.Ingest;

/// <summary>Interop with a peer that is not NetMQ: Debian python3-zmq 24.0.1 on libzmq 4.3.4, running the committed scripts.</summary>
[Collection(IngestSocketCollection.Name)]
public sealed class PythonInteropTests
{
    [PythonPeerFact]
    public async Task Chunks_pushed_by_pyzmq_arrive_and_its_broken_message_is_counted()
    {
        await using var harness = new IngestHarness(IngestHarness.LoopbackOptions());
        await harness.StartAsync();

        var run = await PythonPeer.RunAsync("push_chunk.py",
            "--endpoint", harness.Endpoint, "--stream", "py-room", "--fs", "256", "--channels", "3",
            "--samples", "64", "--chunks", "4", "--unit", "mV", "--start-index", "512", "--t0", "2025-03-01T08:00:00Z", "--bad", "nonfinite");

        Assert.True(run.ExitCode == 0, run.Error);
        var chunks = await harness.ReadAsync(4);
        for (var k = 0; k < chunks.Count; k++)
        {
            var chunk = chunks[k].Chunk;
            var first = 512 + (k * 64);
            Assert.Equal("py-room", chunks[k].StreamId);
            Assert.Equal(first, chunk.FirstSampleIndex);
            Assert.Equal(new DateTimeOffset(2025, 3, 1, 8, 0, 0, TimeSpan.Zero).AddSeconds(k * 64 / 256.0), chunk.StartUtc);
            for (var c = 0; c < 3; c++)
            {
                var samples = chunk.Channel(c);
                for (var i = 0; i < 64; i++)
                {
                    // push_chunk.py signal: 10 µV · sin(2π·50·n/fs) + channel, sent as float32 mV
                    var expected = (10.0 * Math.Sin(2.0 * Math.PI * 50.0 * (first + i) / 256.0)) + c;
                    Assert.True(Math.Abs(expected - samples[i]) <= 1e-5, $"chunk {k} channel {c} sample {i}: {expected} vs {samples[i]}");
                }
            }
        }

        await IngestHarness.WaitUntilAsync(() => harness.Counters.Get("py-room")?.RejectedFor(WireRejectReason.NonFiniteSample) == 1, "the NaN message to be counted");
        Assert.Equal(4, harness.Counters.Get("py-room")!.Accepted);
    }

    [PythonPeerFact]
    public async Task Pyzmq_client_with_the_server_public_key_gets_through_a_CURVE_socket()
    {
        using var temp = new TempFolder();
        var keyFile = Path.Combine(temp.Path, "server.key");
        var server = CurveKeyFile.Create(keyFile);
        await using var harness = new IngestHarness(IngestHarness.LoopbackOptions(e => e.Curve = new() { ServerKeyFile = keyFile }));
        await harness.StartAsync();

        var run = await PythonPeer.RunAsync("push_chunk.py",
            "--endpoint", harness.Endpoint, "--stream", "py-curve", "--chunks", "2", "--server-key=" + server.PublicKeyZ85); // "=" form: a Z85 key may start with '-', which argparse would take for an option

        Assert.True(run.ExitCode == 0, run.Error);
        var chunks = await harness.ReadAsync(2);
        Assert.All(chunks, c => Assert.Equal("py-curve", c.StreamId));
    }

    [PythonPeerFact]
    public async Task Subscribe_script_prints_each_multipart_message_as_a_json_line()
    {
        using var publisher = new PublisherSocket();
        publisher.Options.Linger = TimeSpan.Zero;
        var port = publisher.BindRandomPort("tcp://127.0.0.1");
        using var process = PythonPeer.Start("subscribe.py", $"tcp://127.0.0.1:{port}", "--count", "2", "--timeout", "30", "--prefix", "status/");
        var output = process.StandardOutput.ReadToEndAsync();
        var error = process.StandardError.ReadToEndAsync();

        // PUB drops messages until the subscription has arrived: publish (bounded) until the script has its two.
        await IngestHarness.WaitUntilAsync(() =>
        {
            publisher.SendMoreFrame("other/room-a").SendFrame("{}");
            publisher.SendMoreFrame("status/room-a").SendMoreFrame("""{"schema":1,"ok":true}""").SendFrame([0xFF, 0x00]);
            return process.HasExited;
        }, "subscribe.py to exit");

        Assert.True(process.ExitCode == 0, await error);
        var lines = (await output).Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.Equal(2, lines.Length);
        using var line = JsonDocument.Parse(lines[0]);
        var frames = line.RootElement.GetProperty("frames");
        Assert.Equal(3, frames.GetArrayLength());
        Assert.Equal("status/room-a", frames[0].GetProperty("text").GetString());
        Assert.True(frames[1].GetProperty("json").GetProperty("ok").GetBoolean());
        Assert.Equal(Convert.ToBase64String([0xFF, 0x00]), frames[2].GetProperty("base64").GetString());
    }
}
