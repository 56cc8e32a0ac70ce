using System.Globalization;
using Microsoft.Extensions.Logging;
using NetMQ;
using NetMQ.Sockets;

namespace HumWatch.Host.Publishing;

/// <summary>
/// ZeroMQ PUB socket owned by one poller thread. Callers on any thread hand messages over through a
/// <see cref="NetMQQueue{T}"/>; nothing here throws into callers after construction, failures are logged and counted.
/// The host never calls <c>NetMQConfig.Cleanup()</c> (process-wide; tests run several hosts at once): the process
/// does, once every host and socket is disposed (the CLI's <c>ServiceRunner</c> and <c>listen</c>).
/// </summary>
internal sealed class ZmqPublisher : IMessagePublisher, IDisposable
{
    private readonly ILogger _logger;
    private readonly int _capacity;
    private readonly PublisherSocket _socket;
    private readonly NetMQQueue<(string Topic, byte[] Body)> _queue;
    private readonly NetMQPoller _poller;
    private int _queued;
    private long _sent;
    private long _dropped;
    private int _closed;

    /// <param name="options">Validated publish options.</param>
    /// <param name="logger">Where failures go.</param>
    /// <exception cref="InvalidOperationException">The endpoint cannot be bound (in use, bad address).</exception>
    public ZmqPublisher(PublishOptions options, ILogger<ZmqPublisher> logger)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(logger);
        var errors = options.Validate();
        if (errors.Count > 0)
        {
            throw new ArgumentOutOfRangeException(nameof(options), string.Join(" ", errors));
        }

        _logger = logger;
        _capacity = options.MaxQueuedMessages;
        if (!PublishOptions.TryParseEndpoint(options.Endpoint, out var host, out var port))
        {
            throw new ArgumentOutOfRangeException(nameof(options), options.Endpoint, "Publish:Endpoint is not a tcp://host:port endpoint.");
        }

        NetMQCertificate? certificate = null;
        if (options.Curve is { } curve)
        {
            try
            {
                certificate = Security.CurveKeyFile.ReadKeyPair(curve.ServerKeyFile);
            }
            catch (Exception ex) when (ex is InvalidDataException or IOException or UnauthorizedAccessException)
            {
                throw new StartFailureException($"Publish:Curve:ServerKeyFile: {ex.Message}", ex);
            }
        }

        _socket = new PublisherSocket();
        if (certificate is not null)
        {
            _socket.Options.CurveServer = true;
            _socket.Options.CurveCertificate = certificate;
        }

        _socket.Options.Linger = TimeSpan.FromMilliseconds(options.LingerMs);
        _socket.Options.SendHighWatermark = options.SendHighWaterMark;
        try
        {
            if (port is null)
            {
                var bound = _socket.BindRandomPort($"tcp://{host}");
                Endpoint = $"tcp://{(host == "*" ? "0.0.0.0" : host)}:{bound.ToString(CultureInfo.InvariantCulture)}";
            }
            else
            {
                _socket.Bind(options.Endpoint);
                Endpoint = options.Endpoint;
            }
        }
        catch (Exception ex) when (ex is NetMQException or System.Net.Sockets.SocketException or ArgumentException)
        {
            _socket.Dispose();
            throw StartFailureException.ForSocket("Publish:Endpoint", options.Endpoint, "bind", ex);
        }

        if (PublishOptions.IsLoopback(host) || certificate is not null)
        {
            _logger.PublisherBound(Endpoint);
        }
        else
        {
            // One warning at start: the operator set Publish:AllowInsecureRemote and should see what it means.
            Security.SecurityLog.InsecureRemote(_logger, Endpoint, "Publish:AllowInsecureRemote", "subscribe and read every message", "Publish:Curve:ServerKeyFile");
        }

        _queue = new NetMQQueue<(string Topic, byte[] Body)>();
        _queue.ReceiveReady += OnQueueReady;
        _poller = [_queue];
        _poller.RunAsync("humwatch-publisher");
    }

    /// <summary>The bound endpoint, with the actual port when a free one was picked.</summary>
    public string Endpoint { get; }

    /// <summary>Messages handed to the socket so far.</summary>
    public long SentCount => Interlocked.Read(ref _sent);

    /// <summary>Messages dropped (queue full, send failure, or after close).</summary>
    public long DroppedCount => Interlocked.Read(ref _dropped);

    public bool TryPublish(string kind, string streamId, byte[] body)
    {
        try
        {
            ArgumentException.ThrowIfNullOrWhiteSpace(kind);
            ArgumentException.ThrowIfNullOrWhiteSpace(streamId);
            ArgumentNullException.ThrowIfNull(body);
            var topic = Messages.Topic(kind, streamId);
            if (Volatile.Read(ref _closed) != 0)
            {
                Interlocked.Increment(ref _dropped);
                _logger.PublishAfterClose(Endpoint, topic);
                return false;
            }

            if (Interlocked.Increment(ref _queued) > _capacity)
            {
                Interlocked.Decrement(ref _queued);
                var dropped = Interlocked.Increment(ref _dropped);
                _logger.PublishQueueFull(_capacity, topic, dropped);
                return false;
            }

            _queue.Enqueue((topic, body));
            return true;
        }
        catch (Exception ex)
        {
            // By design: publishing is best effort and must never take a stream worker down.
            Interlocked.Increment(ref _dropped);
            _logger.SendFailed(ex, kind ?? "?", Endpoint);
            return false;
        }
    }

    public void Dispose()
    {
        if (Interlocked.Exchange(ref _closed, 1) != 0)
        {
            return;
        }

        try
        {
            _poller.Stop();
            // The poller thread has ended: this thread now owns the socket and sends what is still queued.
            while (_queue.TryDequeue(out var message, TimeSpan.Zero))
            {
                Send(message);
            }

            _poller.Dispose();
            _queue.Dispose();
            _socket.Dispose();
        }
        catch (Exception ex)
        {
            _logger.CloseFailed(ex, Endpoint);
        }

        _logger.PublisherClosed(Endpoint, SentCount, DroppedCount);
    }

    private void OnQueueReady(object? sender, NetMQQueueEventArgs<(string Topic, byte[] Body)> e)
    {
        while (e.Queue.TryDequeue(out var message, TimeSpan.Zero))
        {
            Send(message);
        }
    }

    private void Send((string Topic, byte[] Body) message)
    {
        Interlocked.Decrement(ref _queued);
        try
        {
            // PUB never blocks: at the high-water mark ZeroMQ drops for that subscriber.
            _socket.SendMoreFrame(message.Topic).SendFrame(message.Body);
            Interlocked.Increment(ref _sent);
        }
        catch (Exception ex)
        {
            Interlocked.Increment(ref _dropped);
            _logger.SendFailed(ex, message.Topic, Endpoint);
        }
    }
}
