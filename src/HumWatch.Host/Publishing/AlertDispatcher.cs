using HumWatch.Core.Alerts;
using HumWatch.Host.Store;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Publishing;

/// <summary>
/// Sends each alert event to the store, then the log, then subscribers, in that order and each step isolated:
/// a failing publish never loses the stored row, and a failing store still lets people hear about it.
/// Events the store refused are kept (bounded) and written before the next event. Thread-safe.
/// </summary>
internal sealed class AlertDispatcher : IAlertEventSink
{
    /// <summary>Events kept for a later store attempt before the oldest are dropped (and logged).</summary>
    public const int MaxPendingStore = 1000;

    private readonly IAlertEventStore _store;
    private readonly IMessagePublisher _publisher;
    private readonly ILogger _logger;
    private readonly Lock _gate = new();
    private readonly Queue<AlertEvent> _unstored = new();
    private long _storeFailures;

    public AlertDispatcher(IAlertEventStore store, IMessagePublisher publisher, ILogger<AlertDispatcher> logger)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(publisher);
        ArgumentNullException.ThrowIfNull(logger);
        _store = store;
        _publisher = publisher;
        _logger = logger;
    }

    /// <summary>Events waiting for a store retry.</summary>
    public int PendingStoreCount
    {
        get
        {
            lock (_gate)
            {
                return _unstored.Count;
            }
        }
    }

    /// <summary>Store writes of alert events that failed since start (retries included).</summary>
    public long StoreFailureCount => Interlocked.Read(ref _storeFailures);

    public void OnAlertEvent(AlertEvent alertEvent) => Dispatch(alertEvent);

    /// <summary>Store, log, publish. Returns whether the event was stored and whether it was handed to the publisher.</summary>
    public (bool Stored, bool Published) Dispatch(AlertEvent alertEvent)
    {
        ArgumentNullException.ThrowIfNull(alertEvent);
        var stored = Store(alertEvent);
        Log(alertEvent);
        var published = Publish(alertEvent);
        return (stored, published);
    }

    private bool Store(AlertEvent alertEvent)
    {
        lock (_gate)
        {
            // Earlier failures first, so the store keeps event order.
            var recovered = 0;
            Exception? retryFailure = null;
            while (_unstored.Count > 0)
            {
                try
                {
                    _store.AppendAlert(_unstored.Peek());
                }
                catch (Exception ex)
                {
                    Interlocked.Increment(ref _storeFailures);
                    retryFailure = ex;
                    break;
                }

                _unstored.Dequeue();
                recovered++;
            }

            if (recovered > 0)
            {
                _logger.StoreRecovered(recovered);
            }

            if (_unstored.Count == 0)
            {
                try
                {
                    _store.AppendAlert(alertEvent);
                    return true;
                }
                catch (Exception ex)
                {
                    Interlocked.Increment(ref _storeFailures);
                    Keep(alertEvent);
                    _logger.StoreFailed(ex, alertEvent.EventKind.ToText(), alertEvent.Key.ToString(), alertEvent.StreamId, _unstored.Count);
                    return false;
                }
            }

            Keep(alertEvent);
            _logger.StoreFailed(retryFailure!, alertEvent.EventKind.ToText(), alertEvent.Key.ToString(), alertEvent.StreamId, _unstored.Count);
            return false;
        }
    }

    private void Keep(AlertEvent alertEvent)
    {
        if (_unstored.Count >= MaxPendingStore)
        {
            var oldest = _unstored.Dequeue();
            _logger.StoreRetryOverflow(oldest.EventKind.ToText(), oldest.Key.ToString(), oldest.StreamId, _unstored.Count);
        }

        _unstored.Enqueue(alertEvent);
    }

    private void Log(AlertEvent alertEvent)
    {
        try
        {
            switch (alertEvent)
            {
                case AlertRaised { Category: AlertCategory.ChannelFault } f:
                    _logger.FaultRaised(f.StreamId, f.Key.ToString(), f.Severity.ToText(), f.Suggestion);
                    break;
                case AlertRaised r:
                    _logger.AlertRaised(r.StreamId, r.Key.ToString(), r.FrequencyHz, r.AmplitudeUvRms, r.Severity.ToText(), string.Join(", ", r.WorstChannels), r.Suggestion);
                    break;
                case AlertSeverityChanged s:
                    _logger.AlertSeverityChanged(s.StreamId, s.Key.ToString(), s.PreviousSeverity.ToText(), s.NewSeverity.ToText(), s.AmplitudeUvRms);
                    break;
                case AlertCleared { Category: AlertCategory.ChannelFault } f:
                    _logger.FaultCleared(f.StreamId, f.Key.ToString(), f.Reason.ToText(), f.DurationSeconds);
                    break;
                case AlertCleared c:
                    _logger.AlertCleared(c.StreamId, c.Key.ToString(), c.Reason.ToText(), c.DurationSeconds, c.PeakAmplitudeUvRms, c.PeakSeverity.ToText());
                    break;
                default:
                    break;
            }
        }
        catch (Exception ex)
        {
            // By design: a broken log sink must not stop the publish step.
            TryLogFailure(ex, alertEvent);
        }
    }

    private void TryLogFailure(Exception ex, AlertEvent alertEvent)
    {
        try
        {
            _logger.LogFailed(ex, alertEvent.EventKind.ToText(), alertEvent.Key.ToString(), alertEvent.StreamId);
        }
        catch (Exception)
        {
            // Nothing left to report to.
        }
    }

    private bool Publish(AlertEvent alertEvent)
    {
        try
        {
            var (kind, body) = Messages.For(alertEvent);
            return _publisher.TryPublish(kind, alertEvent.StreamId, body);
        }
        catch (Exception ex)
        {
            try
            {
                _logger.PublishFailed(ex, alertEvent.EventKind.ToText(), alertEvent.Key.ToString(), alertEvent.StreamId);
            }
            catch (Exception)
            {
                // Nothing left to report to.
            }

            return false;
        }
    }
}
