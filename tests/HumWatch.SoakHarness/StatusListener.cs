using System.Collections.Concurrent;
using System.Text.Json;
using NetMQ;
using NetMQ.Sockets;

namespace HumWatch.SoakHarness;

/// <summary>The service's counters over all streams, from each stream's latest status message.</summary>
internal readonly record struct StatusTotals(int Streams, long ChunksAccepted, long ChunksDropped, long ChunksRejected, double MaxLagSeconds);

/// <summary>A SUB socket on the publish port that keeps each stream's latest "status/" body.</summary>
internal sealed class StatusListener : IDisposable
{
    private readonly ConcurrentDictionary<string, (long Accepted, long Dropped, long Rejected, double Lag)> _latest = new(StringComparer.Ordinal);
    private readonly Thread _thread;
    private readonly string _endpoint;
    private volatile bool _stop;

    public StatusListener(string endpoint)
    {
        _endpoint = endpoint;
        _thread = new Thread(Listen) { IsBackground = true, Name = "status listener" };
        _thread.Start();
    }

    /// <summary>Alert and clear messages seen, all streams.</summary>
    public long AlertMessages => Interlocked.Read(ref _alertMessages);

    private long _alertMessages;

    public StatusTotals Totals()
    {
        long accepted = 0, dropped = 0, rejected = 0;
        var lag = 0.0;
        foreach (var (a, d, r, l) in _latest.Values)
        {
            accepted += a;
            dropped += d;
            rejected += r;
            lag = Math.Max(lag, l);
        }

        return new StatusTotals(_latest.Count, accepted, dropped, rejected, lag);
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
        sub.Subscribe("status/");
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
            if (!topic.StartsWith("status/", StringComparison.Ordinal))
            {
                Interlocked.Increment(ref _alertMessages);
                continue;
            }

            using var json = JsonDocument.Parse(body);
            var root = json.RootElement;
            var lag = root.TryGetProperty("lagSeconds", out var l) && l.ValueKind == JsonValueKind.Number ? l.GetDouble() : 0;
            _latest[root.GetProperty("stream").GetString()!] = (
                root.GetProperty("chunksAccepted").GetInt64(),
                root.GetProperty("chunksDropped").GetInt64(),
                root.GetProperty("chunksRejected").GetInt64(),
                lag);
        }
    }
}
