using HumWatch.Core.Alerts;
using HumWatch.Core.Summaries;

namespace HumWatch.Host.Publishing;

/// <summary>
/// Told of each alert event after <see cref="AlertDispatcher"/> stored and published it, and of each daily summary
/// after it was written and published. Implementations return at once (hand the work to their own task) and never throw.
/// </summary>
internal interface IDispatchSink
{
    /// <summary>An alert event went out as <paramref name="kind"/> ("alert" or "clear") with <paramref name="body"/>, the published bytes (do not change them).</summary>
    void OnAlertDispatched(AlertEvent alertEvent, string kind, byte[] body);

    /// <summary>A daily summary went out as "summary" with <paramref name="body"/>, the published bytes (do not change them).</summary>
    void OnSummaryPublished(DaySummary summary, byte[] body)
    {
    }
}
