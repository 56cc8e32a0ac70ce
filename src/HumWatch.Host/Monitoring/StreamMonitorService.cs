using System.Collections.Concurrent;
using HumWatch.Host.Health;
using HumWatch.Host.Ingest;
using HumWatch.Host.Publishing;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Options;

namespace HumWatch.Host.Monitoring;

/// <summary>
/// Takes chunks from the ingest queue and hands each to its stream's monitor; publishes a status per stream every
/// interval and closes streams that went quiet.
/// </summary>
internal sealed class StreamMonitorService : BackgroundService
{
    private readonly IngestQueue _queue;
    private readonly IngestCounters _counters;
    private readonly StreamSessionFactory _sessions;
    private readonly MonitorOptions _options;
    private readonly PublishOptions _publish;
    private readonly IMessagePublisher _publisher;
    private readonly TimeProvider _time;
    private readonly ILoggerFactory _loggerFactory;
    private readonly ILogger _logger;
    private readonly ConcurrentDictionary<string, StreamMonitor> _monitors = new(StringComparer.Ordinal);
    private readonly WarningThrottle _tooManyThrottle;
    private readonly ResourceStatus? _resources;
    private readonly string? _instance;
    private long _retiredFrames;

    /// <param name="resources">The store and folder states each status message carries; null leaves them out.</param>
    /// <param name="instance">This instance's name, written into each status message; none by default.</param>
    public StreamMonitorService(
        IngestQueue queue,
        IngestCounters counters,
        StreamSessionFactory sessions,
        IOptions<PublishOptions> publish,
        IMessagePublisher publisher,
        ILoggerFactory loggerFactory,
        ResourceStatus? resources = null,
        IOptions<Configuration.InstanceOptions>? instance = null)
    {
        _resources = resources;
        _instance = instance?.Value.Name;
        _queue = queue;
        _counters = counters;
        _sessions = sessions;
        _options = sessions.Monitor;
        _publish = publish.Value;
        _publisher = publisher;
        _time = sessions.Time;
        _loggerFactory = loggerFactory;
        _logger = loggerFactory.CreateLogger<StreamMonitorService>();
        _tooManyThrottle = new WarningThrottle(_time, TimeSpan.FromSeconds(10), maxPerInterval: 20);
    }

    /// <summary>Streams currently held.</summary>
    public IReadOnlyCollection<StreamMonitor> Monitors => (IReadOnlyCollection<StreamMonitor>)_monitors.Values;

    /// <summary>Frames analysed since start over every stream, retired ones included (a monotonic count for metrics).</summary>
    public long FramesAnalysedTotal
    {
        get
        {
            var total = Interlocked.Read(ref _retiredFrames);
            foreach (var monitor in _monitors.Values)
            {
                total += monitor.FramesAnalysed;
            }

            return total;
        }
    }

    protected override Task ExecuteAsync(CancellationToken stoppingToken) =>
        Task.WhenAll(RouteAsync(stoppingToken), HousekeepAsync(stoppingToken));

    public override async Task StopAsync(CancellationToken cancellationToken)
    {
        // Stop taking input first, then let every stream finish what it holds and close its alerts and minutes.
        _queue.Complete();
        await base.StopAsync(cancellationToken).ConfigureAwait(false);

        // Chunks still in the ingest queue go to their streams (or are disposed and counted), so nothing is lost unseen.
        while (_queue.Reader.TryRead(out var item))
        {
            Route(item);
        }

        foreach (var monitor in _monitors.Values)
        {
            await monitor.DisposeAsync().ConfigureAwait(false);
        }

        _monitors.Clear();
    }

    /// <summary>Takes one chunk: hands it to its stream's monitor, creating that on first sight, or disposes and counts it when no monitor takes it.</summary>
    internal void Route(StreamChunk item)
    {
        var refused = Post(item);
        if (refused is { } reason)
        {
            // The one place a routed chunk ends unanalysed.
            item.Dispose();
            _counters.RecordDropped(item.StreamId, reason);
        }
    }

    /// <summary>Null when the stream's monitor took the chunk; else why not (the chunk is still the caller's).</summary>
    private IngestDropReason? Post(StreamChunk item)
    {
        if (!_monitors.TryGetValue(item.StreamId, out var monitor))
        {
            if (_monitors.Count >= _options.MaxStreams)
            {
                if (_tooManyThrottle.ShouldWarn(item.StreamId, out _))
                {
                    _logger.TooManyStreams(item.StreamId, _options.MaxStreams);
                }

                return IngestDropReason.TooManyStreams;
            }

            monitor = _monitors.GetOrAdd(item.StreamId, id => new StreamMonitor(id, _sessions, _loggerFactory.CreateLogger($"HumWatch.Stream.{id}")));
        }

        if (monitor.TryPost(item, out var reason))
        {
            return null;
        }

        // A monitor retired for idleness between the look-up and the post: the stream is back, so give it a new one.
        if (reason == IngestDropReason.ShuttingDown && !_queue.IsCompleted && !_monitors.ContainsKey(item.StreamId))
        {
            return Post(item);
        }

        return reason;
    }

    /// <summary>Publishes one status message per stream.</summary>
    internal void PublishStatus()
    {
        var now = _time.GetUtcNow();
        var resources = _resources is null ? null : new ResourceSnapshot(_resources);
        foreach (var monitor in _monitors.Values)
        {
            var status = StatusOf(monitor, _counters.Get(monitor.StreamId), now, resources) with { Instance = _instance };
            _publisher.TryPublish(Messages.StatusKind, monitor.StreamId, Messages.For(status));
        }
    }

    /// <summary>One stream's status as taken at <paramref name="now"/>, with the store and folder states when given.</summary>
    internal static StatusMessage StatusOf(StreamMonitor monitor, IngestStreamCounts? counts, DateTimeOffset now, ResourceSnapshot? resources)
    {
        double? lag = monitor.LastFrameEndUtcFromStream is { } end ? Math.Max(0, (now - end).TotalSeconds) : null;
        return new StatusMessage(
            Messages.Version,
            monitor.StreamId,
            now,
            monitor.FramesAnalysed,
            monitor.LinesInLastFrame,
            monitor.ActiveAlertCount,
            counts?.Accepted ?? 0,
            counts?.Dropped ?? monitor.DroppedChunks,
            counts?.RejectedTotal ?? 0,
            lag)
        {
            MainsHz = double.IsFinite(monitor.GridNominalHz) ? monitor.GridNominalHz : null,
            MainsFrom = Checking.RecordingChecker.GridOriginName(monitor.GridFrom),
            MainsEstimateHz = double.IsFinite(monitor.MainsEstimateHz) ? monitor.MainsEstimateHz : null,
            Store = resources?.Store,
            LogFolder = resources?.LogFolder,
            InboxFolder = resources?.InboxFolder,
        };
    }

    /// <summary>
    /// Closes the sessions of streams idle longer than the configured time, and retires the monitors whose session is
    /// already closed and that stayed idle: a slot of Monitor:MaxStreams is not held for ever by a stream that left.
    /// </summary>
    internal void CloseIdleStreams()
    {
        foreach (var pair in _monitors)
        {
            var monitor = pair.Value;
            if (monitor.IdleSeconds < _options.IdleCloseSeconds)
            {
                continue;
            }

            if (monitor.IsOpen)
            {
                monitor.RequestClose($"no data for {_options.IdleCloseSeconds:0} s");
            }
            else if (_monitors.TryRemove(pair))
            {
                Interlocked.Add(ref _retiredFrames, monitor.FramesAnalysed);
                _ = RetireAsync(monitor);
            }
        }
    }

    private async Task RetireAsync(StreamMonitor monitor)
    {
        try
        {
            await monitor.DisposeAsync().ConfigureAwait(false);
        }
        catch (Exception ex) when (ex is not OutOfMemoryException)
        {
            _logger.RetireFailed(ex, monitor.StreamId);
        }
    }

    private async Task RouteAsync(CancellationToken stoppingToken)
    {
        try
        {
            await foreach (var item in _queue.Reader.ReadAllAsync(stoppingToken).ConfigureAwait(false))
            {
                Route(item);
            }
        }
        catch (OperationCanceledException) when (stoppingToken.IsCancellationRequested)
        {
            // Shutting down: StopAsync drains the monitors.
        }
    }

    private async Task HousekeepAsync(CancellationToken stoppingToken)
    {
        var interval = TimeSpan.FromSeconds(Math.Min(_publish.StatusIntervalSeconds, _options.IdleCloseSeconds));
        var sinceStatus = TimeSpan.Zero;
        while (!stoppingToken.IsCancellationRequested)
        {
            try
            {
                await Task.Delay(interval, _time, stoppingToken).ConfigureAwait(false);
            }
            catch (OperationCanceledException)
            {
                return;
            }

            sinceStatus += interval;
            CloseIdleStreams();
            if (sinceStatus.TotalSeconds + 1e-9 >= _publish.StatusIntervalSeconds)
            {
                sinceStatus = TimeSpan.Zero;
                try
                {
                    PublishStatus();
                }
                catch (Exception ex) when (ex is not OutOfMemoryException)
                {
                    _logger.StatusFailed(ex);
                }
            }
        }
    }
}
