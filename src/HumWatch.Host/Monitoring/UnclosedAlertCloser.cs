using HumWatch.Core.Alerts;
using HumWatch.Core.Attribution;
using HumWatch.Core.Findings;
using HumWatch.Host.Store;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Monitoring;

/// <summary>
/// Closes the alerts a stop without closing them (kill, crash, power loss) left open in the store: at start, before
/// any stream or file is analysed, this instance's own with reason "service restarted" (the instance heartbeat calls
/// it, Fleet/InstanceHeartbeat.cs); and a stale peer's with reason "instance stopped" once the heartbeat won the claim
/// on it. The clear is placed at the last moment the stream is known to have been watched — its newest ledger minute's
/// monitored end, or the alert's last event when later — never at the restart itself, which would count the time the
/// service was away as affected. Each clear goes through the alert sink (store, log, subscribers) like any other.
/// </summary>
internal sealed class UnclosedAlertCloser(HumWatchStore store, IAlertEventSink sink, TimeProvider time, ILogger<UnclosedAlertCloser> logger)
{
    /// <summary>Closes every unclosed alert, whoever stored it, with "service restarted"; returns how many. A store that cannot be read leaves them open (logged).</summary>
    internal int CloseAll() => Close(storedBy: null, AlertClearReason.ServiceRestarted, time.GetUtcNow());

    /// <summary>
    /// Closes the unclosed alerts whose newest event <paramref name="storedBy"/> accepts (given the instance that stored
    /// it; null for all); returns how many. No clear is placed after <paramref name="notAfterUtc"/> unless the alert's own
    /// last event is later. A store that cannot be read leaves them open (logged).
    /// </summary>
    internal int Close(Func<string?, bool>? storedBy, AlertClearReason reason, DateTimeOffset notAfterUtc)
    {
        IReadOnlyList<IReadOnlyList<StoredAlert>> unclosed;
        try
        {
            unclosed = store.Alerts.Unclosed(storedBy: storedBy);
        }
        catch (Exception ex) when (ex is System.Data.Common.DbException or InvalidOperationException or IOException)
        {
            logger.UnclosedAlertsFailed(ex);
            return 0;
        }

        var lastSeen = new Dictionary<string, DateTimeOffset?>(StringComparer.Ordinal);
        foreach (var events in unclosed)
        {
            var stream = events[0].Stream;
            if (!lastSeen.TryGetValue(stream, out var monitoredUntil))
            {
                monitoredUntil = store.Activity.LastMonitoredUtc(stream);
                lastSeen[stream] = monitoredUntil;
            }

            sink.OnAlertEvent(ClearOf(events, monitoredUntil, notAfterUtc, reason));
        }

        if (unclosed.Count > 0 && reason == AlertClearReason.ServiceRestarted)
        {
            logger.UnclosedAlertsClosed(unclosed.Count);
        }

        return unclosed.Count;
    }

    /// <summary>The clear of one unclosed alert from its stored events (the raise first when it was stored); never before its last event.</summary>
    internal static AlertCleared ClearOf(IReadOnlyList<StoredAlert> events, DateTimeOffset? monitoredUntil, DateTimeOffset now, AlertClearReason reason = AlertClearReason.ServiceRestarted)
    {
        var last = events[^1];
        var raised = events.FirstOrDefault(e => e.Event == AlertEventKind.Raised) ?? events[0];
        // The ledger may carry the stream past the alert's last event, but not past the clock (a wrong clock before
        // the stop); a recording's own times (a re-checked file) can lie ahead of the clock and are kept as they are.
        var end = last.Utc;
        if (monitoredUntil is { } until && until > end)
        {
            end = until < now ? until : (now > end ? now : end);
        }
        var onset = raised.OnsetUtc ?? raised.Utc;
        var key = last.Key;
        var amplitudes = events.Where(e => e.AmplitudeUvRms is not null).Select(e => e.AmplitudeUvRms!.Value).ToList();
        return new AlertCleared(
            last.Stream,
            key,
            key.Category == FindingCategory.ChannelFault ? AlertCategory.ChannelFault : AlertCategory.Line,
            SourceOf(last, key),
            key.FaultKind,
            last.StreamSeconds + (end - last.Utc).TotalSeconds,
            end,
            last.FrequencyHz ?? double.NaN,
            reason,
            Math.Max(0, (end - onset).TotalSeconds),
            amplitudes.Count > 0 ? amplitudes.Max() : double.NaN,
            events.Max(e => e.Severity),
            last.Severity);
    }

    /// <summary>The source as the store keeps it: family from the key, name, harmonic and folding from the row.</summary>
    private static SourceMatch SourceOf(StoredAlert row, FindingKey key)
    {
        var kind = key.Category switch
        {
            FindingCategory.Mains => SourceKind.Mains,
            FindingCategory.Display => SourceKind.Display,
            FindingCategory.SiteTone => SourceKind.SiteTone,
            _ => SourceKind.Unidentified,
        };
        return kind == SourceKind.Unidentified || row.SourceName is null
            ? SourceMatch.None with { Aliased = row.Aliased }
            : new SourceMatch(kind, row.SourceName, 0, row.Harmonic ?? key.Harmonic ?? 1, row.Aliased, row.FrequencyHz ?? 0, 0);
    }
}
