using HumWatch.Formats.Wire;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Options;

namespace HumWatch.Host.Ingest;

/// <summary>
/// Receives chunk messages (protocol v1) on the configured ZeroMQ sockets, one owner thread per socket, decodes them
/// into sample arrays rented from the <see cref="SampleBufferPool"/> and queues them on <see cref="IngestQueue"/>. Bad
/// messages are refused, counted and logged; good ones that find no room are dropped, counted and logged; the sockets
/// keep running.
/// </summary>
internal sealed class SocketIngestService : BackgroundService
{
    private readonly IngestOptions _options;
    private readonly IngestQueue _queue;
    private readonly IngestCounters _counters;
    private readonly ILogger _logger;
    private readonly SampleBufferPool _pool;
    private readonly WarningThrottle _rejectionThrottle;
    private readonly WarningThrottle _dropThrottle;
    private readonly StreamLayoutCache _layouts = new();
    private readonly List<IngestSocketLoop> _loops = [];

    public SocketIngestService(IOptions<IngestOptions> options, IngestQueue queue, IngestCounters counters, SampleBufferPool pool, ILogger<SocketIngestService> logger, TimeProvider timeProvider)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(queue);
        ArgumentNullException.ThrowIfNull(counters);
        ArgumentNullException.ThrowIfNull(pool);
        ArgumentNullException.ThrowIfNull(logger);
        _options = options.Value;
        _queue = queue;
        _counters = counters;
        _pool = pool;
        _logger = logger;
        _rejectionThrottle = new WarningThrottle(timeProvider, _options.WarningInterval);
        _dropThrottle = new WarningThrottle(timeProvider, _options.WarningInterval);
    }

    /// <summary>Endpoints as bound or connected, in configuration order (valid after start).</summary>
    internal IReadOnlyList<string> Endpoints
    {
        get
        {
            var result = new string[_loops.Count];
            for (var i = 0; i < result.Length; i++)
            {
                result[i] = _loops[i].Origin;
            }

            return result;
        }
    }

    /// <summary>Messages refused on every socket for lack of a listed CURVE client key.</summary>
    internal long ClientKeyRefusals => _loops.Sum(static loop => loop.ClientKeyRefusals);

    /// <summary>Binds and connects every socket before the host reports started, so a bad endpoint stops startup with a clear message.</summary>
    public override Task StartAsync(CancellationToken cancellationToken)
    {
        var endpoints = _options.EffectiveEndpoints();
        _logger.BufferBudget(_pool.BudgetBytes / 1048576.0, _queue.Capacity);
        NetMqMessageBuffers.Install();
        try
        {
            for (var i = 0; i < endpoints.Count; i++)
            {
                var loop = new IngestSocketLoop(endpoints[i], i, _options.MaxMessageBytes, _logger, _rejectionThrottle);
                loop.Open();
                _loops.Add(loop);
            }
        }
        catch
        {
            DisposeLoops();
            throw;
        }

        return base.StartAsync(cancellationToken);
    }

    protected override Task ExecuteAsync(CancellationToken stoppingToken)
    {
        var running = new Task[_loops.Count];
        for (var i = 0; i < running.Length; i++)
        {
            running[i] = _loops[i].Start(HandleMessage, stoppingToken);
        }

        return Task.WhenAll(running);
    }

    public override void Dispose()
    {
        base.Dispose();
        DisposeLoops();
    }

    /// <summary>One message's worth of work: size and frame checks, decode, queue; counts and logs every outcome.</summary>
    internal void HandleMessage(ReadOnlySpan<byte> header, ReadOnlySpan<byte> samples, int frameCount, long messageBytes, string origin)
    {
        if (messageBytes > _options.MaxMessageBytes)
        {
            Reject(ChunkWireCodec.RejectTooLarge(messageBytes, _options.MaxMessageBytes, header), origin);
            return;
        }

        if (frameCount != ChunkWireCodec.FrameCount)
        {
            Reject(ChunkWireCodec.RejectFrameCount(frameCount, header), origin);
            return;
        }

        var result = ChunkWireCodec.Decode(header, samples, _layouts, _pool);
        if (result.IsRejected)
        {
            Reject(result.Rejection, origin);
            return;
        }

        if (result.IsBufferFull)
        {
            _counters.RecordDropped(result.StreamId, IngestDropReason.BufferFull);
            if (_dropThrottle.ShouldWarn(result.StreamId, out var suppressed))
            {
                _logger.ChunkDropped(result.StreamId, origin, IngestDropReason.BufferFull,
                    $"decoded samples in flight fill Ingest:BufferBytes ({_pool.BudgetBytes} bytes); analysis is behind", suppressed);
            }

            return;
        }

        if (!result.IsSuccess)
        {
            throw new InvalidOperationException("The decoder returned neither a chunk, a rejection nor a full buffer.");
        }

        // The queue takes the chunk either way (it disposes one it cannot hold), so nothing below can strand the array.
        var layout = result.Chunk.Layout;
        var endSampleIndex = result.Chunk.EndSampleIndex;
        if (_queue.TryEnqueue(new StreamChunk(result.StreamId, result.Samples, origin)))
        {
            _counters.RecordAccepted(result.StreamId, endSampleIndex);
        }

        if (result.StartsNewLayout)
        {
            _logger.NewSession(result.StreamId, origin, layout.SampleRateHz, layout.ChannelCount);
        }
    }

    private void Reject(WireRejection rejection, string origin)
    {
        _counters.RecordRejected(rejection.Reason, rejection.StreamId, origin);
        var key = (rejection.StreamId ?? origin) + "|" + rejection.Reason;
        if (_rejectionThrottle.ShouldWarn(key, out var suppressed))
        {
            _logger.MessageRejected(origin, rejection.Message, rejection.Reason, suppressed);
        }
    }

    private void DisposeLoops()
    {
        foreach (var loop in _loops)
        {
            loop.Dispose();
        }
    }
}
