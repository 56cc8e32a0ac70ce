using HumWatch.Core.Alerts;
using HumWatch.Host.Store;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Publishing;

/// <summary>
/// Sends each alert event to the store, then the log, then subscribers, in that order and each step isolated:
/// a failing publish never loses the stored row, and a failing store still lets people hear about it.
/// Events the store refused wait (bounded, in order) and the store's <see cref="StoreHealth"/> writes them again. Last,
/// each extra <see cref="IDispatchSink"/> (notifications) is told of the published body. Thread-safe.
/// </summary>
internal sealed class AlertDispatcher : IAlertEventSink
{
    /// <summary>Events kept for a later store attempt before the oldest are given up (counted and logged).</summary>
    public const int MaxPendingStore = 1000;

    private readonly IMessagePublisher _publisher;
    private readonly ILogger _logger;
    private readonly DeferredWrites<AlertEvent> _unstored;
    private readonly IDispatchSink[] _sinks;
    private readonly string? _instance;

    /// <param name="health">The store's fault state, which retries refused events; null makes one of this dispatcher's own.</param>
    /// <param name="sinks">Told of each published event after the socket (notifications); none by default.</param>
    /// <param name="instance">This instance's name, written into each body as "instance"; none by default.</param>
    public AlertDispatcher(
        IAlertEventStore store,
        IMessagePublisher publisher,
        ILogger<AlertDispatcher> logger,
        StoreHealth? health = null,
        IEnumerable<IDispatchSink>? sinks = null,
        Microsoft.Extensions.Options.IOptions<Configuration.InstanceOptions>? instance = null)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(publisher);
        ArgumentNullException.ThrowIfNull(logger);
        _publisher = publisher;
        _logger = logger;
        _sinks = sinks?.ToArray() ?? [];
        _instance = instance?.Value.Name;
        _unstored = new DeferredWrites<AlertEvent>(
            "alert events", retryOrder: 1, MaxPendingStore, e => store.AppendAlert(e), Describe, health ?? new StoreHealth("the alert store", TimeProvider.System, logger));
    }

    /// <summary>Events waiting for a store retry.</summary>
    public int PendingStoreCount => _unstored.Waiting;

    public void OnAlertEvent(AlertEvent alertEvent) => Dispatch(alertEvent);

    /// <summary>Store, log, publish. Returns whether the event was stored and whether it was handed to the publisher.</summary>
    public (bool Stored, bool Published) Dispatch(AlertEvent alertEvent)
    {
        ArgumentNullException.ThrowIfNull(alertEvent);
        var stored = _unstored.Write(alertEvent);
        Log(alertEvent);
        var (published, kind, body) = Publish(alertEvent);
        if (body is not null)
        {
            Tell(alertEvent, kind!, body);
        }

        return (stored, published);
    }

    private static string Describe(AlertEvent alertEvent) =>
        $"the {alertEvent.EventKind.ToText()} event of {alertEvent.Key} on {alertEvent.StreamId} at {alertEvent.Utc:o}";

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

    private (bool Published, string? Kind, byte[]? Body) Publish(AlertEvent alertEvent)
    {
        string kind;
        byte[] body;
        try
        {
            (kind, body) = Messages.For(alertEvent, _instance);
        }
        catch (Exception ex)
        {
            ReportPublishFailure(ex, alertEvent);
            return (false, null, null);
        }

        try
        {
            return (_publisher.TryPublish(kind, alertEvent.StreamId, body), kind, body);
        }
        catch (Exception ex)
        {
            ReportPublishFailure(ex, alertEvent);
            return (false, kind, body);
        }
    }

    private void ReportPublishFailure(Exception ex, AlertEvent alertEvent)
    {
        try
        {
            _logger.PublishFailed(ex, alertEvent.EventKind.ToText(), alertEvent.Key.ToString(), alertEvent.StreamId);
        }
        catch (Exception)
        {
            // Nothing left to report to.
        }
    }

    private void Tell(AlertEvent alertEvent, string kind, byte[] body)
    {
        foreach (var sink in _sinks)
        {
            try
            {
                sink.OnAlertDispatched(alertEvent, kind, body);
            }
            catch (Exception ex)
            {
                // By design: a sink must not throw, and one that does must not stop the others.
                try
                {
                    _logger.DispatchSinkFailed(ex, sink.GetType().Name, alertEvent.EventKind.ToText(), alertEvent.Key.ToString(), alertEvent.StreamId);
                }
                catch (Exception)
                {
                    // Nothing left to report to.
                }
            }
        }
    }
}
