namespace HumWatch.Host.Ingest;

/// <summary>
/// The ingest's only per-stream state: which streams are admitted and how much each may still send. A stream is
/// admitted on its first chunk that passed every check (so a refused header allocates nothing), up to a fixed number
/// of streams; a stream idle for the idle time is forgotten when room is needed. Each admitted stream has a token
/// bucket in samples per channel: it starts with burst × rate, refills at allowance × rate per second up to that, and a
/// chunk is admitted while the bucket is above zero (a chunk may overdraw it, so any chunk size within the limits gets
/// through, while the long-run rate stays at allowance × rate). Thread-safe.
/// </summary>
internal sealed class StreamAdmission
{
    /// <summary>Shortest time between two sweeps for idle streams, so a flood of new ids does not rescan the table per message.</summary>
    private static readonly TimeSpan SweepInterval = TimeSpan.FromSeconds(1);

    private readonly Lock _lock = new();
    private readonly Dictionary<string, State> _streams = new(StringComparer.Ordinal);
    private readonly TimeProvider _time;
    private readonly int _maxStreams;
    private readonly TimeSpan _idle;
    private readonly double _allowance;
    private readonly double _burstSeconds;
    private readonly Action<string> _forgotten;
    private long _lastSweepTicks;
    private bool _swept;
    private long _evicted;

    /// <param name="maxStreams">Most streams admitted at once.</param>
    /// <param name="idleSeconds">A stream that sent nothing for this long may be forgotten.</param>
    /// <param name="rateAllowance">Long-run factor over the declared rate.</param>
    /// <param name="burstSeconds">Seconds of samples at the declared rate that may arrive at once.</param>
    /// <param name="time">Clock of the buckets.</param>
    /// <param name="forgotten">Called with the id of each stream forgotten (under the lock; keep it short).</param>
    public StreamAdmission(int maxStreams, double idleSeconds, double rateAllowance, double burstSeconds, TimeProvider time, Action<string> forgotten)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(maxStreams, 1);
        ArgumentNullException.ThrowIfNull(time);
        ArgumentNullException.ThrowIfNull(forgotten);
        _maxStreams = maxStreams;
        _idle = TimeSpan.FromSeconds(idleSeconds);
        _allowance = rateAllowance;
        _burstSeconds = burstSeconds;
        _time = time;
        _forgotten = forgotten;
    }

    /// <summary>Streams admitted now.</summary>
    public int Count
    {
        get
        {
            lock (_lock)
            {
                return _streams.Count;
            }
        }
    }

    /// <summary>Streams forgotten for idleness so far.</summary>
    public long Evicted => Interlocked.Read(ref _evicted);

    /// <summary>Null when the chunk may go on; else why it is dropped (TooManyStreams: the stream was not admitted and nothing was kept).</summary>
    public IngestDropReason? Admit(string streamId, double sampleRateHz, int samplesPerChannel)
    {
        var now = _time.GetTimestamp();
        lock (_lock)
        {
            var capacity = sampleRateHz * _burstSeconds;
            if (!_streams.TryGetValue(streamId, out var state))
            {
                if (_streams.Count >= _maxStreams && !SweepIdle(now))
                {
                    return IngestDropReason.TooManyStreams;
                }

                state = new State { Tokens = capacity, LastTicks = now };
                _streams.Add(streamId, state);
            }
            else
            {
                var elapsed = _time.GetElapsedTime(state.LastTicks, now).TotalSeconds;
                state.Tokens = Math.Min(capacity, state.Tokens + (Math.Max(0, elapsed) * _allowance * sampleRateHz));
                state.LastTicks = now;
            }

            if (state.Tokens <= 0)
            {
                return IngestDropReason.RateExceeded;
            }

            state.Tokens -= samplesPerChannel;
            return null;
        }
    }

    /// <summary>Forgets streams idle for the idle time; true when that made room. Runs at most once per sweep interval.</summary>
    private bool SweepIdle(long now)
    {
        if (_swept && _time.GetElapsedTime(_lastSweepTicks, now) < SweepInterval)
        {
            return false;
        }

        _swept = true;
        _lastSweepTicks = now;
        List<string>? idle = null;
        foreach (var pair in _streams)
        {
            if (_time.GetElapsedTime(pair.Value.LastTicks, now) >= _idle)
            {
                (idle ??= []).Add(pair.Key);
            }
        }

        if (idle is null)
        {
            return false;
        }

        foreach (var id in idle)
        {
            _streams.Remove(id);
            _forgotten(id);
        }

        Interlocked.Add(ref _evicted, idle.Count);
        return _streams.Count < _maxStreams;
    }

    private sealed class State
    {
        public double Tokens;
        public long LastTicks;
    }
}
