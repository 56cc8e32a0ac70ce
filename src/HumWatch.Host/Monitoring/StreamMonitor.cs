using System.Threading.Channels;
using HumWatch.Core.Alerts;
using HumWatch.Core.Analysis;
using HumWatch.Core.Ledger;
using HumWatch.Core.Signals;
using HumWatch.Core.Summaries;
using HumWatch.Host.Ingest;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Monitoring;

/// <summary>
/// Runs one live stream: a bounded queue of chunks and one worker on the thread pool that feeds them through the
/// stream's current session. A change of rate or channels ends the session and starts a new one. The monitor owns every
/// chunk posted to it and releases each exactly once: after the analyser consumed it, or when it cannot be queued.
/// </summary>
internal sealed class StreamMonitor : IAsyncDisposable
{
    private readonly Channel<MonitorItem> _queue;
    private readonly AnalysisOptions _analysis;
    private readonly AlertOptions _alerts;
    private readonly MonitorOptions _options;
    private readonly IAlertEventSink _alertSink;
    private readonly IMinuteRowWriter _rowWriter;
    private readonly ISpectrumPartSink? _spectrumSink;
    private readonly TimeProvider _time;
    private readonly ILogger _logger;
    private readonly Task _worker;
    private StreamSession? _session;
    private long _lastGapCount;
    private long _dropped;
    private long _lastDropWarningTicks = long.MinValue;
    private long _lastInputTicks;
    private volatile bool _closed;

    public StreamMonitor(
        string streamId,
        AnalysisOptions analysis,
        AlertOptions alerts,
        MonitorOptions options,
        IAlertEventSink alertSink,
        IMinuteRowWriter rowWriter,
        TimeProvider time,
        ILogger logger,
        ISpectrumPartSink? spectrumSink = null)
    {
        _spectrumSink = spectrumSink;
        StreamId = streamId;
        _analysis = analysis;
        _alerts = alerts;
        _options = options;
        _alertSink = alertSink;
        _rowWriter = rowWriter;
        _time = time;
        _logger = logger;
        _lastInputTicks = time.GetTimestamp();
        _queue = Channel.CreateBounded<MonitorItem>(new BoundedChannelOptions(options.StreamQueueCapacity)
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

    public bool IsOpen => _session is not null;

    /// <summary>Seconds since the last chunk was offered.</summary>
    public double IdleSeconds => _time.GetElapsedTime(Interlocked.Read(ref _lastInputTicks)).TotalSeconds;

    /// <summary>Takes the chunk: queues it, or releases it and returns false (with the reason) when the queue is full or closed.</summary>
    public bool TryPost(StreamChunk chunk, out IngestDropReason reason)
    {
        Interlocked.Exchange(ref _lastInputTicks, _time.GetTimestamp());
        if (_queue.Writer.TryWrite(MonitorItem.ForChunk(chunk)))
        {
            reason = default;
            return true;
        }

        chunk.Release();
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

    /// <summary>Processes one item on the caller's thread and releases its chunk. The worker calls it; tests may too.</summary>
    internal void Process(MonitorItem item)
    {
        if (item.Chunk is null)
        {
            EndSession(item.CloseReason ?? "closed");
            return;
        }

        try
        {
            Analyse(item.Chunk.Chunk);
        }
        finally
        {
            // The analyser copies what it keeps, so the samples are free once Append returns (also after a failure).
            item.Chunk.Release();
        }
    }

    private void Analyse(SampleChunk chunk)
    {
        if (_session is null || !_session.Layout.IsSameShape(chunk.Layout))
        {
            EndSession("rate or channels changed");
            StartSession(chunk.Layout);
        }

        var session = _session!;
        var framesBefore = session.FramesAnalysed;
        try
        {
            session.Append(chunk);
        }
        catch (Exception ex) when (ex is not OutOfMemoryException)
        {
            // By design: a chunk that fails analysis must not take the stream down; the span restarts with the next one.
            _logger.ChunkFailed(ex, StreamId);
            session.RestartAnalysis();
        }

        FramesAnalysed += session.FramesAnalysed - framesBefore;
        if (session.GapCount != _lastGapCount)
        {
            _lastGapCount = session.GapCount;
            _logger.GapDetected(StreamId, _lastGapCount);
        }

        WriteRows(session.TakeRows());
    }

    private void StartSession(StreamLayout layout)
    {
        var sessionId = $"{StreamId}@{_time.GetUtcNow().UtcTicks}";
        _session = new StreamSession(StreamId, sessionId, layout, _analysis, _alerts, _options.LedgerMinAmplitudeUvRms, _options.LedgerMinLineFrames, _alertSink, _time.GetUtcNow, spectrumSink: _spectrumSink);
        _lastGapCount = 0;
        _logger.SessionStarted(StreamId, layout.ChannelCount, layout.SampleRateHz);
    }

    private void EndSession(string reason)
    {
        if (_session is null)
        {
            return;
        }

        _session.End();
        WriteRows(_session.TakeRows());
        _logger.SessionEnded(StreamId, reason, _session.FramesAnalysed);
        _session = null;
    }

    // The writer keeps rows the store refused and retries them with the next call, so call it even with none.
    private void WriteRows(IReadOnlyList<MinuteRow> rows) => _rowWriter.Write(rows);

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
