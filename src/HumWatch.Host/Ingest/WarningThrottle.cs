namespace HumWatch.Host.Ingest;

/// <summary>Lets a repeated warning through at most once per interval per key and counts what it held back. Thread-safe.</summary>
internal sealed class WarningThrottle
{
    private const int MaxKeys = 10_000;

    private readonly Lock _lock = new();
    private readonly Dictionary<string, Entry> _entries = new(StringComparer.Ordinal);
    private readonly TimeProvider _timeProvider;
    private readonly TimeSpan _interval;

    public WarningThrottle(TimeProvider timeProvider, TimeSpan interval)
    {
        ArgumentNullException.ThrowIfNull(timeProvider);
        ArgumentOutOfRangeException.ThrowIfLessThan(interval, TimeSpan.Zero);
        _timeProvider = timeProvider;
        _interval = interval;
    }

    /// <summary>True when the warning for <paramref name="key"/> should be written now; <paramref name="suppressed"/> is how many were held back since the last one.</summary>
    public bool ShouldWarn(string key, out long suppressed)
    {
        var now = _timeProvider.GetUtcNow();
        lock (_lock)
        {
            if (_entries.TryGetValue(key, out var entry) && now - entry.LastWarnedUtc < _interval)
            {
                entry.Suppressed++;
                suppressed = 0;
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

            suppressed = entry.Suppressed;
            entry.Suppressed = 0;
            entry.LastWarnedUtc = now;
            return true;
        }
    }

    private sealed class Entry
    {
        public DateTimeOffset LastWarnedUtc;
        public long Suppressed;
    }
}
