using System.Collections.Concurrent;
using System.Text;
using System.Text.Json;
using HumWatch.Formats.Wire;
using HumWatch.Host.Composition;
using HumWatch.Host.Ingest;
using HumWatch.Host.Publishing;
using HumWatch.Host.Store;
using HumWatch.Simulation;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using NetMQ;
using NetMQ.Sockets;

namespace HumWatch.Host.Tests.EndToEnd;

/// <summary>The real service on ephemeral loopback ports with its store, inbox and logs in a temp folder.</summary>
internal sealed class ServiceUnderTest : IAsyncDisposable
{
    private ServiceUnderTest(IHost host, string folder)
    {
        Host = host;
        Folder = folder;
        var ingest = host.Services.GetServices<IHostedService>().OfType<SocketIngestService>().Single();
        IngestEndpoint = ingest.Endpoints[0];
        PublishEndpoint = host.Services.GetRequiredService<ZmqPublisher>().Endpoint;
    }

    public IHost Host { get; }

    public string Folder { get; }

    public string IngestEndpoint { get; }

    public string PublishEndpoint { get; }

    public HumWatchStore Store => Host.Services.GetRequiredService<HumWatchStore>();

    public string Inbox => Path.Combine(Folder, "inbox");

    public string Archive => Path.Combine(Folder, "archive");

    public string Rejected => Path.Combine(Folder, "rejected");

    /// <summary>The lines of the text log files in <paramref name="folder"/>, read while the service may still write them.</summary>
    public static List<string> LogLines(string folder)
    {
        var lines = new List<string>();
        foreach (var path in Directory.GetFiles(folder, "humwatch-*.log"))
        {
            using var stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite | FileShare.Delete);
            using var reader = new StreamReader(stream);
            while (reader.ReadLine() is { } line)
            {
                lines.Add(line);
            }
        }

        return lines;
    }

    public static Dictionary<string, string?> Settings(string folder) => new()
    {
        ["Ingest:Endpoints:0:Address"] = "tcp://127.0.0.1:*",
        ["Publish:Endpoint"] = "tcp://127.0.0.1:*",
        ["Publish:StatusIntervalSeconds"] = "1",
        // The live page's tests turn it on; elsewhere it would only add a server (and a meter) per host.
        ["Web:Enabled"] = "false",
        ["Web:Endpoint"] = "http://127.0.0.1:0",
        ["Store:Path"] = Path.Combine(folder, "humwatch.db"),
        ["Logs:Folder"] = Path.Combine(folder, "logs"),
        ["Logs:ConsoleLevel"] = "Fatal",
        ["Inbox:Folder"] = Path.Combine(folder, "inbox"),
        ["Inbox:ArchiveFolder"] = Path.Combine(folder, "archive"),
        ["Inbox:RejectedFolder"] = Path.Combine(folder, "rejected"),
        ["Inbox:StableSeconds"] = "0.3",
        ["Inbox:RescanSeconds"] = "0.2",

        // Tests push far faster than real time; the stream queue must hold it all.
        ["Monitor:StreamQueueCapacity"] = "100000",
        ["Ingest:QueueCapacity"] = "100000",
    };

    public static async Task<ServiceUnderTest> StartAsync(string folder, IReadOnlyDictionary<string, string?>? extra = null, Action<IServiceCollection, HumWatch.Host.Configuration.BoundSettings>? configureServices = null)
    {
        var settings = Settings(folder);
        foreach (var (key, value) in extra ?? new Dictionary<string, string?>())
        {
            settings[key] = value;
        }

        var host = HumWatchHost.Build(new HumWatchHostSettings
        {
            Sources = HumWatch.Host.Configuration.SettingsSources.Isolated(settings),
            ConfigureServices = configureServices,
        });
        await host.StartAsync();
        return new ServiceUnderTest(host, folder);
    }

    public async ValueTask DisposeAsync()
    {
        using var timeout = new CancellationTokenSource(TimeSpan.FromSeconds(30));
        await Host.StopAsync(timeout.Token);
        Host.Dispose();
    }
}

/// <summary>Subscribes to everything a publisher sends and keeps it for assertions.</summary>
internal sealed class MessageCollector : IDisposable
{
    private readonly ConcurrentQueue<(string Topic, JsonElement Body)> _messages = new();
    private readonly CancellationTokenSource _stop = new();
    private readonly Thread _thread;

    public MessageCollector(string endpoint)
    {
        _thread = new Thread(() => Run(endpoint)) { IsBackground = true, Name = "test-subscriber" };
        _thread.Start();
    }

    public IReadOnlyList<(string Topic, JsonElement Body)> Messages => [.. _messages];

    /// <summary>Waits (bounded) until a message matches; returns it.</summary>
    public async Task<(string Topic, JsonElement Body)> WaitForAsync(Func<string, JsonElement, bool> match, string what, int timeoutSeconds = 60)
    {
        var deadline = DateTime.UtcNow.AddSeconds(timeoutSeconds);
        while (DateTime.UtcNow < deadline)
        {
            foreach (var message in _messages)
            {
                if (match(message.Topic, message.Body))
                {
                    return message;
                }
            }

            await Task.Delay(50);
        }

        var seen = string.Join(Environment.NewLine, _messages.Select(m => $"{m.Topic} {m.Body.GetRawText()}"));
        throw new TimeoutException($"No message for {what} within {timeoutSeconds} s. Seen:{Environment.NewLine}{seen}");
    }

    public void Dispose()
    {
        _stop.Cancel();
        _thread.Join(TimeSpan.FromSeconds(5));
        _stop.Dispose();
    }

    private void Run(string endpoint)
    {
        using var subscriber = new SubscriberSocket();
        subscriber.Options.Linger = TimeSpan.Zero;
        subscriber.Connect(endpoint);
        subscriber.SubscribeToAnyTopic();
        var frames = new List<byte[]>();
        while (!_stop.IsCancellationRequested)
        {
            frames.Clear();
            if (subscriber.TryReceiveMultipartBytes(TimeSpan.FromMilliseconds(100), ref frames, 2) && frames.Count == 2)
            {
                _messages.Enqueue((Encoding.UTF8.GetString(frames[0]), JsonDocument.Parse(frames[1]).RootElement.Clone()));
            }
        }
    }
}

/// <summary>Pushes simulated rooms over the wire protocol, as fast as the socket takes them.</summary>
internal sealed class RoomPusher : IDisposable
{
    private readonly PushSocket _push = new();

    public RoomPusher(string endpoint)
    {
        _push.Options.Linger = TimeSpan.FromSeconds(5);
        _push.Options.SendHighWatermark = 100_000;
        _push.Connect(endpoint);
    }

    public void Push(string streamId, RoomSimulator room, double seconds, double chunkSeconds = 0.5)
    {
        var samples = (int)Math.Round(chunkSeconds * room.Layout.SampleRateHz);
        var chunks = (int)Math.Ceiling(seconds / chunkSeconds);
        for (var i = 0; i < chunks; i++)
        {
            var message = ChunkWireCodec.Encode(streamId, room.Next(samples));
            _push.SendMoreFrame(message.Header).SendFrame(message.Samples);
        }
    }

    public void SendRaw(params byte[][] frames)
    {
        for (var i = 0; i < frames.Length - 1; i++)
        {
            _push.SendMoreFrame(frames[i]);
        }

        _push.SendFrame(frames[^1]);
    }

    public void Dispose() => _push.Dispose();
}

/// <summary>Small rooms that analyse fast: 8 channels at 250 Hz.</summary>
internal static class Rooms
{
    public static readonly DateTimeOffset Start = new(2026, 5, 4, 9, 0, 0, TimeSpan.Zero);

    public static RoomSimulator WithMains(string name, double onSeconds, double? offSeconds, int seed = 5, double amplitudeUvRms = 8)
    {
        var room = new SimulatedRoom
        {
            Name = name,
            SampleRateHz = 250,
            Channels = SimulatedRoom.Montage(8),
            Tones = [new SimulatedTone { Name = "mains", FrequencyHz = 50, AmplitudeUvRms = amplitudeUvRms, OnsetSeconds = onSeconds, OffsetSeconds = offSeconds, WanderHz = 0.02 }],
        };
        return new RoomSimulator(room, seed, Start);
    }

    public static RoomSimulator Quiet(string name, int seed = 9)
    {
        var room = new SimulatedRoom { Name = name, SampleRateHz = 250, Channels = SimulatedRoom.Montage(8) };
        return new RoomSimulator(room, seed, Start);
    }
}
