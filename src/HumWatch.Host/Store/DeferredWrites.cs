namespace HumWatch.Host.Store;

/// <summary>
/// Single writes to the store (one alert event, one spectrum part) with a bounded backlog for those it refused. A write
/// goes straight to the store while it is healthy and nothing waits; otherwise it queues behind the waiting ones, so the
/// store keeps their order, and <see cref="StoreHealth"/> retries them. When the backlog is full the oldest waiting write
/// is given up, counted and reported — never silently. Thread-safe; a slow retry never holds up a writer.
/// </summary>
internal sealed class DeferredWrites<T> : IStoreBacklog
    where T : class
{
    private readonly Action<T> _write;
    private readonly Func<T, string> _describe;
    private readonly StoreHealth _health;
    private readonly int _capacity;
    private readonly Lock _gate = new();
    private readonly LinkedList<T> _waiting = new();

    // The write a retry has taken out of the lock and is storing; a full backlog gives up the next oldest instead.
    private T? _inFlight;

    /// <param name="name">What is kept, plural ("alert events").</param>
    /// <param name="retryOrder">Place among the backlogs in a retry, lowest first.</param>
    /// <param name="capacity">Writes kept before the oldest are given up.</param>
    /// <param name="write">Stores one item; throws when the store refuses it.</param>
    /// <param name="describe">One item for the log.</param>
    public DeferredWrites(string name, int retryOrder, int capacity, Action<T> write, Func<T, string> describe, StoreHealth health)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(name);
        ArgumentOutOfRangeException.ThrowIfLessThan(capacity, 1);
        ArgumentNullException.ThrowIfNull(write);
        ArgumentNullException.ThrowIfNull(describe);
        ArgumentNullException.ThrowIfNull(health);
        Name = name;
        RetryOrder = retryOrder;
        _capacity = capacity;
        _write = write;
        _describe = describe;
        _health = health;
        health.Register(this);
    }

    public string Name { get; }

    public int RetryOrder { get; }

    public int Waiting
    {
        get
        {
            lock (_gate)
            {
                return _waiting.Count;
            }
        }
    }

    /// <summary>Stores <paramref name="item"/> now, or keeps it for a retry; true when it is in the store. Never throws.</summary>
    public bool Write(T item)
    {
        ArgumentNullException.ThrowIfNull(item);
        Exception? failure = null;
        lock (_gate)
        {
            if (_waiting.Count == 0 && !_health.IsFaulted)
            {
                try
                {
                    _write(item);
                    return true;
                }
                catch (Exception ex)
                {
                    // By design: a store that refuses a write must not stop analysis or publishing; the item waits.
                    failure = ex;
                }
            }

            Keep(item);
        }

        if (failure is not null)
        {
            _health.ReportFailure(failure, _describe(item));
        }

        return false;
    }

    public int RetryWaiting(out Exception? failure)
    {
        failure = null;
        var stored = 0;
        while (true)
        {
            T item;
            lock (_gate)
            {
                if (_waiting.First is not { } first)
                {
                    return stored;
                }

                item = first.Value;
                _inFlight = item;
            }

            try
            {
                _write(item);
            }
            catch (Exception ex)
            {
                failure = ex;
                lock (_gate)
                {
                    _inFlight = null;
                }

                return stored;
            }

            lock (_gate)
            {
                _inFlight = null;
                if (_waiting.First is { } head && ReferenceEquals(head.Value, item))
                {
                    _waiting.RemoveFirst();
                }

                stored++;
            }
        }
    }

    // The caller holds _gate.
    private void Keep(T item)
    {
        if (_waiting.Count >= _capacity)
        {
            var oldest = _waiting.First!;
            if (ReferenceEquals(oldest.Value, _inFlight) && oldest.Next is { } next)
            {
                oldest = next;
            }

            _waiting.Remove(oldest);
            _health.ReportDropped(Name, _capacity, 1, _describe(oldest.Value));
        }

        _waiting.AddLast(item);
    }
}
