using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Summaries;

/// <summary>Source-generated log messages of the daily summaries. Event ids 5000–5099.</summary>
internal static partial class SummariesLog
{
    [LoggerMessage(EventId = 5000, Level = LogLevel.Information,
        Message = "Daily summary {Day} {Stream}: {Verdict}, monitored {HoursMonitored:0.0} h, affected {AffectedMinutes:0.#} min, alerts raised {Raised}, written to {Folder}")]
    public static partial void SummaryWritten(this ILogger logger, string day, string stream, string verdict, double hoursMonitored, double affectedMinutes, int raised, string folder);

    [LoggerMessage(EventId = 5001, Level = LogLevel.Warning, Message = "Daily summary {Day} {Stream} was written but could not be queued for publishing")]
    public static partial void SummaryNotPublished(this ILogger logger, string day, string stream);

    [LoggerMessage(EventId = 5002, Level = LogLevel.Error, Message = "Daily summaries for {Day} failed; they are tried again at the next rollover or start")]
    public static partial void RenderFailed(this ILogger logger, Exception exception, string day);

    [LoggerMessage(EventId = 5003, Level = LogLevel.Information, Message = "Next daily summary at {NextUtc:o} (local day {Day} ends, time zone {Zone})")]
    public static partial void NextRollover(this ILogger logger, DateTimeOffset nextUtc, string day, string zone);
}
