using System.Diagnostics.CodeAnalysis;
using System.Threading.Channels;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Ingest;

/// <summary>
/// Bounded hand-off from the ingest sockets to the analysis. A full queue never blocks a socket: the chunk is
/// disposed, dropped, counted per stream in <see cref="IngestCounters"/>, and a rate-limited warning is logged.
/// A chunk read from <see cref="Reader"/> belongs to the reader, who must pass it on or dispose it.
/// </summary>
[SuppressMessage("Naming", "CA1711:Identifiers should not have incorrect suffix", Justification = "It is a queue; the name is part of the agreed host contract.")]
public sealed class IngestQueue
{
    private readonly Channel<StreamChunk> _channel;
    private readonly IngestCounters _counters;
    private readonly ILogger _logger;
    private readonly WarningThrottle _throttle;
    private int _peakCount;
    private volatile bool _completed;

    /// <param name="capacity">Chunks held, 1 to 1 000 000.</param>
    /// <param name="counters">Where drops are counted.</param>
    /// <param name="logger">Where drops are reported.</param>
    /// <param name="timeProvider">Clock for the warning rate limit.</param>
    /// <param name="warningInterval">Shortest interval between drop warnings for one stream.</param>
    /// <param name="maxWarningsPerInterval">Most drop warnings per interval over all streams; the rest are summed up in one line.</param>
    public IngestQueue(int capacity, IngestCounters counters, ILogger<IngestQueue> logger, TimeProvider timeProvider, TimeSpan warningInterval, int maxWarningsPerInterval = int.MaxValue)
    {
        if (capacity is < 1 or > 1_000_000)
        {
            throw new ArgumentOutOfRangeException(nameof(capacity), capacity, "Must be between 1 and 1 000 000 chunks.");
        }

        ArgumentNullException.ThrowIfNull(counters);
        ArgumentNullException.ThrowIfNull(logger);
        Capacity = capacity;
        _counters = counters;
        _logger = logger;
        _throttle = new WarningThrottle(timeProvider, warningInterval, maxWarningsPerInterval,
            (count, interval) => logger.WarningsSuppressed(count, interval.TotalSeconds, maxWarningsPerInterval));
        _channel = Channel.CreateBounded<StreamChunk>(new BoundedChannelOptions(capacity)
        {
            FullMode = BoundedChannelFullMode.Wait,
            SingleReader = false,
            SingleWriter = false,
        });
    }

    /// <summary>Chunks the queue holds at most.</summary>
    public int Capacity { get; }

    /// <summary>Chunks waiting now.</summary>
    public int Count => _channel.Reader.Count;

    /// <summary>Most chunks that were waiting at once.</summary>
    public int PeakCount => Volatile.Read(ref _peakCount);

    /// <summary>The consumer side; a chunk read from it belongs to the reader.</summary>
    public ChannelReader<StreamChunk> Reader => _channel.Reader;

    /// <summary>Takes the chunk: queues it without waiting, or, when the queue is full (or completed), disposes, counts and reports it.</summary>
    /// <returns>True when queued (the queue's reader now owns the chunk).</returns>
    public bool TryEnqueue(StreamChunk chunk)
    {
        ArgumentNullException.ThrowIfNull(chunk);
        if (_channel.Writer.TryWrite(chunk))
        {
            var count = _channel.Reader.Count;
            if (count > Volatile.Read(ref _peakCount))
            {
                // A lost race only under-reports the peak by a chunk; it is a diagnostic figure.
                Volatile.Write(ref _peakCount, count);
            }

            return true;
        }

        chunk.Dispose();
        var reason = _completed ? IngestDropReason.ShuttingDown : IngestDropReason.QueueFull;
        _counters.RecordDropped(chunk.StreamId, reason);
        if (_throttle.ShouldWarn(chunk.StreamId, out var suppressed))
        {
            _logger.ChunkDropped(chunk.StreamId, chunk.Origin, reason, DropDetail(reason), suppressed);
        }

        return false;
    }

    /// <summary>True once <see cref="Complete"/> was called.</summary>
    public bool IsCompleted => _completed;

    /// <summary>Marks the end of input; readers finish after the queued chunks.</summary>
    public void Complete()
    {
        _completed = true;
        _channel.Writer.TryComplete();
    }

    private string DropDetail(IngestDropReason reason) => reason == IngestDropReason.QueueFull
        ? $"the ingest queue holds its capacity of {Capacity} chunks (Ingest:QueueCapacity)"
        : "the service is stopping";
}
