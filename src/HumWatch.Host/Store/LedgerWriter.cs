using HumWatch.Core.Ledger;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Store;

/// <summary>
/// Collects a stream's minute rows and writes them to the store in one transaction per <see cref="Flush"/>.
/// Rows the store refused stay (bounded) and go with the next flush; the store skips any row it already has, so a
/// retry never counts twice. Thread-safe.
/// </summary>
internal sealed class LedgerWriter : IMinuteRowSink
{
    private readonly ILedgerStore _store;
    private readonly ILogger _logger;
    private readonly int _maxPendingRows;
    private readonly Lock _gate = new();
    private readonly List<MinuteRow> _pending = [];
    private bool _failing;

    /// <param name="store">Where rows go.</param>
    /// <param name="logger">Where failures go.</param>
    /// <param name="maxPendingRows">Rows kept while the store fails before the oldest are dropped (and logged). The default is 100000 (about a day of a busy stream).</param>
    public LedgerWriter(ILedgerStore store, ILogger<LedgerWriter> logger, int maxPendingRows = 100_000)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(logger);
        ArgumentOutOfRangeException.ThrowIfLessThan(maxPendingRows, 1);
        _store = store;
        _logger = logger;
        _maxPendingRows = maxPendingRows;
    }

    /// <summary>Rows waiting to be written.</summary>
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
            if (_pending.Count >= _maxPendingRows)
            {
                var drop = _pending.Count - _maxPendingRows + 1;
                _logger.LedgerBacklogDropped(_maxPendingRows, drop, _pending[0].StreamId);
                _pending.RemoveRange(0, drop);
            }

            _pending.Add(row);
        }
    }

    /// <summary>Writes waiting rows; true when nothing is left waiting. Never throws.</summary>
    public bool Flush()
    {
        lock (_gate)
        {
            if (_pending.Count == 0)
            {
                return true;
            }

            try
            {
                _store.AddMinuteRows(_pending);
            }
            catch (Exception ex)
            {
                // By design: the rows stay for the next flush; a store outage must not stop analysis.
                _failing = true;
                _logger.LedgerWriteFailed(ex, _pending.Count);
                return false;
            }

            if (_failing)
            {
                _failing = false;
                _logger.LedgerRecovered(_pending.Count);
            }

            _pending.Clear();
            return true;
        }
    }
}
