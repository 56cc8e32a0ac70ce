using HumWatch.Core.Alerts;
using HumWatch.Host.Store;

namespace HumWatch.Host.Inbox;

/// <summary>
/// The alert sink of a file checked again after an interrupted attempt. The check is deterministic (event times come
/// from the recording), so the first attempt stored a prefix of the events this one makes: an event the store already
/// has is neither stored nor published again, and an alert the restart already closed ("service restarted") keeps
/// that record — its later events from this check are left out too. Alerts that begin after the interruption point
/// pass through. One instance per file; not thread-safe.
/// </summary>
internal sealed class StoredEventFilter(AlertTable stored, IAlertEventSink next) : IAlertEventSink
{
    private readonly HashSet<(string Stream, string Key)> _closedAtRestart = [];

    /// <summary>Events left out so far.</summary>
    public int Skipped { get; private set; }

    public void OnAlertEvent(AlertEvent alertEvent)
    {
        ArgumentNullException.ThrowIfNull(alertEvent);
        var id = (alertEvent.StreamId, alertEvent.Key.ToString());
        if (stored.Contains(alertEvent))
        {
            if (alertEvent is AlertRaised && stored.ClosedAtRestart(alertEvent.StreamId, alertEvent.Key))
            {
                _closedAtRestart.Add(id);
            }

            Skipped++;
            return;
        }

        if (alertEvent is AlertRaised)
        {
            _closedAtRestart.Remove(id);
        }
        else if (_closedAtRestart.Contains(id))
        {
            Skipped++;
            return;
        }

        next.OnAlertEvent(alertEvent);
    }
}
