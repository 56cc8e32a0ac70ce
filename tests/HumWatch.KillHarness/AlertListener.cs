using System.Collections.Concurrent;
using System.Text.Json;
using NetMQ;
using NetMQ.Sockets;

namespace HumWatch.KillHarness;

/// <summary>One published alert event, as the store keys it: stream, finding key, event text, UTC in Unix ms.</summary>
internal readonly record struct PublishedAlert(string Stream, string Key, string Event, long UtcMs);

/// <summary>
/// A SUB socket on the publish port that stays connected across kills (it reconnects by itself) and keeps every
/// alert and clear message that arrived.
/// </summary>
internal sealed class AlertListener : IDisposable
{
    private readonly ConcurrentQueue<PublishedAlert> _received = new();
    private readonly Thread _thread;
    private readonly string _endpoint;
    private volatile bool _stop;

    public AlertListener(string endpoint)
    {
        _endpoint = endpoint;
        _thread = new Thread(Listen) { IsBackground = true, Name = "alert listener" };
        _thread.Start();
    }

    public IReadOnlyList<PublishedAlert> Received => [.. _received];

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
        sub.Subscribe("alert/");
        sub.Subscribe("clear/");
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
            var eventText = topic.StartsWith("clear/", StringComparison.Ordinal) ? "cleared" : root.GetProperty("event").GetString()!;
            var utc = root.GetProperty("utc").GetDateTimeOffset();
            _received.Enqueue(new PublishedAlert(root.GetProperty("stream").GetString()!, root.GetProperty("key").GetString()!, eventText, utc.ToUnixTimeMilliseconds()));
        }
    }
}
