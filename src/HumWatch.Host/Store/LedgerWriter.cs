using HumWatch.Core.Ledger;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Store;

/// <summary>
/// Where every session's minute ledger hands its rows: they wait here and go to the store in one transaction per write,
/// every <see cref="DefaultWriteInterval"/> once started (and on <see cref="Flush"/>, and at stop). Rows the store refused
/// stay (bounded) and go with the next write, so a retry happens even when no new row comes; the store skips any row it
/// already has, so a retry never counts twice. Thread-safe; a slow store never holds up the sessions handing rows in.
/// </summary>
internal sealed class LedgerWriter : IMinuteRowSink, IHostedService, IDisposable
{
    /// <summary>How often waiting rows are written once started: 1 s.</summary>
    public static readonly TimeSpan DefaultWriteInterval = TimeSpan.FromSeconds(1);

    private readonly ILedgerStore _store;
    private readonly ILogger _logger;
    private readonly TimeProvider _time;
    private readonly int _maxPendingRows;
    private readonly TimeSpan _writeInterval;
    private readonly Lock _gate = new();
    private readonly Lock _writeGate = new();
    private List<MinuteRow> _pending = [];
    private List<MinuteRow> _writing = [];
    private ITimer? _timer;
    private bool _failing;
    private long _writeFailures;

    /// <param name="store">Where rows go.</param>
    /// <param name="logger">Where failures go.</param>
    /// <param name="time">Clock of the periodic write; the default is the system clock.</param>
    /// <param name="maxPendingRows">Rows kept while the store fails before the oldest are dropped (and logged). The default is 100000 (about a day of a busy stream).</param>
    /// <param name="writeInterval">Time between writes once started; the default is <see cref="DefaultWriteInterval"/>.</param>
    public LedgerWriter(ILedgerStore store, ILogger<LedgerWriter> logger, TimeProvider? time = null, int maxPendingRows = 100_000, TimeSpan? writeInterval = null)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(logger);
        ArgumentOutOfRangeException.ThrowIfLessThan(maxPendingRows, 1);
        _writeInterval = writeInterval ?? DefaultWriteInterval;
        ArgumentOutOfRangeException.ThrowIfLessThanOrEqual(_writeInterval, TimeSpan.Zero, nameof(writeInterval));
        _store = store;
        _logger = logger;
        _time = time ?? TimeProvider.System;
        _maxPendingRows = maxPendingRows;
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

    /// <summary>Writes the store refused since start.</summary>
    public long WriteFailureCount => Interlocked.Read(ref _writeFailures);

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
            return WriteWaiting();
        }
    }

    /// <summary>Starts the periodic write.</summary>
    public Task StartAsync(CancellationToken cancellationToken)
    {
        _timer ??= _time.CreateTimer(_ => WriteOnTimer(), null, _writeInterval, _writeInterval);
        return Task.CompletedTask;
    }

    /// <summary>Stops the periodic write and writes what waits. Registered before the stream monitors, it stops after them.</summary>
    public Task StopAsync(CancellationToken cancellationToken)
    {
        _timer?.Dispose();
        _timer = null;
        Flush();
        return Task.CompletedTask;
    }

    public void Dispose()
    {
        _timer?.Dispose();
        _timer = null;
    }

    private void WriteOnTimer()
    {
        // A write still running (a slow store) covers this tick; the next one tries again.
        if (!_writeGate.TryEnter())
        {
            return;
        }

        try
        {
            WriteWaiting();
        }
        finally
        {
            _writeGate.Exit();
        }
    }

    // The caller holds _writeGate. The batch is swapped out, so sessions keep handing in rows while the store works.
    private bool WriteWaiting()
    {
        lock (_gate)
        {
            if (_pending.Count == 0)
            {
                return true;
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
            int waiting;
            lock (_gate)
            {
                // Refused rows go back in front of any that came meanwhile, so rows stay in order.
                _writing.AddRange(_pending);
                _pending.Clear();
                (_pending, _writing) = (_writing, _pending);
                DropOverBound();
                waiting = _pending.Count;
            }

            _failing = true;
            Interlocked.Increment(ref _writeFailures);
            _logger.LedgerWriteFailed(ex, waiting);
            return false;
        }

        if (_failing)
        {
            _failing = false;
            _logger.LedgerRecovered(_writing.Count);
        }

        _writing.Clear();
        return true;
    }

    // The caller holds _gate.
    private void DropOverBound()
    {
        if (_pending.Count > _maxPendingRows)
        {
            var drop = _pending.Count - _maxPendingRows;
            _logger.LedgerBacklogDropped(_maxPendingRows, drop, _pending[0].StreamId);
            _pending.RemoveRange(0, drop);
        }
    }
}
