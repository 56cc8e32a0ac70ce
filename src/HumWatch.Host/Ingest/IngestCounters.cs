using System.Collections.Concurrent;
using HumWatch.Formats.Wire;

namespace HumWatch.Host.Ingest;

/// <summary>Thread-safe ingest counts per stream (accepted, rejected by reason, dropped, last index), plus rejections that named no valid stream, per endpoint.</summary>
public sealed class IngestCounters
{
    /// <summary>Most streams counted individually (10 000); rejections for further streams count under their endpoint.</summary>
    public const int MaxTrackedStreams = 10_000;

    /// <summary>
    /// Most streams counted that never had a chunk accepted (1000). Past it their counts are added to their endpoints'
    /// and the table starts over, so invented ids cost at most this many cells.
    /// </summary>
    public const int MaxRejectedOnlyStreams = 1000;

    private static readonly int ReasonCount = Enum.GetValues<WireRejectReason>().Length;
    private static readonly int DropReasonCount = Enum.GetValues<IngestDropReason>().Length;

    private readonly ConcurrentDictionary<string, Cell> _streams = new(StringComparer.Ordinal);
    private readonly ConcurrentDictionary<string, Cell> _origins = new(StringComparer.Ordinal);
    private readonly Lock _rejectedOnlyLock = new();
    private readonly Dictionary<string, Cell> _rejectedOnly = new(StringComparer.Ordinal);

    // Process-wide totals: per-stream cells are forgotten when a stream goes idle, these never go down (metrics).
    private readonly long[] _rejectedTotals = new long[ReasonCount];
    private readonly long[] _droppedTotals = new long[DropReasonCount];
    private long _acceptedTotal;

    /// <summary>Counts an accepted chunk and remembers its end index (one past its last sample).</summary>
    public void RecordAccepted(string streamId, long endSampleIndex)
    {
        Interlocked.Increment(ref _acceptedTotal);
        var cell = StreamCell(streamId);
        if (cell is null)
        {
            return;
        }

        Interlocked.Increment(ref cell.Accepted);
        Interlocked.Exchange(ref cell.LastEndSampleIndex, endSampleIndex);
    }

    /// <summary>Counts a refused message under its stream, or under its endpoint when no valid stream was named.</summary>
    public void RecordRejected(WireRejectReason reason, string? streamId, string origin)
    {
        ArgumentNullException.ThrowIfNull(origin);
        Interlocked.Increment(ref _rejectedTotals[(int)reason]);
        if (streamId is null)
        {
            Interlocked.Increment(ref _origins.GetOrAdd(origin, static _ => new Cell()).Rejected[(int)reason]);
        }
        else if (_streams.TryGetValue(streamId, out var known))
        {
            Interlocked.Increment(ref known.Rejected[(int)reason]);
        }
        else
        {
            RecordRejectedOnly(reason, streamId, origin);
        }
    }

    /// <summary>Streams counted now that never had a chunk accepted (at most <see cref="MaxRejectedOnlyStreams"/>).</summary>
    public int RejectedOnlyStreamCount
    {
        get
        {
            lock (_rejectedOnlyLock)
            {
                return _rejectedOnly.Count;
            }
        }
    }

    private void RecordRejectedOnly(WireRejectReason reason, string streamId, string origin)
    {
        lock (_rejectedOnlyLock)
        {
            if (!_rejectedOnly.TryGetValue(streamId, out var cell))
            {
                if (_rejectedOnly.Count >= MaxRejectedOnlyStreams)
                {
                    // A flood of invented ids: keep their counts, under their endpoints, and forget the ids.
                    foreach (var entry in _rejectedOnly.Values)
                    {
                        var into = _origins.GetOrAdd(entry.Origin!, static _ => new Cell());
                        for (var i = 0; i < ReasonCount; i++)
                        {
                            Interlocked.Add(ref into.Rejected[i], entry.Rejected[i]);
                        }
                    }

                    _rejectedOnly.Clear();
                }

                cell = new Cell { Origin = origin };
                _rejectedOnly.Add(streamId, cell);
            }

            Interlocked.Increment(ref cell.Rejected[(int)reason]);
        }
    }

    /// <summary>Counts a good chunk of a stream that was not admitted (so has no counts of its own) under its endpoint.</summary>
    public void RecordDroppedUnattributed(string origin, IngestDropReason reason)
    {
        ArgumentNullException.ThrowIfNull(origin);
        CheckReason(reason);
        Interlocked.Increment(ref _droppedTotals[(int)reason]);
        Interlocked.Increment(ref _origins.GetOrAdd(origin, static _ => new Cell()).DroppedFor[(int)reason]);
    }

    /// <summary>Forgets a stream's counts (it went idle and its slot was given up); it counts from zero when it returns.</summary>
    public void Forget(string streamId) => _streams.TryRemove(streamId, out _);

    /// <summary>Streams counted individually now.</summary>
    public int TrackedStreamCount => _streams.Count;

    /// <summary>Counts a good chunk dropped before analysis, with the reason.</summary>
    public void RecordDropped(string streamId, IngestDropReason reason)
    {
        CheckReason(reason);
        Interlocked.Increment(ref _droppedTotals[(int)reason]);
        var cell = StreamCell(streamId);
        if (cell is not null)
        {
            Interlocked.Increment(ref cell.DroppedFor[(int)reason]);
        }
    }

    /// <summary>Chunks accepted since start, every stream.</summary>
    public long AcceptedTotal => Interlocked.Read(ref _acceptedTotal);

    /// <summary>Messages refused since start for <paramref name="reason"/>, every stream and endpoint.</summary>
    public long RejectedTotal(WireRejectReason reason) => Interlocked.Read(ref _rejectedTotals[(int)reason]);

    /// <summary>Good chunks dropped since start for <paramref name="reason"/>, every stream and endpoint.</summary>
    public long DroppedTotal(IngestDropReason reason)
    {
        CheckReason(reason);
        return Interlocked.Read(ref _droppedTotals[(int)reason]);
    }

    /// <summary>Counts of one stream, or null when it was never seen (or forgotten).</summary>
    public IngestStreamCounts? Get(string streamId)
    {
        if (_streams.TryGetValue(streamId, out var cell))
        {
            return cell.ToStreamCounts(streamId);
        }

        lock (_rejectedOnlyLock)
        {
            return _rejectedOnly.TryGetValue(streamId, out var rejected) ? rejected.ToStreamCounts(streamId) : null;
        }
    }

    /// <summary>Counts of every stream seen, ordered by stream id.</summary>
    public IReadOnlyList<IngestStreamCounts> Snapshot()
    {
        var result = new List<IngestStreamCounts>(_streams.Count);
        foreach (var pair in _streams)
        {
            result.Add(pair.Value.ToStreamCounts(pair.Key));
        }

        lock (_rejectedOnlyLock)
        {
            foreach (var pair in _rejectedOnly)
            {
                if (!_streams.ContainsKey(pair.Key))
                {
                    result.Add(pair.Value.ToStreamCounts(pair.Key));
                }
            }
        }

        result.Sort(static (a, b) => string.CompareOrdinal(a.StreamId, b.StreamId));
        return result;
    }

    /// <summary>Rejections that named no valid stream, per endpoint, ordered by endpoint.</summary>
    public IReadOnlyList<IngestOriginRejections> UnattributedRejections()
    {
        var result = new List<IngestOriginRejections>(_origins.Count);
        foreach (var pair in _origins)
        {
            result.Add(new IngestOriginRejections(pair.Key, pair.Value.RejectedByReason()) { DroppedByReason = pair.Value.DroppedByReason() });
        }

        result.Sort(static (a, b) => string.CompareOrdinal(a.Origin, b.Origin));
        return result;
    }

    private static void CheckReason(IngestDropReason reason)
    {
        if ((uint)reason >= (uint)DropReasonCount)
        {
            throw new ArgumentOutOfRangeException(nameof(reason), reason, "Must be a defined IngestDropReason.");
        }
    }

    private Cell? StreamCell(string streamId)
    {
        ArgumentNullException.ThrowIfNull(streamId);
        if (_streams.TryGetValue(streamId, out var cell))
        {
            return cell;
        }

        // The cap keeps a sender that invents stream ids from growing memory without bound.
        if (_streams.Count >= MaxTrackedStreams)
        {
            return null;
        }

        lock (_rejectedOnlyLock)
        {
            // A stream's first good chunk: its earlier rejections move with it.
            var earlier = _rejectedOnly.Remove(streamId, out var rejected) ? rejected : null;
            return _streams.GetOrAdd(streamId, _ => earlier is null ? new Cell() : new Cell(earlier.Rejected));
        }
    }

    private sealed class Cell
    {
        public long Accepted;
        public long LastEndSampleIndex = -1;
        public readonly long[] Rejected;

        public Cell(long[]? rejected = null) => Rejected = rejected ?? new long[ReasonCount];

        /// <summary>The endpoint of a stream that never had a chunk accepted, where its counts go when it is forgotten.</summary>
        public string? Origin { get; init; }

        public readonly long[] DroppedFor = new long[DropReasonCount];

        public Dictionary<WireRejectReason, long> RejectedByReason() => NonZero<WireRejectReason>(Rejected);

        public Dictionary<IngestDropReason, long> DroppedByReason() => NonZero<IngestDropReason>(DroppedFor);

        /// <summary>The counts above zero, keyed by the reason each index stands for.</summary>
        private static Dictionary<TReason, long> NonZero<TReason>(long[] counts)
            where TReason : struct, Enum
        {
            var map = new Dictionary<TReason, long>();
            for (var i = 0; i < counts.Length; i++)
            {
                var count = Interlocked.Read(ref counts[i]);
                if (count > 0)
                {
                    map[(TReason)Enum.ToObject(typeof(TReason), i)] = count;
                }
            }

            return map;
        }

        public IngestStreamCounts ToStreamCounts(string streamId)
        {
            var dropped = DroppedByReason();
            return new(
                streamId,
                Interlocked.Read(ref Accepted),
                dropped.Values.Sum(),
                Interlocked.Read(ref LastEndSampleIndex),
                RejectedByReason(),
                dropped);
        }
    }
}

/// <summary>Counts of one stream at the moment of the snapshot.</summary>
/// <param name="StreamId">Stream id.</param>
/// <param name="Accepted">Chunks decoded and queued.</param>
/// <param name="Dropped">Good chunks dropped before analysis, all reasons.</param>
/// <param name="LastEndSampleIndex">One past the last sample of the latest accepted chunk; -1 before the first.</param>
/// <param name="Rejected">Refused messages by reason (reasons with zero count are absent).</param>
/// <param name="DroppedByReason">Dropped chunks by reason (reasons with zero count are absent).</param>
public sealed record IngestStreamCounts(string StreamId, long Accepted, long Dropped, long LastEndSampleIndex, IReadOnlyDictionary<WireRejectReason, long> Rejected, IReadOnlyDictionary<IngestDropReason, long> DroppedByReason)
{
    /// <summary>Dropped chunks for one reason.</summary>
    public long DroppedFor(IngestDropReason reason) => DroppedByReason.TryGetValue(reason, out var count) ? count : 0;

    /// <summary>All refused messages of the stream.</summary>
    public long RejectedTotal => Rejected.Values.Sum();

    /// <summary>Refused messages for one reason.</summary>
    public long RejectedFor(WireRejectReason reason) => Rejected.TryGetValue(reason, out var count) ? count : 0;
}

/// <summary>Refused messages that named no counted stream, and dropped chunks of streams not admitted, for one endpoint.</summary>
/// <param name="Origin">Endpoint address.</param>
/// <param name="Rejected">Counts by reason.</param>
public sealed record IngestOriginRejections(string Origin, IReadOnlyDictionary<WireRejectReason, long> Rejected)
{
    /// <summary>Refused messages for one reason.</summary>
    public long RejectedFor(WireRejectReason reason) => Rejected.TryGetValue(reason, out var count) ? count : 0;

    /// <summary>Good chunks of streams that were not admitted, by reason (reasons with zero count are absent).</summary>
    public IReadOnlyDictionary<IngestDropReason, long> DroppedByReason { get; init; } = new Dictionary<IngestDropReason, long>();

    /// <summary>Dropped chunks for one reason.</summary>
    public long DroppedFor(IngestDropReason reason) => DroppedByReason.TryGetValue(reason, out var count) ? count : 0;
}
