using System.Globalization;
using System.Text;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Store;

/// <summary>Writes kept in memory because the store refused them; <see cref="StoreHealth"/> writes them again.</summary>
internal interface IStoreBacklog
{
    /// <summary>What is kept, plural, as the log names it ("alert events").</summary>
    string Name { get; }

    /// <summary>A retry goes through the backlogs by this number, lowest first: a file's journal entry after its alerts and rows.</summary>
    int RetryOrder { get; }

    /// <summary>Writes waiting because the store refused them.</summary>
    int Waiting { get; }

    /// <summary>Writes what waits, oldest first, until all is stored or the store refuses again; returns how many were stored, and the refusal.</summary>
    int RetryWaiting(out Exception? failure);
}

/// <summary>The store part of the status message (docs/messages.md).</summary>
/// <param name="State">"ok", "full", "read-only", "locked" or "failing".</param>
/// <param name="Since">When the fault began; null when ok.</param>
/// <param name="Deferred">Writes waiting in memory for the store.</param>
/// <param name="Dropped">Writes given up since the start because a backlog was full.</param>
/// <param name="Error">The last failure, naming the store file; null when ok.</param>
internal sealed record StoreStatus(string State, DateTimeOffset? Since, int Deferred, long Dropped, string? Error);

/// <summary>
/// Whether the store takes writes. The first refused write starts a fault (one warning naming the file and the fault);
/// from then on writers keep what they have in their backlogs and leave the store alone, and this class alone retries —
/// every backlog in order, after 1 s, then twice as long each time up to 30 s — with a reminder at most once a minute.
/// The first retry that stores everything ends the fault (one line saying how much had waited). Thread-safe.
/// </summary>
internal sealed class StoreHealth : IHostedService, IDisposable
{
    /// <summary>Wait before the first retry: 1 s.</summary>
    public static readonly TimeSpan FirstRetryDelay = TimeSpan.FromSeconds(1);

    /// <summary>Longest wait between retries: 30 s.</summary>
    public static readonly TimeSpan MaxRetryDelay = TimeSpan.FromSeconds(30);

    /// <summary>At most one reminder (and one drop report) per 60 s while a fault lasts.</summary>
    public static readonly TimeSpan ReminderInterval = TimeSpan.FromSeconds(60);

    /// <summary>How often a started instance looks whether a retry is due: 1 s.</summary>
    public static readonly TimeSpan TickInterval = TimeSpan.FromSeconds(1);

    private readonly TimeProvider _time;
    private readonly ILogger _logger;
    private readonly Lock _gate = new();
    private readonly Lock _roundGate = new();
    private readonly List<IStoreBacklog> _backlogs = [];
    private readonly Dictionary<string, long> _storedSinceFault = new(StringComparer.Ordinal);
    private StoreFaultKind _fault;
    private DateTimeOffset _since;
    private string? _error;
    private TimeSpan _delay;
    private DateTimeOffset _nextRetry;
    private DateTimeOffset _lastReminder;
    private long _dropped;
    private long _failures;
    private long _droppedAtFaultStart;
    private long _dropsNotReported;
    private DateTimeOffset? _lastDropReport;
    private ITimer? _timer;

    // Locks are taken in one order only: a backlog's own lock, then _gate. Nothing here calls a backlog under _gate.

    /// <param name="storePath">The store file, named in every line.</param>
    /// <param name="time">Clock of the retries and reminders.</param>
    public StoreHealth(string storePath, TimeProvider time, ILogger logger)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(storePath);
        ArgumentNullException.ThrowIfNull(time);
        ArgumentNullException.ThrowIfNull(logger);
        StorePath = storePath;
        _time = time;
        _logger = logger;
    }

    /// <summary>The store file.</summary>
    public string StorePath { get; }

    /// <summary>The current fault; <see cref="StoreFaultKind.None"/> when writes work.</summary>
    public StoreFaultKind Fault
    {
        get
        {
            lock (_gate)
            {
                return _fault;
            }
        }
    }

    /// <summary>True while a fault lasts: writers keep what they have and leave the retries to this class.</summary>
    public bool IsFaulted => Fault != StoreFaultKind.None;

    /// <summary>Writes waiting in all backlogs.</summary>
    public int Deferred
    {
        get
        {
            var sum = 0;
            foreach (var backlog in Backlogs())
            {
                sum += backlog.Waiting;
            }

            return sum;
        }
    }

    /// <summary>True when writes work and nothing waits: what was handed in is in the store.</summary>
    public bool AllStored => !IsFaulted && Deferred == 0;

    /// <summary>Writes given up since the start.</summary>
    public long Dropped
    {
        get
        {
            lock (_gate)
            {
                return _dropped;
            }
        }
    }

    /// <summary>Store writes refused since the start, first attempts and retries alike (the metrics' count).</summary>
    public long Failures => Interlocked.Read(ref _failures);

    /// <summary>Adds a backlog to the retries.</summary>
    public void Register(IStoreBacklog backlog)
    {
        ArgumentNullException.ThrowIfNull(backlog);
        lock (_gate)
        {
            _backlogs.Add(backlog);
            _backlogs.Sort(static (a, b) => a.RetryOrder.CompareTo(b.RetryOrder));
        }
    }

    /// <summary>A writer's write was refused (what it kept is in its backlog): starts a fault, or notes that it goes on.</summary>
    /// <param name="what">What could not be written, for the log ("the raised event of mains/h1 on room-a").</param>
    public void ReportFailure(Exception failure, string what) => Fail(failure, what, fromRetry: false);

    /// <summary>A full backlog gave up its oldest writes: counted, and reported at most once per <see cref="ReminderInterval"/>.</summary>
    /// <param name="last">The newest write given up, for the log.</param>
    public void ReportDropped(string backlog, int capacity, int count, string last)
    {
        var now = _time.GetUtcNow();
        long report;
        long total;
        lock (_gate)
        {
            _dropped += count;
            _dropsNotReported += count;
            if (_lastDropReport is { } previous && now - previous < ReminderInterval)
            {
                return;
            }

            _lastDropReport = now;
            report = _dropsNotReported;
            _dropsNotReported = 0;
            total = _dropped;
        }

        _logger.StoreBacklogDropped(StorePath, backlog, capacity, report, total, last);
    }

    /// <summary>Retries every backlog now, whether or not a retry is due; true when all is stored.</summary>
    public bool RetryNow()
    {
        lock (_roundGate)
        {
            return Retry();
        }
    }

    /// <summary>Retries when one is due (a fault and its wait has passed, or something waits); true when nothing is left waiting.</summary>
    public bool RetryIfDue()
    {
        if (!_roundGate.TryEnter())
        {
            return false; // a retry is under way (a locked store makes one slow)
        }

        try
        {
            var now = _time.GetUtcNow();
            bool due;
            lock (_gate)
            {
                due = _fault == StoreFaultKind.None || now >= _nextRetry;
            }

            if (!due)
            {
                return false;
            }

            return (!IsFaulted && Deferred == 0) || Retry();
        }
        finally
        {
            _roundGate.Exit();
        }
    }

    /// <summary>The store part of the status message.</summary>
    public StoreStatus Snapshot()
    {
        var deferred = Deferred;
        lock (_gate)
        {
            return _fault == StoreFaultKind.None
                ? new StoreStatus(_fault.ToText(), null, deferred, _dropped, null)
                : new StoreStatus(_fault.ToText(), _since, deferred, _dropped, _error);
        }
    }

    public Task StartAsync(CancellationToken cancellationToken)
    {
        _timer ??= _time.CreateTimer(_ => RetryIfDue(), null, TickInterval, TickInterval);
        return Task.CompletedTask;
    }

    /// <summary>One last retry of what waits; what still waits then is named in an error line, as it is not in the store.</summary>
    public Task StopAsync(CancellationToken cancellationToken)
    {
        _timer?.Dispose();
        _timer = null;
        if (IsFaulted || Deferred > 0)
        {
            RetryNow();
        }

        var left = Deferred;
        if (left > 0)
        {
            _logger.StoreBacklogLostAtStop(StorePath, Fault.ToText(), left, WaitingDetail());
        }

        return Task.CompletedTask;
    }

    public void Dispose()
    {
        _timer?.Dispose();
        _timer = null;
    }

    private IStoreBacklog[] Backlogs()
    {
        lock (_gate)
        {
            return [.. _backlogs];
        }
    }

    // The caller holds _roundGate.
    private bool Retry()
    {
        foreach (var backlog in Backlogs())
        {
            var stored = backlog.RetryWaiting(out var failure);
            if (stored > 0)
            {
                lock (_gate)
                {
                    _storedSinceFault[backlog.Name] = _storedSinceFault.GetValueOrDefault(backlog.Name) + stored;
                }
            }

            if (failure is not null)
            {
                Fail(failure, "the retry of the waiting " + backlog.Name, fromRetry: true);
                return false;
            }
        }

        Cleared();
        return true;
    }

    private void Fail(Exception failure, string what, bool fromRetry)
    {
        ArgumentNullException.ThrowIfNull(failure);
        var kind = StoreFaults.Classify(failure);
        Interlocked.Increment(ref _failures);
        var now = _time.GetUtcNow();
        var error = $"{StorePath}: {failure.Message}";
        bool started;
        var remind = false;
        DateTimeOffset since;
        TimeSpan delay;
        long dropped;
        lock (_gate)
        {
            started = _fault != kind;
            if (_fault == StoreFaultKind.None)
            {
                _since = now;
                _delay = FirstRetryDelay;
                _nextRetry = now + _delay;
                _droppedAtFaultStart = _dropped;
                _storedSinceFault.Clear();
            }
            else if (fromRetry)
            {
                _delay = TimeSpan.FromTicks(Math.Min(_delay.Ticks * 2, MaxRetryDelay.Ticks));
                _nextRetry = now + _delay;
            }

            if (started)
            {
                _lastReminder = now;
            }
            else if (now - _lastReminder >= ReminderInterval)
            {
                remind = true;
                _lastReminder = now;
            }

            _fault = kind;
            _error = error;
            since = _since;
            delay = _nextRetry - now;
            dropped = _dropped;
        }

        if (started)
        {
            _logger.StoreFaultStarted(failure, StorePath, kind.ToText(), what, failure.Message, kind.Hint());
        }
        else if (remind)
        {
            _logger.StoreFaultContinues(StorePath, kind.ToText(), since, Deferred, dropped, delay.TotalSeconds, failure.Message);
        }
    }

    private void Cleared()
    {
        var now = _time.GetUtcNow();
        StoreFaultKind was;
        DateTimeOffset since;
        long stored;
        long dropped;
        string detail;
        lock (_gate)
        {
            if (_fault == StoreFaultKind.None)
            {
                return;
            }

            was = _fault;
            since = _since;
            stored = _storedSinceFault.Values.Sum();
            detail = Detail(_storedSinceFault.Where(p => p.Value > 0).Select(p => (p.Key, p.Value)));
            dropped = _dropped - _droppedAtFaultStart;
            _fault = StoreFaultKind.None;
            _error = null;
            _storedSinceFault.Clear();
        }

        _logger.StoreFaultCleared(StorePath, was.ToText(), (now - since).TotalSeconds, stored, detail, dropped);
    }

    private string WaitingDetail() => Detail(Backlogs().Where(b => b.Waiting > 0).Select(b => (b.Name, (long)b.Waiting)));

    private static string Detail(IEnumerable<(string Name, long Count)> parts)
    {
        var text = new StringBuilder();
        foreach (var (name, count) in parts)
        {
            text.Append(text.Length == 0 ? "" : ", ").Append(count.ToString(CultureInfo.InvariantCulture)).Append(' ').Append(name);
        }

        return text.Length == 0 ? "none" : text.ToString();
    }
}
