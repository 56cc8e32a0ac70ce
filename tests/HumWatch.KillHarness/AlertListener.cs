using System.Collections.Concurrent;
using System.Text.Json;
using NetMQ;
using NetMQ.Sockets;

namespace HumWatch.KillHarness;

/// <summary>One published alert event, as the store keys it: stream, finding key, event text, UTC in Unix ms.</summary>
internal readonly record struct PublishedAlert(string Stream, string Key, string Event, long UtcMs);

/// <summary>One published message as it arrived: its topic and its JSON body.</summary>
internal sealed record PublishedMessage(string Topic, JsonElement Body);

/// <summary>
/// A SUB socket on the publish port that stays connected across kills (it reconnects by itself) and keeps every
/// alert and clear message that arrived, and every message of the other topic prefixes it was given (e.g. "summary/").
/// </summary>
internal sealed class AlertListener : IDisposable
{
    private readonly ConcurrentQueue<PublishedAlert> _received = new();
    private readonly ConcurrentQueue<PublishedMessage> _messages = new();
    private readonly Thread _thread;
    private readonly string _endpoint;
    private readonly string[] _otherTopics;
    private volatile bool _stop;

    public AlertListener(string endpoint, params string[] otherTopics)
    {
        _endpoint = endpoint;
        _otherTopics = otherTopics;
        _thread = new Thread(Listen) { IsBackground = true, Name = "alert listener" };
        _thread.Start();
    }

    public IReadOnlyList<PublishedAlert> Received => [.. _received];

    /// <summary>Every message that arrived, alerts and clears included, in order.</summary>
    public IReadOnlyList<PublishedMessage> Messages => [.. _messages];

    /// <summary>Alerts raised (or changed) and not yet cleared, by stream and key, in what arrived so far.</summary>
    public int OpenCount()
    {
        var open = new HashSet<(string, string)>();
        foreach (var alert in _received)
        {
            if (alert.Event == "cleared")
            {
                open.Remove((alert.Stream, alert.Key));
            }
            else
            {
                open.Add((alert.Stream, alert.Key));
            }
        }

        return open.Count;
    }

    public void Dispose()
    {
        _stop = true;
        _thread.Join();
    }

    private void Listen()
    {
        using var sub = new SubscriberSocket();
        sub.Options.Linger = TimeSpan.Zero;
        sub.Options.ReceiveHighWatermark = 100_000;

        // Back soon after a (re)start binds the port: what a service publishes right at start (its catch-up summaries) is
        // lost to a subscriber that is not connected yet.
        sub.Options.ReconnectInterval = TimeSpan.FromMilliseconds(10);
        sub.Subscribe("alert/");
        sub.Subscribe("clear/");
        foreach (var topic in _otherTopics)
        {
            sub.Subscribe(topic);
        }

        sub.Connect(_endpoint);
        while (!_stop)
        {
            if (!sub.TryReceiveFrameString(TimeSpan.FromMilliseconds(100), out var topic))
            {
                continue;
            }

            var body = sub.ReceiveFrameBytes();
            using var json = JsonDocument.Parse(body);
            var root = json.RootElement;
            _messages.Enqueue(new PublishedMessage(topic, root.Clone()));
            if (!topic.StartsWith("alert/", StringComparison.Ordinal) && !topic.StartsWith("clear/", StringComparison.Ordinal))
            {
                continue;
            }

            var eventText = topic.StartsWith("clear/", StringComparison.Ordinal) ? "cleared" : root.GetProperty("event").GetString()!;
            var utc = root.GetProperty("utc").GetDateTimeOffset();
            _received.Enqueue(new PublishedAlert(root.GetProperty("stream").GetString()!, root.GetProperty("key").GetString()!, eventText, utc.ToUnixTimeMilliseconds()));
        }
    }
}
