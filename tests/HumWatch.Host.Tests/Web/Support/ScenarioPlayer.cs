using HumWatch.Formats.Wire;
using HumWatch.Simulation;
using NetMQ;
using NetMQ.Sockets;

namespace HumWatch.Host.Tests.Web.Support;

/// <summary>
/// Plays the demo's rooms (demo-streams/*.json) to the service's ingest socket: each room's stream time follows the
/// wall clock from a head start that <see cref="Advance"/> can push on at once, and a room can be stopped, as when its
/// recorder is switched off. One thread owns the socket.
/// </summary>
internal sealed class ScenarioPlayer : IDisposable
{
    private const double ChunkSeconds = 0.25;

    private readonly List<PlayedRoom> _rooms = [];
    private readonly Lock _gate = new();
    private readonly CancellationTokenSource _stop = new();
    private readonly Thread _thread;
    private readonly string _endpoint;
    private readonly DateTime _started = DateTime.UtcNow;
    private double _headStartSeconds;

    public ScenarioPlayer(string endpoint, DateTimeOffset startUtc)
    {
        _endpoint = endpoint;
        var folder = Path.Combine(AppContext.BaseDirectory, "demo-streams");
        foreach (var file in Directory.EnumerateFiles(folder, "*.json").Order(StringComparer.Ordinal))
        {
            var scenario = SimulationScenario.FromJson(File.ReadAllText(file));
            scenario.StartUtc = startUtc;
            for (var i = 0; i < scenario.Rooms.Count; i++)
            {
                _rooms.Add(new PlayedRoom(scenario.Rooms[i].Name, scenario.CreateRoom(i)));
            }
        }

        _thread = new Thread(Run) { IsBackground = true, Name = "test-scenario-player" };
        _thread.Start();
    }

    public IReadOnlyList<string> RoomNames => [.. _rooms.Select(r => r.Name)];

    /// <summary>Moves every playing room's stream time on by <paramref name="seconds"/> at once (sent as fast as the socket takes it).</summary>
    public void Advance(double seconds)
    {
        lock (_gate)
        {
            _headStartSeconds += seconds;
        }
    }

    /// <summary>The room sends nothing more.</summary>
    public void Stop(string room)
    {
        lock (_gate)
        {
            _rooms.Single(r => r.Name == room).Stopped = true;
        }
    }

    public void Dispose()
    {
        _stop.Cancel();
        _thread.Join(TimeSpan.FromSeconds(10));
        _stop.Dispose();
    }

    private void Run()
    {
        using var push = new PushSocket();
        push.Options.Linger = TimeSpan.FromSeconds(2);
        push.Options.SendHighWatermark = 100_000;
        push.Connect(_endpoint);
        while (!_stop.IsCancellationRequested)
        {
            double due;
            lock (_gate)
            {
                due = _headStartSeconds + (DateTime.UtcNow - _started).TotalSeconds;
            }

            foreach (var room in _rooms)
            {
                while (!room.Stopped && room.SentSeconds + ChunkSeconds <= due)
                {
                    var samples = (int)Math.Round(ChunkSeconds * room.Simulator.Layout.SampleRateHz);
                    var message = ChunkWireCodec.Encode(room.Name, room.Simulator.Next(samples));
                    push.SendMoreFrame(message.Header).SendFrame(message.Samples);
                    room.SentSeconds += ChunkSeconds;
                }
            }

            _stop.Token.WaitHandle.WaitOne(TimeSpan.FromMilliseconds(50));
        }
    }

    private sealed class PlayedRoom(string name, RoomSimulator simulator)
    {
        private volatile bool _stopped;

        public string Name { get; } = name;

        public RoomSimulator Simulator { get; } = simulator;

        public double SentSeconds { get; set; }

        public bool Stopped { get => _stopped; set => _stopped = value; }
    }
}
