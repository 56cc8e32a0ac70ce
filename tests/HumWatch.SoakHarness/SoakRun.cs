using System.Diagnostics;
using System.Net;
using System.Net.Sockets;
using HumWatch.Formats.Wire;
using HumWatch.KillHarness;
using NetMQ;
using NetMQ.Sockets;

namespace HumWatch.SoakHarness;

/// <summary>
/// Streams the rooms to the real program for the run's wall time, paced to its speed, and samples the service process
/// every <see cref="SoakOptions.SampleSeconds"/>.
/// </summary>
internal sealed class SoakRun
{
    private readonly SoakOptions _options;
    private readonly TextWriter _progress;

    public SoakRun(SoakOptions options, TextWriter progress)
    {
        _options = options;
        _progress = progress;
    }

    public async Task<SoakOutcome> PlayAsync(string dataFolder, string curvePath, CancellationToken cancel)
    {
        Directory.CreateDirectory(dataFolder);
        var ingestPort = FreePort();
        var publishPort = FreePort();
        var startUtc = DateTimeOffset.UtcNow;
        var rooms = Enumerable.Range(0, _options.Rooms).Select(r => SoakRooms.Create(_options, r, startUtc)).ToArray();
        var samplesPerChunk = (int)Math.Round(SoakRooms.ChunkSeconds * _options.SampleRateHz);
        var totalChunks = (long)(_options.Minutes * 60 * _options.Speed / SoakRooms.ChunkSeconds);
        var samples = new List<ProcessSample>();

        using var status = new StatusListener($"tcp://127.0.0.1:{publishPort}");
        using var service = await ServiceProcess.StartAsync(dataFolder, ingestPort, publishPort, Path.Combine(dataFolder, "service-output.log"), cancel);
        await using var curve = new StreamWriter(curvePath) { AutoFlush = true };
        await curve.WriteLineAsync(ProcessSample.CsvHeader);
        long sent = 0;
        var exitCode = -1;
        try
        {
            using var push = new PushSocket();
            push.Options.Linger = TimeSpan.Zero;
            push.Options.SendHighWatermark = 100_000;
            push.Connect($"tcp://127.0.0.1:{ingestPort}");
            var wall = Stopwatch.StartNew();
            var nextSample = 0.0;
            for (var chunk = 0L; chunk < totalChunks; chunk++)
            {
                var wait = (chunk * SoakRooms.ChunkSeconds / _options.Speed) - wall.Elapsed.TotalSeconds;
                if (wait > 0)
                {
                    await Task.Delay(TimeSpan.FromSeconds(wait), cancel);
                }

                if (service.HasExited)
                {
                    throw new InvalidOperationException($"humwatch run exited during the soak at {wall.Elapsed.TotalMinutes:0.0} min; see {dataFolder}/service-output.log");
                }

                foreach (var (room, r) in rooms.Select((room, r) => (room, r)))
                {
                    var message = ChunkWireCodec.Encode(SoakRooms.StreamId(r), room.Next(samplesPerChunk));
                    push.SendMoreFrame(message.Header).SendFrame(message.Samples);
                    sent++;
                }

                if (wall.Elapsed.TotalSeconds >= nextSample)
                {
                    var sample = ProcessSample.Take(service.Id, wall.Elapsed.TotalSeconds, sent, status.Totals());
                    samples.Add(sample);
                    await curve.WriteLineAsync(sample.ToCsv());
                    _progress.WriteLine($"  {sample.WallSeconds / 60,6:0.0} min  {sample.WorkingSetMiB,7:0.0} MiB  {sample.Threads} threads  {sample.Handles} handles  {sample.Sockets} sockets  accepted {sample.Status.ChunksAccepted}/{sent}  dropped {sample.Status.ChunksDropped}");
                    nextSample += _options.SampleSeconds;
                }
            }

            // The last chunks reach the service and its status messages (every 1 s) catch up.
            var settle = Stopwatch.StartNew();
            while (status.Totals().ChunksAccepted + status.Totals().ChunksDropped + status.Totals().ChunksRejected < sent && settle.Elapsed < TimeSpan.FromSeconds(30))
            {
                await Task.Delay(500, cancel);
            }

            await Task.Delay(TimeSpan.FromSeconds(2), cancel);
            var final = status.Totals();
            var alerts = status.AlertMessages;
            exitCode = await service.StopAsync(TimeSpan.FromSeconds(60));
            return new SoakOutcome(samples, sent, final, alerts, exitCode, wall.Elapsed);
        }
        finally
        {
            service.Kill();
        }
    }

    private static int FreePort()
    {
        using var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        return ((IPEndPoint)listener.LocalEndpoint).Port;
    }
}
