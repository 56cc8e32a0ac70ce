namespace HumWatch.Host.Ingest;

/// <summary>
/// Lets a repeated warning through at most once per interval per key, and at most a fixed number of warnings per
/// interval over all keys (a flood of new stream ids would otherwise be a flood of "first" warnings); counts what it
/// held back and reports the over-the-cap count once per interval through the summary callback. Thread-safe.
/// </summary>
internal sealed class WarningThrottle
{
    private const int MaxKeys = 10_000;

    private readonly Lock _lock = new();
    private readonly Dictionary<string, Entry> _entries = new(StringComparer.Ordinal);
    private readonly TimeProvider _timeProvider;
    private readonly TimeSpan _interval;
    private readonly int _maxPerInterval;
    private readonly Action<long, TimeSpan>? _summary;
    private DateTimeOffset _windowStartUtc = DateTimeOffset.MinValue;
    private int _windowWarnings;
    private long _windowCapped;
    private long _suppressedTotal;

    /// <param name="timeProvider">Clock of the intervals.</param>
    /// <param name="interval">Shortest interval between warnings for one key, and the length of the cap's window; zero lets everything through.</param>
    /// <param name="maxPerInterval">Most warnings let through per interval over all keys.</param>
    /// <param name="summary">Called (outside the lock) with the count held back by the cap in the interval just ended and the interval.</param>
    public WarningThrottle(TimeProvider timeProvider, TimeSpan interval, int maxPerInterval = int.MaxValue, Action<long, TimeSpan>? summary = null)
    {
        ArgumentNullException.ThrowIfNull(timeProvider);
        ArgumentOutOfRangeException.ThrowIfLessThan(interval, TimeSpan.Zero);
        ArgumentOutOfRangeException.ThrowIfLessThan(maxPerInterval, 1);
        _timeProvider = timeProvider;
        _interval = interval;
        _maxPerInterval = maxPerInterval;
        _summary = summary;
    }

    /// <summary>Warnings held back so far, per key and by the cap.</summary>
    public long SuppressedTotal
    {
        get
        {
            lock (_lock)
            {
                return _suppressedTotal;
            }
        }
    }

    /// <summary>True when the warning for <paramref name="key"/> should be written now; <paramref name="suppressed"/> is how many were held back for this key since its last one.</summary>
    public bool ShouldWarn(string key, out long suppressed)
    {
        var now = _timeProvider.GetUtcNow();
        long endedWindowCapped = 0;
        bool result;
        lock (_lock)
        {
            result = Decide(key, now, out suppressed, ref endedWindowCapped);
        }

        if (endedWindowCapped > 0)
        {
            _summary?.Invoke(endedWindowCapped, _interval);
        }

        return result;
    }

    /// <summary>Reports the cap's count of the interval that ended, if it has ended; for a caller with a timer (a flood that stops still gets its line).</summary>
    public void Flush()
    {
        var now = _timeProvider.GetUtcNow();
        long ended = 0;
        lock (_lock)
        {
            if (_windowCapped > 0 && now - _windowStartUtc >= _interval)
            {
                ended = _windowCapped;
                _windowCapped = 0;
            }
        }

        if (ended > 0)
        {
            _summary?.Invoke(ended, _interval);
        }
    }

    private bool Decide(string key, DateTimeOffset now, out long suppressed, ref long endedWindowCapped)
    {
        suppressed = 0;
        if (_interval == TimeSpan.Zero)
        {
            return true;
        }

        if (now - _windowStartUtc >= _interval)
        {
            endedWindowCapped = _windowCapped;
            _windowStartUtc = now;
            _windowWarnings = 0;
            _windowCapped = 0;
        }

        if (_entries.TryGetValue(key, out var entry) && now - entry.LastWarnedUtc < _interval)
        {
            entry.Suppressed++;
            _suppressedTotal++;
            return false;
        }

        if (_windowWarnings >= _maxPerInterval)
        {
            // Over the cap no entry is made, so a flood of new keys costs a counter, not memory.
            _windowCapped++;
            _suppressedTotal++;
            return false;
        }

        if (entry is null)
        {
            if (_entries.Count >= MaxKeys)
            {
                // Forget old keys rather than grow: the worst case is one extra warning per key.
                _entries.Clear();
            }

            entry = new Entry();
            _entries[key] = entry;
        }

        _windowWarnings++;
        suppressed = entry.Suppressed;
        entry.Suppressed = 0;
        entry.LastWarnedUtc = now;
        return true;
    }

    private sealed class Entry
    {
        public DateTimeOffset LastWarnedUtc;
        public long Suppressed;
    }
}
