using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Notify;

/// <summary>Source-generated log messages of notifications (webhooks, mail). Event ids 1440–1449 and 1471. No secret is ever an argument.</summary>
internal static partial class NotifyLog
{
    [LoggerMessage(1440, LogLevel.Information, "Notifications to {Target}: {Filter}")]
    public static partial void NotifyTargetOn(this ILogger logger, string target, string filter);

    [LoggerMessage(1441, LogLevel.Warning, "Notification queue of {Target} is full ({Capacity} waiting): dropped the {Kind} of {Stream}; {Dropped} dropped so far, {Suppressed} similar drops not logged since the last warning")]
    public static partial void NotifyQueueFull(this ILogger logger, string target, int capacity, string kind, string stream, long dropped, long suppressed);

    [LoggerMessage(1442, LogLevel.Debug, "{Target} took the {Kind} of {Stream} (HTTP {Status})")]
    public static partial void WebhookDelivered(this ILogger logger, string target, string kind, string stream, int status);

    [LoggerMessage(1443, LogLevel.Warning, "{Target}: attempt {Attempt} failed ({Outcome}); trying again in {DelaySeconds:0.0} s")]
    public static partial void NotifyRetrying(this ILogger logger, string target, int attempt, string outcome, double delaySeconds);

    [LoggerMessage(1444, LogLevel.Error, "{Target}: gave up on the {Kind} of {Stream} ({Outcome}); {GivenUp} given up so far. The store and the log keep the event")]
    public static partial void NotifyGaveUp(this ILogger logger, string target, string kind, string stream, string outcome, long givenUp);

    [LoggerMessage(1445, LogLevel.Information, "{Target}: mailed {Count} events to {Recipients} recipients")]
    public static partial void MailSent(this ILogger logger, string target, int count, int recipients);

    [LoggerMessage(1446, LogLevel.Error, "{Target}: gave up on a mail of {Count} events ({Outcome}); {GivenUp} events given up so far. The store and the log keep them")]
    public static partial void MailGaveUp(this ILogger logger, string target, int count, string outcome, long givenUp);

    [LoggerMessage(1447, LogLevel.Information, "Notifications to {Target} stopped: {Delivered} delivered, {GivenUp} given up, {Dropped} dropped")]
    public static partial void NotifyTargetStopped(this ILogger logger, string target, long delivered, long givenUp, long dropped);

    [LoggerMessage(1448, LogLevel.Warning, "{Target} is not encrypted because {Setting} is true: {Exposure}")]
    public static partial void NotifyInsecure(this ILogger logger, string target, string setting, string exposure);

    [LoggerMessage(1449, LogLevel.Error, "{Target} failed on the {Kind} of {Stream}; it goes on with the next")]
    public static partial void NotifyTargetFailed(this ILogger logger, Exception exception, string target, string kind, string stream);

    [LoggerMessage(1471, LogLevel.Warning, "{Target}: {Count} notifications not sent before the stop deadline (Notify:StopDrainSeconds)")]
    public static partial void NotifyLeftAtStop(this ILogger logger, string target, int count);
}
