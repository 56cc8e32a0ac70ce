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
    private readonly WarningThrottle _throttle;
    private readonly StreamLayoutCache _layouts = new();
    private readonly StreamAdmission _admission;
    private readonly List<IngestSocketLoop> _loops = [];

    /// <param name="monitor">Monitor:MaxStreams and Monitor:IdleCloseSeconds bound the streams admitted; the defaults when not given.</param>
    public SocketIngestService(IOptions<IngestOptions> options, IngestQueue queue, IngestCounters counters, SampleBufferPool pool, ILogger<SocketIngestService> logger, TimeProvider timeProvider, IOptions<Monitoring.MonitorOptions>? monitor = null)
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
        _throttle = new WarningThrottle(timeProvider, _options.WarningInterval, _options.MaxWarningsPerInterval,
            (count, interval) => _logger.WarningsSuppressed(count, interval.TotalSeconds, _options.MaxWarningsPerInterval));
        var streams = monitor?.Value ?? new Monitoring.MonitorOptions();
        _admission = new StreamAdmission(streams.MaxStreams, streams.IdleCloseSeconds, _options.RateAllowance, _options.RateBurstSeconds, timeProvider, Forget);
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

    /// <summary>Streams the ingest holds state for now (at most Monitor:MaxStreams).</summary>
    internal int AdmittedStreamCount => _admission.Count;

    /// <summary>Stream layouts remembered now.</summary>
    internal int RememberedLayoutCount => _layouts.Count;

    /// <summary>Warnings held back by the throttle so far.</summary>
    internal long SuppressedWarnings => _throttle.SuppressedTotal;

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
                var loop = new IngestSocketLoop(endpoints[i], i, _options, _logger, _throttle);
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
        if (header.Length > _options.MaxHeaderBytes)
        {
            // Not parsed at all: the point of the limit is that a huge header costs nothing to refuse. Checked before
            // the message size, whose refusal reads the stream id out of the header.
            Reject(new WireRejection(WireRejectReason.TooLarge, null,
                $"header frame has {header.Length} bytes, over {IngestOptions.SectionName}:MaxHeaderBytes ({_options.MaxHeaderBytes} bytes)"), origin);
            return;
        }

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
            if (_throttle.ShouldWarn(result.StreamId + "|drop", out var suppressed))
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

        var over = OverLimit(result);
        if (over is not null)
        {
            Refuse(result);
            Reject(over, origin);
            return;
        }

        var refused = _admission.Admit(result.StreamId, result.Chunk.Layout.SampleRateHz, result.Chunk.SamplesPerChannel);
        if (refused is { } reason)
        {
            Refuse(result);
            Drop(result.StreamId, reason, origin);
            return;
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
        if (_throttle.ShouldWarn(key, out var suppressed))
        {
            _logger.MessageRejected(origin, rejection.Message, rejection.Reason, suppressed);
        }
    }

    /// <summary>The refusal of a decoded chunk past the configured channel, rate or length limits, or null.</summary>
    private WireRejection? OverLimit(WireDecodeResult result)
    {
        var chunk = result.Chunk!;
        var layout = chunk.Layout;
        var streamId = result.StreamId!;
        const string Section = IngestOptions.SectionName;
        if (layout.ChannelCount > _options.MaxChannels)
        {
            return Rejection(WireRejectReason.BadChannels, streamId, $"{layout.ChannelCount} channels, over {Section}:MaxChannels ({_options.MaxChannels})");
        }

        if (layout.SampleRateHz > _options.MaxSampleRateHz)
        {
            return Rejection(WireRejectReason.BadSampleRate, streamId,
                $"'fs' = {layout.SampleRateHz.ToString(System.Globalization.CultureInfo.InvariantCulture)} Hz, over {Section}:MaxSampleRateHz ({_options.MaxSampleRateHz.ToString(System.Globalization.CultureInfo.InvariantCulture)} Hz)");
        }

        if (chunk.SamplesPerChannel > _options.MaxChunkSamples)
        {
            return Rejection(WireRejectReason.TooLarge, streamId, $"{chunk.SamplesPerChannel} samples per channel, over {Section}:MaxChunkSamples ({_options.MaxChunkSamples})");
        }

        return null;
    }

    private static WireRejection Rejection(WireRejectReason reason, string streamId, string problem) =>
        new(reason, streamId, $"stream '{streamId}': {problem}");

    /// <summary>Gives a decoded chunk's samples back, and the layout it made, so a refused chunk leaves nothing behind.</summary>
    private void Refuse(WireDecodeResult result)
    {
        result.Samples!.Dispose();
        if (result.StartsNewLayout)
        {
            _layouts.Remove(result.StreamId!);
        }
    }

    private void Drop(string streamId, IngestDropReason reason, string origin)
    {
        string detail;
        if (reason == IngestDropReason.TooManyStreams)
        {
            // Not admitted: counted under the endpoint, so the id leaves no state.
            _counters.RecordDroppedUnattributed(origin, reason);
            detail = "the service holds Monitor:MaxStreams streams, none idle";
        }
        else
        {
            _counters.RecordDropped(streamId, reason);
            detail = $"over {IngestOptions.SectionName}:RateAllowance ({_options.RateAllowance.ToString(System.Globalization.CultureInfo.InvariantCulture)}) × its declared rate after {IngestOptions.SectionName}:RateBurstSeconds ({_options.RateBurstSeconds.ToString(System.Globalization.CultureInfo.InvariantCulture)} s) of samples";
        }

        var key = reason == IngestDropReason.TooManyStreams ? origin + "|too-many" : streamId + "|drop";
        if (_throttle.ShouldWarn(key, out var suppressed))
        {
            _logger.ChunkDropped(streamId, origin, reason, detail, suppressed);
        }
    }

    /// <summary>A stream went idle and gave up its slot: forget its layout and counts too.</summary>
    private void Forget(string streamId)
    {
        _layouts.Remove(streamId);
        _counters.Forget(streamId);
    }

    private void DisposeLoops()
    {
        foreach (var loop in _loops)
        {
            loop.Dispose();
        }
    }
}
