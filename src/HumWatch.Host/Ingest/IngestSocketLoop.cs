using HumWatch.Host.Security;
using Microsoft.Extensions.Logging;
using NetMQ;
using NetMQ.Sockets;

namespace HumWatch.Host.Ingest;

/// <summary>Handles one received message; spans are valid only during the call.</summary>
internal delegate void WireMessageHandler(ReadOnlySpan<byte> header, ReadOnlySpan<byte> samples, int frameCount, long messageBytes, string origin);

/// <summary>
/// One ingest socket and the one thread that owns it: opened on the host's start thread, then handed to a dedicated
/// receive thread that polls with a timeout so it sees the stopping token, and disposes the socket when it ends.
/// </summary>
internal sealed class IngestSocketLoop : IDisposable
{
    /// <summary>How long one receive waits before looking at the stopping token again.</summary>
    private static readonly TimeSpan PollInterval = TimeSpan.FromMilliseconds(100);

    /// <summary>Frames after the first of a multipart message are already queued (ZeroMQ delivers messages whole), so this wait never runs out in practice.</summary>
    private static readonly TimeSpan NextFrameTimeout = TimeSpan.FromSeconds(1);

    private readonly IngestEndpointOptions _endpoint;
    private readonly int _endpointIndex;
    private readonly IngestOptions _options;
    private readonly ILogger _logger;
    private readonly WarningThrottle _refusalThrottle;
    private ClientKeyGate? _gate;
    private NetMQSocket? _socket;
    private Thread? _thread;
    private int _disposed;

    public IngestSocketLoop(IngestEndpointOptions endpoint, int endpointIndex, IngestOptions options, ILogger logger, WarningThrottle refusalThrottle)
    {
        _refusalThrottle = refusalThrottle;
        _endpoint = endpoint;
        _endpointIndex = endpointIndex;
        _options = options;
        _logger = logger;
        Origin = endpoint.Address;
    }

    /// <summary>The endpoint as bound (port resolved when the address used *) or as connected.</summary>
    public string Origin { get; private set; }

    /// <summary>Messages refused for lack of a listed client key (0 without an allow-list).</summary>
    public long ClientKeyRefusals => _gate?.RefusedCount ?? 0;

    /// <summary>Creates the socket and binds or connects it; throws <see cref="StartFailureException"/> naming the configuration key.</summary>
    public void Open()
    {
        var key = $"{IngestOptions.SectionName}:Endpoints:{_endpointIndex}";
        NetMQCertificate? certificate = null;
        if (_endpoint.Curve is { } curve)
        {
            try
            {
                certificate = CurveKeyFile.ReadKeyPair(curve.ServerKeyFile);
            }
            catch (Exception ex) when (ex is InvalidDataException or IOException or UnauthorizedAccessException)
            {
                throw new StartFailureException($"{key}:Curve:ServerKeyFile: {ex.Message}", ex);
            }

            if (!string.IsNullOrWhiteSpace(curve.AllowedClientKeysFile))
            {
                try
                {
                    _gate = new ClientKeyGate(ClientKeyAllowList.Read(curve.AllowedClientKeysFile), certificate);
                }
                catch (InvalidDataException ex)
                {
                    throw new StartFailureException($"{key}:Curve:AllowedClientKeysFile: {ex.Message}", ex);
                }
            }
        }

        NetMQSocket socket = _endpoint.SocketType == IngestSocketType.Sub ? new SubscriberSocket() : new PullSocket();
        try
        {
            // A receiving socket has nothing to flush; zero linger keeps shutdown from waiting on peers.
            socket.Options.Linger = TimeSpan.Zero;

            // Hard per-frame ceiling: ZeroMQ disconnects a peer past it, before buffering the frame. Messages between the
            // configured limit and this ceiling are still received, so they can be counted as TooLarge.
            socket.Options.MaxMsgSize = Math.Min(int.MaxValue, 2 * _options.MaxMessageBytes);

            // Per-sender bound: past this many queued messages ZeroMQ stops reading that sender's connection (TCP
            // pushes back), so one fast or stuck sender holds at most this × its message size here.
            socket.Options.ReceiveHighWatermark = _options.ReceiveHighWatermark;

            // A sender whose host vanished (no FIN) would keep its connection and buffers for ever; keepalive and
            // ZMTP heartbeats find it. A live sender that sends nothing answers both and stays (docs/reliability.md).
            socket.Options.TcpKeepalive = true;
            socket.Options.TcpKeepaliveIdle = TimeSpan.FromSeconds(60);
            socket.Options.TcpKeepaliveInterval = TimeSpan.FromSeconds(10);
            socket.Options.HeartbeatInterval = TimeSpan.FromSeconds(10);
            socket.Options.HeartbeatTimeout = TimeSpan.FromSeconds(30);
            if (certificate is not null)
            {
                socket.Options.CurveServer = true;
                socket.Options.CurveCertificate = certificate;
            }

            if (_endpoint.Mode == IngestSocketMode.Bind)
            {
                socket.Bind(_endpoint.Address);
                Origin = socket.Options.LastEndpoint ?? _endpoint.Address;
            }
            else
            {
                socket.Connect(_endpoint.Address);
            }

            if (socket is SubscriberSocket subscriber)
            {
                subscriber.Subscribe(_endpoint.SubscribePrefix ?? string.Empty);
            }
        }
        catch (Exception ex) when (ex is NetMQException or ArgumentException or System.Net.Sockets.SocketException)
        {
            socket.Dispose();
            var verb = _endpoint.Mode == IngestSocketMode.Bind ? "bind" : "connect";
            throw StartFailureException.ForSocket($"{key}:Address", _endpoint.Address, $"{verb} a {_endpoint.SocketType} socket", ex);
        }

        _socket = socket;
        _logger.SocketOpened(_endpoint.SocketType, _endpoint.Mode, Origin, _endpointIndex, certificate is not null);
        if (_gate is not null)
        {
            _logger.ClientKeysLoaded(Origin, _gate.KeyCount, _endpoint.Curve!.AllowedClientKeysFile);
        }

        if (certificate is null && !IngestOptionsValidator.IsLocalOnly(_endpoint.Address))
        {
            _logger.InsecureRemote(Origin, $"{key}:AllowInsecureRemote", "send data to it", $"{key}:Curve:ServerKeyFile");
        }
        else if (_endpoint.Mode == IngestSocketMode.Bind && !IngestOptionsValidator.IsLocalOnly(_endpoint.Address))
        {
            _logger.NonLoopbackBind(Origin, _endpointIndex);
        }
    }

    /// <summary>Starts the owner thread; the task completes when the thread has closed the socket.</summary>
    public Task Start(WireMessageHandler handler, CancellationToken stoppingToken)
    {
        var socket = _socket ?? throw new InvalidOperationException("Open the socket before starting it.");
        var done = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
        _thread = new Thread(() =>
        {
            try
            {
                Receive(socket, handler, stoppingToken);
            }
            finally
            {
                socket.Dispose();
                _gate?.Dispose();
                _logger.SocketClosed(Origin);
                done.TrySetResult();
            }
        })
        {
            IsBackground = true,
            Name = "HumWatch ingest " + Origin,
        };
        _thread.Start();
        return done.Task;
    }

    public void Dispose()
    {
        if (Interlocked.Exchange(ref _disposed, 1) != 0)
        {
            return;
        }

        if (_thread is null)
        {
            // Never started (stopped before the receive thread ran): this thread still owns the socket.
            if (_socket is not null)
            {
                _socket.Dispose();
                _logger.SocketClosed(Origin);
            }

            _gate?.Dispose();
        }
        else
        {
            // The owner thread sees the stopping token within one poll interval and disposes the socket itself.
            _thread.Join(TimeSpan.FromSeconds(5));
        }
    }

    /// <summary>True when the message's third frame proves a listed client key; a refusal is counted and logged (throttled).</summary>
    private bool Admit(int frames, ReadOnlySpan<byte> proof)
    {
        var outcome = _gate!.Check(proof, present: frames == 3);
        if (outcome == ClientKeyCheck.Allowed)
        {
            return true;
        }

        if (_refusalThrottle.ShouldWarn(Origin + "|client-key", out var suppressed))
        {
            _logger.ClientKeyRefused(Origin, $"{IngestOptions.SectionName}:Endpoints:{_endpointIndex}:Curve:AllowedClientKeysFile", outcome, _gate.RefusedCount, suppressed);
        }

        return false;
    }

    private void Receive(NetMQSocket socket, WireMessageHandler handler, CancellationToken stoppingToken)
    {
        var first = default(Msg);
        var second = default(Msg);
        var extra = default(Msg);
        first.InitEmpty();
        second.InitEmpty();
        extra.InitEmpty();
        try
        {
            while (!stoppingToken.IsCancellationRequested)
            {
                try
                {
                    if (!socket.TryReceive(ref first, PollInterval))
                    {
                        // Quiet moment: a flood that stopped still gets its one summary line.
                        _refusalThrottle.Flush();
                        continue;
                    }

                    var frames = 1;
                    long bytes = first.Size;
                    var more = first.HasMore;
                    if (more && socket.TryReceive(ref second, NextFrameTimeout))
                    {
                        frames = 2;
                        bytes += second.Size;
                        more = second.HasMore;
                    }

                    // Drain surplus frames so the next message starts clean; only their count and size matter.
                    while (more && socket.TryReceive(ref extra, NextFrameTimeout))
                    {
                        frames++;
                        bytes += extra.Size;
                        more = extra.HasMore;
                    }

                    if (_gate is not null && !Admit(frames, extra.Slice()))
                    {
                        continue;
                    }

                    // With an allow-list the proof frame is ours, not the chunk's: the codec sees the two frames it expects.
                    var chunkFrames = _gate is not null ? frames - 1 : frames;
                    var chunkBytes = _gate is not null ? bytes - extra.Size : bytes;
                    handler(first.Slice(), frames >= 2 ? second.Slice() : default, chunkFrames, chunkBytes, Origin);
                }
                catch (Exception ex) when (ex is not (TerminatingException or ObjectDisposedException))
                {
                    // By design: one bad message or handler fault must not stop the socket; good streams keep flowing.
                    _logger.ReceiveFailed(ex, Origin);
                }
            }
        }
        catch (Exception ex) when (ex is TerminatingException or ObjectDisposedException)
        {
            // The ZeroMQ context is shutting down under us; nothing left to receive.
        }
        finally
        {
            first.Close();
            second.Close();
            extra.Close();
        }
    }
}
