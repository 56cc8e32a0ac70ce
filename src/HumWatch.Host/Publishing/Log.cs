using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Publishing;

/// <summary>Source-generated log messages of alert dispatch and publishing. Event ids 3000–3099, and 1470 (dispatch sinks).</summary>
internal static partial class PublishingLog
{
    [LoggerMessage(EventId = 3000, Level = LogLevel.Warning,
        Message = "Alert raised on {Stream}: {Key} at {FrequencyHz:0.00} Hz, {AmplitudeUvRms:0.0} µV RMS, {Severity}, channels {WorstChannels}. {Suggestion}")]
    public static partial void AlertRaised(this ILogger logger, string stream, string key, double frequencyHz, double amplitudeUvRms, string severity, string worstChannels, string suggestion);

    [LoggerMessage(EventId = 3001, Level = LogLevel.Information,
        Message = "Alert severity on {Stream}: {Key} {PreviousSeverity} -> {Severity} at {AmplitudeUvRms:0.0} µV RMS")]
    public static partial void AlertSeverityChanged(this ILogger logger, string stream, string key, string previousSeverity, string severity, double amplitudeUvRms);

    [LoggerMessage(EventId = 3002, Level = LogLevel.Information,
        Message = "Alert cleared on {Stream}: {Key} ({Reason}) after {DurationSeconds:0} s, peak {PeakUvRms:0.0} µV RMS, peak severity {PeakSeverity}")]
    public static partial void AlertCleared(this ILogger logger, string stream, string key, string reason, double durationSeconds, double peakUvRms, string peakSeverity);

    [LoggerMessage(EventId = 3003, Level = LogLevel.Warning, Message = "Channel fault on {Stream}: {Key}, {Severity}. {Suggestion}")]
    public static partial void FaultRaised(this ILogger logger, string stream, string key, string severity, string suggestion);

    [LoggerMessage(EventId = 3004, Level = LogLevel.Information, Message = "Channel fault cleared on {Stream}: {Key} ({Reason}) after {DurationSeconds:0} s")]
    public static partial void FaultCleared(this ILogger logger, string stream, string key, string reason, double durationSeconds);

    [LoggerMessage(EventId = 3013, Level = LogLevel.Error, Message = "Could not publish the {Event} event of {Key} on {Stream}")]
    public static partial void PublishFailed(this ILogger logger, Exception exception, string @event, string key, string stream);

    [LoggerMessage(EventId = 3014, Level = LogLevel.Error, Message = "Could not log the {Event} event of {Key} on {Stream}")]
    public static partial void LogFailed(this ILogger logger, Exception exception, string @event, string key, string stream);

    [LoggerMessage(EventId = 1470, Level = LogLevel.Error, Message = "The {Sink} sink failed on the {Event} event of {Key} on {Stream}; the event is stored and published")]
    public static partial void DispatchSinkFailed(this ILogger logger, Exception exception, string sink, string @event, string key, string stream);

    [LoggerMessage(EventId = 3020, Level = LogLevel.Information, Message = "Publishing on {Endpoint}")]
    public static partial void PublisherBound(this ILogger logger, string endpoint);

    [LoggerMessage(EventId = 3021, Level = LogLevel.Warning,
        Message = "Publishing on {Endpoint}, which is reachable from other machines; anyone on the network can subscribe")]
    public static partial void PublisherNotLoopback(this ILogger logger, string endpoint);

    [LoggerMessage(EventId = 3022, Level = LogLevel.Warning,
        Message = "Publish queue full ({Capacity} messages): dropped {Topic}; {Dropped} dropped so far")]
    public static partial void PublishQueueFull(this ILogger logger, int capacity, string topic, long dropped);

    [LoggerMessage(EventId = 3023, Level = LogLevel.Error, Message = "Sending {Topic} on {Endpoint} failed")]
    public static partial void SendFailed(this ILogger logger, Exception exception, string topic, string endpoint);

    [LoggerMessage(EventId = 3024, Level = LogLevel.Warning, Message = "Publisher on {Endpoint} is closed; dropped {Topic}")]
    public static partial void PublishAfterClose(this ILogger logger, string endpoint, string topic);

    [LoggerMessage(EventId = 3025, Level = LogLevel.Error, Message = "Closing the publisher on {Endpoint} failed")]
    public static partial void CloseFailed(this ILogger logger, Exception exception, string endpoint);

    [LoggerMessage(EventId = 3026, Level = LogLevel.Information, Message = "Publisher on {Endpoint} closed: {Sent} sent, {Dropped} dropped")]
    public static partial void PublisherClosed(this ILogger logger, string endpoint, long sent, long dropped);
}
