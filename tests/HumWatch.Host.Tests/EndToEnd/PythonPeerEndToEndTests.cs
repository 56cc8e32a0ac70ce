using System.Text.Json;
using HumWatch.Host.Tests.Ingest;
using HumWatch.Host.Tests.Ingest.Support;
using Xunit;

namespace HumWatch.Host.Tests.EndToEnd;

/// <summary>
/// A peer that is not NetMQ — Debian's python3-zmq (libzmq) running the committed scripts that follow docs/protocol.md —
/// pushes a stream into the real service and subscribes to what it publishes.
/// </summary>
[Collection(IngestSocketCollection.Name)]
public sealed class PythonPeerEndToEndTests
{
    [PythonPeerFact]
    public async Task A_pyzmq_acquisition_peer_pushes_a_50_Hz_stream_and_a_pyzmq_subscriber_receives_the_mains_alert()
    {
        using var temp = new TempFolder();
        await using var service = await ServiceUnderTest.StartAsync(temp.Path);
        using var subscriber = PythonPeer.Start("subscribe.py", service.PublishEndpoint, "--count", "100000", "--timeout", "120");
        var lines = new List<JsonElement>();
        var reading = Task.Run(async () =>
        {
            while (await subscriber.StandardOutput.ReadLineAsync() is { } line)
            {
                lock (lines)
                {
                    lines.Add(JsonDocument.Parse(line).RootElement.Clone());
                }
            }
        });

        try
        {
            // Handshake: one chunk at a time until the subscriber hears the stream's first status.
            var index = 0;
            while (!Seen(lines, "status/py-e2e"))
            {
                Assert.True(index < 250 * 60, "the pyzmq subscriber never heard a status message");
                await Push(service.IngestEndpoint, index, chunks: 1);
                index += 250;
                await Task.Delay(200);
            }

            // 60 s more of the script's signal: 10 µV peak at 50 Hz on 4 channels (push_chunk.py's docstring).
            await Push(service.IngestEndpoint, index, chunks: 60);
            await IngestHarness.WaitUntilAsync(() => Seen(lines, "alert/py-e2e"), "the alert at the pyzmq subscriber", 60);

            var alert = Body(lines, "alert/py-e2e");
            Assert.Equal("mains", alert.GetProperty("source").GetString());
            Assert.Equal(1, alert.GetProperty("harmonic").GetInt32());
            Assert.Equal(50.0, alert.GetProperty("frequencyHz").GetDouble(), 0.05);

            // A sinusoid of peak amplitude A has RMS A/√2 (handbook formula): 10 µV peak → 7.07 µV RMS.
            Assert.Equal(10 / Math.Sqrt(2), alert.GetProperty("amplitudeUvRms").GetDouble(), 0.35);
        }
        finally
        {
            subscriber.Kill(entireProcessTree: true);
            await reading;
        }
    }

    private static async Task Push(string endpoint, int startIndex, int chunks)
    {
        var run = await PythonPeer.RunAsync("push_chunk.py", "--endpoint", endpoint, "--stream", "py-e2e", "--fs", "250",
            "--channels", "4", "--samples", "250", "--chunks", chunks.ToString(System.Globalization.CultureInfo.InvariantCulture),
            "--start-index", startIndex.ToString(System.Globalization.CultureInfo.InvariantCulture));
        Assert.True(run.ExitCode == 0, run.Error);
    }

    private static bool Seen(List<JsonElement> lines, string topic)
    {
        lock (lines)
        {
            return lines.Any(l => Topic(l) == topic);
        }
    }

    private static JsonElement Body(List<JsonElement> lines, string topic)
    {
        lock (lines)
        {
            return lines.First(l => Topic(l) == topic).GetProperty("frames")[1].GetProperty("json");
        }
    }

    private static string? Topic(JsonElement line) => line.GetProperty("frames")[0].GetProperty("text").GetString();
}
