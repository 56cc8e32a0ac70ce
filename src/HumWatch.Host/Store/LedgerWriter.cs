using HumWatch.Core.Ledger;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Store;

/// <summary>
/// Where every session's minute ledger hands its rows: they wait here and go to the store in one transaction per write,
/// every <see cref="DefaultWriteInterval"/> once started (and on <see cref="Flush"/>, and at stop). Rows the store refused
/// stay (bounded) and the <see cref="StoreHealth"/> retries them with backoff, the periodic write pausing meanwhile; the
/// store skips any row it already has, so a retry never counts twice. Thread-safe; a slow store never holds up the
/// sessions handing rows in.
/// </summary>
internal sealed class LedgerWriter : IMinuteRowSink, IStoreBacklog, IHostedService, IDisposable
{
    /// <summary>How often waiting rows are written once started: 1 s.</summary>
    public static readonly TimeSpan DefaultWriteInterval = TimeSpan.FromSeconds(1);

    private readonly ILedgerStore _store;
    private readonly StoreHealth _health;
    private readonly TimeProvider _time;
    private readonly int _maxPendingRows;
    private readonly TimeSpan _writeInterval;
    private readonly Lock _gate = new();
    private readonly Lock _writeGate = new();
    private List<MinuteRow> _pending = [];
    private List<MinuteRow> _writing = [];
    private ITimer? _timer;
    private bool _failing;

    /// <param name="store">Where rows go.</param>
    /// <param name="logger">Where failures go when no <paramref name="health"/> is given.</param>
    /// <param name="time">Clock of the periodic write; the default is the system clock.</param>
    /// <param name="maxPendingRows">Rows kept while the store fails before the oldest are dropped (and logged). The default is 100000 (about a day of a busy stream).</param>
    /// <param name="writeInterval">Time between writes once started; the default is <see cref="DefaultWriteInterval"/>.</param>
    /// <param name="health">The store's fault state, which retries refused rows; null makes one of this writer's own.</param>
    public LedgerWriter(ILedgerStore store, ILogger<LedgerWriter> logger, TimeProvider? time = null, int maxPendingRows = 100_000, TimeSpan? writeInterval = null, StoreHealth? health = null)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(logger);
        ArgumentOutOfRangeException.ThrowIfLessThan(maxPendingRows, 1);
        _writeInterval = writeInterval ?? DefaultWriteInterval;
        ArgumentOutOfRangeException.ThrowIfLessThanOrEqual(_writeInterval, TimeSpan.Zero, nameof(writeInterval));
        _store = store;
        _time = time ?? TimeProvider.System;
        _maxPendingRows = maxPendingRows;
        _health = health ?? new StoreHealth("the ledger store", _time, logger);
        _health.Register(this);
    }

    public string Name => "minute ledger rows";

    public int RetryOrder => 2;

    /// <summary>
    /// Rows waiting because the store refused them or is faulted (rows waiting only for the next periodic write of a
    /// healthy store do not count).
    /// </summary>
    public int Waiting
    {
        get
        {
            lock (_gate)
            {
                return _failing || _health.IsFaulted ? _pending.Count : 0;
            }
        }
    }

    /// <summary>Rows waiting to be written (not counting a batch being written right now).</summary>
    public int PendingCount
    {
        get
        {
            lock (_gate)
            {
                return _pending.Count;
            }
        }
    }

    public void OnMinuteRow(MinuteRow row)
    {
        ArgumentNullException.ThrowIfNull(row);
        lock (_gate)
        {
            _pending.Add(row);
            DropOverBound();
        }
    }

    /// <summary>Writes the waiting rows now; true when they were written (or none waited). Never throws.</summary>
    public bool Flush()
    {
        lock (_writeGate)
        {
            var (_, failure) = WriteWaiting();
            if (failure is not null)
            {
                _health.ReportFailure(failure, $"{Waiting} minute ledger row(s)");
                return false;
            }

            return true;
        }
    }

    public int RetryWaiting(out Exception? failure)
    {
        lock (_writeGate)
        {
            (var stored, failure) = WriteWaiting();
            return stored;
        }
    }

    /// <summary>Starts the periodic write.</summary>
    public Task StartAsync(CancellationToken cancellationToken)
    {
        _timer ??= _time.CreateTimer(_ => WriteOnTimer(), null, _writeInterval, _writeInterval);
        return Task.CompletedTask;
    }

    /// <summary>
    /// Stops the periodic write and writes what waits. Registered before the stream monitors, it stops after them; while
    /// the store is faulted the store health's last retry, which stops after this, writes them instead.
    /// </summary>
    public Task StopAsync(CancellationToken cancellationToken)
    {
        _timer?.Dispose();
        _timer = null;
        if (!_health.IsFaulted)
        {
            Flush();
        }

        return Task.CompletedTask;
    }

    public void Dispose()
    {
        _timer?.Dispose();
        _timer = null;
    }

    private void WriteOnTimer()
    {
        // While the store is faulted its health retries with backoff; a write still running (a slow store) covers this tick.
        if (_health.IsFaulted || !_writeGate.TryEnter())
        {
            return;
        }

        try
        {
            var (_, failure) = WriteWaiting();
            if (failure is not null)
            {
                _health.ReportFailure(failure, $"{Waiting} minute ledger row(s)");
            }
        }
        finally
        {
            _writeGate.Exit();
        }
    }

    // The caller holds _writeGate. The batch is swapped out, so sessions keep handing in rows while the store works.
    // Returns the rows written and the store's refusal, if any.
    private (int Stored, Exception? Failure) WriteWaiting()
    {
        lock (_gate)
        {
            if (_pending.Count == 0)
            {
                return (0, null);
            }

            (_pending, _writing) = (_writing, _pending);
        }

        try
        {
            _store.AddMinuteRows(_writing);
        }
        catch (Exception ex)
        {
            // By design: the rows stay for the next write; a store outage must not stop analysis.
            lock (_gate)
            {
                // Refused rows go back in front of any that came meanwhile, so rows stay in order.
                _writing.AddRange(_pending);
                _pending.Clear();
                (_pending, _writing) = (_writing, _pending);
                _failing = true;
                DropOverBound();
            }

            return (0, ex);
        }

        var stored = _writing.Count;
        lock (_gate)
        {
            _failing = false;
        }

        _writing.Clear();
        return (stored, null);
    }

    // The caller holds _gate.
    private void DropOverBound()
    {
        if (_pending.Count > _maxPendingRows)
        {
            var drop = _pending.Count - _maxPendingRows;
            var last = _pending[drop - 1];
            _health.ReportDropped(Name, _maxPendingRows, drop, $"row {last.Sequence} of session {last.SessionId} (stream {last.StreamId}, minute {last.MinuteUtc:o})");
            _pending.RemoveRange(0, drop);
        }
    }
}
