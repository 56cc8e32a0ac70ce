using System.Threading.Channels;
using HumWatch.Core.Analysis;
using HumWatch.Core.Signals;
using HumWatch.Host.Ingest;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Monitoring;

/// <summary>
/// Runs one live stream: a bounded queue of chunks and one worker on the thread pool that feeds them to the stream's
/// analyser, whose frames go to the current session. A change of rate or channels ends the session and starts a new one
/// with a new analyser. A chunk the monitor accepts is its own, and <see cref="Process"/> disposes it once the analyser
/// consumed it; a refused chunk stays with the caller.
/// </summary>
internal sealed class StreamMonitor : IAsyncDisposable
{
    private readonly Channel<MonitorItem> _queue;
    private readonly StreamSessionFactory _sessions;
    private readonly MonitorOptions _options;
    /// <summary>Shortest interval between two gap lines of one stream.</summary>
    private static readonly TimeSpan GapLogInterval = TimeSpan.FromSeconds(10);

    private readonly TimeProvider _time;
    private long _lastGapLogTicks;
    private readonly ILogger _logger;
    private readonly Task _worker;
    private StreamAnalyzer? _analyzer;
    private StreamSession? _session;
    private long _lastGapCount;
    private long _dropped;
    private long _lastDropWarningTicks = long.MinValue;
    private long _lastInputTicks;
    private volatile bool _closed;

    /// <param name="sessions">Makes the stream's sessions; its options, sinks and clock are the monitor's too.</param>
    public StreamMonitor(string streamId, StreamSessionFactory sessions, ILogger logger)
    {
        StreamId = streamId;
        _sessions = sessions;
        _options = sessions.Monitor;
        _time = sessions.Time;
        _logger = logger;
        _lastInputTicks = _time.GetTimestamp();
        _queue = Channel.CreateBounded<MonitorItem>(new BoundedChannelOptions(_options.StreamQueueCapacity)
        {
            SingleReader = true,
            SingleWriter = false,
            FullMode = BoundedChannelFullMode.Wait,
        });
        _worker = Task.Run(RunAsync);
    }

    public string StreamId { get; }

    /// <summary>Frames analysed over all sessions.</summary>
    public long FramesAnalysed { get; private set; }

    public int LinesInLastFrame => _session?.LinesInLastFrame ?? 0;

    public int ActiveAlertCount => _session?.ActiveAlertCount ?? 0;

    public long DroppedChunks => Interlocked.Read(ref _dropped);

    public DateTimeOffset? LastFrameEndUtcFromStream => _session?.LastFrameEndUtcFromStream;

    /// <summary>The grid the current session attributes against (NaN while unknown); read by the status publisher.</summary>
    public double GridNominalHz => _session?.GridNominalHz ?? double.NaN;

    public Core.Tracking.GridOrigin GridFrom => _session?.GridFrom ?? Core.Tracking.GridOrigin.Unknown;

    /// <summary>The grid fundamental the current session measured last, Hz; NaN when none.</summary>
    public double MainsEstimateHz => _session?.LastMainsEstimateHz ?? double.NaN;

    public bool IsOpen => _session is not null;

    /// <summary>Seconds since the last chunk was offered.</summary>
    public double IdleSeconds => _time.GetElapsedTime(Interlocked.Read(ref _lastInputTicks)).TotalSeconds;

    /// <summary>Queues the chunk and takes it; or returns false (with the reason) when the queue is full or closed, and the caller keeps it.</summary>
    public bool TryPost(StreamChunk chunk, out IngestDropReason reason)
    {
        Interlocked.Exchange(ref _lastInputTicks, _time.GetTimestamp());
        if (_queue.Writer.TryWrite(MonitorItem.ForChunk(chunk)))
        {
            reason = default;
            return true;
        }

        if (_closed)
        {
            reason = IngestDropReason.ShuttingDown;
            return false;
        }

        reason = IngestDropReason.StreamQueueFull;
        var dropped = Interlocked.Increment(ref _dropped);
        var now = _time.GetTimestamp();
        var last = Interlocked.Read(ref _lastDropWarningTicks);
        if (last == long.MinValue || _time.GetElapsedTime(last, now) >= TimeSpan.FromSeconds(10))
        {
            Interlocked.Exchange(ref _lastDropWarningTicks, now);
            _logger.ChunksDropped(StreamId, dropped, _options.StreamQueueCapacity);
        }

        return false;
    }

    /// <summary>Asks the worker to end the current session (idle stream); chunks that follow start a new one.</summary>
    public void RequestClose(string reason) => _queue.Writer.TryWrite(MonitorItem.ForClose(reason));

    /// <summary>Finishes queued work, ends the session and stops the worker.</summary>
    public async ValueTask DisposeAsync()
    {
        _closed = true;
        _queue.Writer.TryWrite(MonitorItem.ForClose("service stopping"));
        _queue.Writer.TryComplete();
        await _worker.ConfigureAwait(false);

        // The close item finds no room when the queue was full; the worker has stopped, so end the session here.
        EndSession("service stopping");
    }

    /// <summary>Processes one item on the caller's thread and disposes its chunk. The worker calls it; tests may too.</summary>
    internal void Process(MonitorItem item)
    {
        if (item.Chunk is null)
        {
            EndSession(item.CloseReason ?? "closed");
            return;
        }

        // The analyser copies what it keeps, so the samples are free once Append returns (also after a failure).
        using var chunk = item.Chunk;
        Analyse(chunk.Chunk);
    }

    private void Analyse(SampleChunk chunk)
    {
        if (_session is null || !_session.Layout.IsSameShape(chunk.Layout))
        {
            EndSession("rate or channels changed");
            StartSession(chunk.Layout);
        }

        var analyzer = _analyzer!;
        var session = _session!;
        var framesBefore = session.FramesAnalysed;
        try
        {
            analyzer.Append(chunk, session);
        }
        catch (Exception ex) when (ex is not OutOfMemoryException)
        {
            // By design: a chunk that fails analysis must not take the stream down; the span restarts with the next one.
            _logger.ChunkFailed(ex, StreamId);
            analyzer.Reset();
        }

        FramesAnalysed += session.FramesAnalysed - framesBefore;
        if (analyzer.GapCount != _lastGapCount)
        {
            _lastGapCount = analyzer.GapCount;

            // The first gap, then at most one line per interval: the count in the line says how many came between.
            var now = _time.GetTimestamp();
            if (_lastGapLogTicks == 0 || _time.GetElapsedTime(_lastGapLogTicks, now) >= GapLogInterval)
            {
                _lastGapLogTicks = now;
                _logger.GapDetected(StreamId, _lastGapCount);
            }
        }
    }

    private void StartSession(StreamLayout layout)
    {
        // The analyser first: a layout it cannot take leaves no session behind.
        _analyzer = new StreamAnalyzer(layout, _sessions.Analysis);
        _session = _sessions.CreateLive(StreamId, layout);
        _lastGapCount = 0;
        _logger.SessionStarted(StreamId, layout.ChannelCount, layout.SampleRateHz);
    }

    private void EndSession(string reason)
    {
        if (_session is null)
        {
            return;
        }

        // Minute rows go straight to the ledger writer, which writes them (and retries refused ones) on its own.
        _session.End();
        _logger.SessionEnded(StreamId, reason, _session.FramesAnalysed);
        _session = null;
        _analyzer = null;
    }

    private async Task RunAsync()
    {
        await foreach (var item in _queue.Reader.ReadAllAsync().ConfigureAwait(false))
        {
            try
            {
                Process(item);
            }
            catch (Exception ex) when (ex is not OutOfMemoryException)
            {
                // By design: one bad chunk or a failing sink must not stop the stream's worker.
                _logger.ChunkFailed(ex, StreamId);
            }
        }
    }

    internal readonly record struct MonitorItem(StreamChunk? Chunk, string? CloseReason)
    {
        public static MonitorItem ForChunk(StreamChunk chunk) => new(chunk, null);

        public static MonitorItem ForClose(string reason) => new(null, reason);
    }
}
