using HumWatch.Core.Alerts;
using HumWatch.Core.Summaries;
using HumWatch.Host.Publishing;

namespace HumWatch.Host.Notify;

/// <summary>One published message on its way to the notification targets. Immutable; shared by every target.</summary>
/// <param name="Kind">"alert", "clear" or "summary".</param>
/// <param name="Stream">Stream id.</param>
/// <param name="Body">The published JSON body, sent as it is.</param>
/// <param name="OfferedUtc">When the dispatcher handed it over; a mail batch is counted from its first event's time.</param>
/// <param name="DeliveryId">Same on every attempt, so a receiver can drop a repeat after a retry.</param>
internal sealed record Notification(string Kind, string Stream, byte[] Body, DateTimeOffset OfferedUtc, Guid DeliveryId)
{
    /// <summary>The alert event, for alerts and clears.</summary>
    public AlertEvent? Event { get; init; }

    /// <summary>The daily summary, for summaries.</summary>
    public DaySummary? Summary { get; init; }

    /// <summary>As a flag of <see cref="NotifyKinds"/>.</summary>
    public NotifyKinds KindFlag => Kind switch
    {
        Messages.AlertKind => NotifyKinds.Alert,
        Messages.ClearKind => NotifyKinds.Clear,
        Messages.SummaryKind => NotifyKinds.Summary,
        _ => NotifyKinds.None,
    };

    /// <summary>
    /// The severity a minimum-severity filter compares: an alert's severity after the event, the highest one a cleared
    /// alert reached (so whoever got its alert gets its clear); summaries pass every filter.
    /// </summary>
    public AlertSeverity FilterSeverity => Event switch
    {
        AlertCleared c => c.PeakSeverity,
        { } e => e.Severity,
        null => AlertSeverity.Severe,
    };

    public static Notification For(AlertEvent alertEvent, string kind, byte[] body, DateTimeOffset offeredUtc) =>
        new(kind, alertEvent.StreamId, body, offeredUtc, Guid.NewGuid()) { Event = alertEvent };

    public static Notification For(DaySummary summary, byte[] body, DateTimeOffset offeredUtc) =>
        new(Messages.SummaryKind, summary.Stream, body, offeredUtc, Guid.NewGuid()) { Summary = summary };
}

/// <summary>Which notifications a target takes.</summary>
internal readonly record struct NotifyFilter(NotifyKinds Kinds, AlertSeverity MinimumSeverity)
{
    public bool Accepts(Notification notification) =>
        (Kinds & notification.KindFlag) != 0 && notification.FilterSeverity >= MinimumSeverity;

    /// <summary>"alert, clear; minor and above", for the start-up log line.</summary>
    public override string ToString() =>
        $"{Kinds.ToString().ToLowerInvariant()}; {MinimumSeverity.ToText()} and above";
}
