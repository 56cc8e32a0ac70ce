using HumWatch.Core.Alerts;
using HumWatch.Core.Findings;

namespace HumWatch.Core.Summaries;

/// <summary>Counts a day's alert events: raised, cleared and changed, by severity and per key.</summary>
internal static class DayAlertCounter
{
    /// <summary>Counts the events in [fromUtc, toUtc); the first raise of each key is given in site time.</summary>
    public static AlertTally Count(IReadOnlyList<AlertRecord> alerts, DateTimeOffset fromUtc, DateTimeOffset toUtc, TimeZoneInfo zone)
    {
        int raised = 0, cleared = 0, changes = 0, minor = 0, marked = 0, severe = 0;
        // Ordered as the key texts, as the list has always been.
        var byKey = new SortedDictionary<FindingKey, (int Raised, int Cleared, AlertSeverity Peak, DateTimeOffset? First)>(FindingKey.TextOrder);
        foreach (var alert in alerts)
        {
            if (alert.Utc < fromUtc || alert.Utc >= toUtc)
            {
                continue;
            }

            byKey.TryGetValue(alert.Key, out var k);
            if (alert.Severity > k.Peak)
            {
                k.Peak = alert.Severity;
            }

            switch (alert.Event)
            {
                case AlertEventKind.Raised:
                    raised++;
                    k.Raised++;
                    k.First ??= alert.Utc;
                    switch (alert.Severity)
                    {
                        case AlertSeverity.Minor:
                            minor++;
                            break;
                        case AlertSeverity.Marked:
                            marked++;
                            break;
                        case AlertSeverity.Severe:
                            severe++;
                            break;
                        default:
                            break;
                    }

                    break;
                case AlertEventKind.Cleared:
                    cleared++;
                    k.Cleared++;
                    break;
                default:
                    changes++;
                    break;
            }

            byKey[alert.Key] = k;
        }

        var list = new List<AlertKeyTally>(byKey.Count);
        foreach (var (key, k) in byKey)
        {
            list.Add(new AlertKeyTally(key, k.Raised, k.Cleared, k.Peak, k.First is { } first ? LocalDay.LocalText(first, zone) : null));
        }

        return new AlertTally(raised, cleared, changes, minor, marked, severe, list);
    }
}
