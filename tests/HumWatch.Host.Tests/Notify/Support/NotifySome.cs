using HumWatch.Core.Summaries;

namespace HumWatch.Host.Tests.Notify.Support;

/// <summary>Test data for notifications beyond alert events (those come from Publishing.Support.Some).</summary>
internal static class NotifySome
{
    /// <summary>An invented room's day: 7.5 h monitored, 42 min affected, 3 alerts, a warn verdict.</summary>
    public static DaySummary Day(string stream) => new(
        1, stream, "2026-03-01", "Europe/Berlin", new DateTimeOffset(2026, 2, 28, 23, 0, 0, TimeSpan.Zero), new DateTimeOffset(2026, 3, 1, 23, 0, 0, TimeSpan.Zero), 24,
        7.5, DayVerdict.Warn, ["mains: 42 min affected, at or above Summaries:Day:Mains:WarnMinutes (30 min)"], 42, 12.31, 4.5, null, [], [],
        [], new AlertTally(3, 3, 1, 1, 1, 1, []), new MainsTrack(50.01, 49.97, 50.04, 400, 60, []), new HourTimeline([], []));
}
