using HumWatch.Formats.Wire;
using HumWatch.Simulation;
using Microsoft.Extensions.Hosting;
using NetMQ;
using NetMQ.Sockets;

namespace HumWatch.Cli.Demo;

/// <summary>
/// Streams simulated rooms to the service's ingest socket over the real wire protocol, paced to the wall clock
/// (times <c>speed</c>), as an acquisition system would.
/// </summary>
internal sealed class DemoRoomPlayer : BackgroundService
{
    /// <summary>Chunk length, s: short enough that the service sees data arrive continuously.</summary>
    private const double ChunkSeconds = 0.25;

    private readonly IReadOnlyList<(string StreamId, RoomSimulator Simulator)> _rooms;
    private readonly string _endpoint;
    private readonly double _speed;
    private readonly TimeProvider _time;

    public DemoRoomPlayer(IReadOnlyList<(string StreamId, RoomSimulator Simulator)> rooms, string endpoint, double speed, TimeProvider time)
    {
        _rooms = rooms;
        _endpoint = endpoint;
        _speed = speed;
        _time = time;
    }

    protected override Task ExecuteAsync(CancellationToken stoppingToken) =>
        Task.Run(() => Play(stoppingToken), stoppingToken);

    private void Play(CancellationToken stoppingToken)
    {
        using var push = new PushSocket();
        push.Options.Linger = TimeSpan.Zero;
        push.Options.SendHighWatermark = 10_000;
        push.Connect(_endpoint);
        var started = _time.GetTimestamp();
        var chunkIndex = 0L;
        while (!stoppingToken.IsCancellationRequested)
        {
            // Chunk k of every room is due when k chunks' worth of simulated time has passed on the (sped-up) clock.
            var dueSeconds = chunkIndex * ChunkSeconds / _speed;
            var wait = dueSeconds - _time.GetElapsedTime(started).TotalSeconds;
            if (wait > 0)
            {
                if (stoppingToken.WaitHandle.WaitOne(TimeSpan.FromSeconds(wait)))
                {
                    return;
                }
            }

            foreach (var (streamId, simulator) in _rooms)
            {
                var samples = (int)Math.Round(ChunkSeconds * simulator.Layout.SampleRateHz);
                var chunk = simulator.Next(samples);
                var message = ChunkWireCodec.Encode(streamId, chunk);
                push.SendMoreFrame(message.Header).SendFrame(message.Samples);
            }

            chunkIndex++;
        }
    }
}
