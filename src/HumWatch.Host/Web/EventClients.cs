using System.Collections.Concurrent;
using System.Text;
using System.Threading.Channels;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Web;

/// <summary>
/// The pages connected to /api/v1/events: each has a bounded queue of ready-made Server-Sent Events frames. A page that
/// falls so far behind that its queue fills is disconnected (its browser reconnects and starts from a fresh snapshot),
/// so one slow phone never holds up the others or grows memory. Thread-safe.
/// </summary>
internal sealed class EventClients(int maxClients, ILogger<EventClients> logger)
{
    /// <summary>Frames queued for one page before it counts as too slow.</summary>
    public const int QueueFrames = 256;

    private readonly ConcurrentDictionary<long, Client> _clients = new();
    private long _nextId;
    private long _served;
    private long _framesSent;
    private long _bytesSent;

    /// <summary>Pages connected now.</summary>
    public int Count => _clients.Count;

    /// <summary>Event streams opened since start.</summary>
    public long Served => Interlocked.Read(ref _served);

    /// <summary>Frames written to pages since start.</summary>
    public long FramesSent => Interlocked.Read(ref _framesSent);

    /// <summary>Bytes of frames written to pages since start.</summary>
    public long BytesSent => Interlocked.Read(ref _bytesSent);

    /// <summary>One SSE frame: "event: KIND", "data: JSON" (one line: the JSON is compact), blank line.</summary>
    public static byte[] Frame(string kind, ReadOnlySpan<byte> json)
    {
        var head = Encoding.UTF8.GetBytes($"event: {kind}\ndata: ");
        var frame = new byte[head.Length + json.Length + 2];
        head.CopyTo(frame, 0);
        json.CopyTo(frame.AsSpan(head.Length));
        frame[^2] = (byte)'\n';
        frame[^1] = (byte)'\n';
        return frame;
    }

    /// <summary>A new page's queue, or null when <c>Web:MaxEventClients</c> are connected already.</summary>
    public Client? TryAdd()
    {
        if (_clients.Count >= maxClients)
        {
            logger.TooManyClients(_clients.Count);
            return null;
        }

        var client = new Client(Interlocked.Increment(ref _nextId), this);
        _clients[client.Id] = client;
        Interlocked.Increment(ref _served);
        return client;
    }

    /// <summary>Queues a frame for every page; a page whose queue is full is let go.</summary>
    public void Broadcast(byte[] frame)
    {
        foreach (var client in _clients.Values)
        {
            if (!client.Queue.Writer.TryWrite(frame))
            {
                logger.ClientTooSlow(client.Queue.Reader.Count);
                client.Queue.Writer.TryComplete();
                Remove(client);
            }
        }
    }

    /// <summary>Ends every page's stream (the server stops).</summary>
    public void CompleteAll()
    {
        foreach (var client in _clients.Values)
        {
            client.Queue.Writer.TryComplete();
        }
    }

    internal void Remove(Client client) => _clients.TryRemove(client.Id, out _);

    internal void CountSent(int bytes)
    {
        Interlocked.Increment(ref _framesSent);
        Interlocked.Add(ref _bytesSent, bytes);
    }

    /// <summary>One connected page.</summary>
    internal sealed class Client(long id, EventClients owner) : IDisposable
    {
        public long Id { get; } = id;

        public Channel<byte[]> Queue { get; } = Channel.CreateBounded<byte[]>(new BoundedChannelOptions(QueueFrames)
        {
            SingleReader = true,
            FullMode = BoundedChannelFullMode.Wait,
        });

        public void Dispose() => owner.Remove(this);
    }
}
