using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Monitoring;

/// <summary>Source-generated log messages of the stream monitors. Event ids 3200–3299.</summary>
internal static partial class MonitoringLog
{
    [LoggerMessage(EventId = 3201, Level = LogLevel.Information, Message = "Stream {Stream}: session started, {ChannelCount} channels at {SampleRateHz} Hz")]
    public static partial void SessionStarted(this ILogger logger, string stream, int channelCount, double sampleRateHz);

    [LoggerMessage(EventId = 3202, Level = LogLevel.Information, Message = "Stream {Stream}: session ended ({Reason}) after {Frames} frames")]
    public static partial void SessionEnded(this ILogger logger, string stream, string reason, long frames);

    [LoggerMessage(EventId = 3203, Level = LogLevel.Warning, Message = "Stream {Stream}: analysis is behind, {Dropped} chunk(s) dropped so far (queue of {Capacity} full)")]
    public static partial void ChunksDropped(this ILogger logger, string stream, long dropped, int capacity);

    [LoggerMessage(EventId = 3204, Level = LogLevel.Warning, Message = "Stream {Stream}: gap or overlap in sample index; analysis restarted ({Gaps} so far)")]
    public static partial void GapDetected(this ILogger logger, string stream, long gaps);

    [LoggerMessage(EventId = 3205, Level = LogLevel.Error, Message = "Stream {Stream}: a chunk could not be analysed; the stream goes on")]
    public static partial void ChunkFailed(this ILogger logger, Exception exception, string stream);

    [LoggerMessage(EventId = 3207, Level = LogLevel.Warning, Message = "Stream {Stream} refused: already holding the maximum of {MaxStreams} streams")]
    public static partial void TooManyStreams(this ILogger logger, string stream, int maxStreams);

    [LoggerMessage(EventId = 3208, Level = LogLevel.Error, Message = "Status publishing failed; it will be tried again at the next interval")]
    public static partial void StatusFailed(this ILogger logger, Exception exception);

    [LoggerMessage(EventId = 3209, Level = LogLevel.Warning, Message = "Start: {Count} alert(s) left open by an unclean stop were closed (reason \"service restarted\") at the last time their streams were watched")]
    public static partial void UnclosedAlertsClosed(this ILogger logger, int count);

    [LoggerMessage(EventId = 3210, Level = LogLevel.Error, Message = "Start: the alerts an unclean stop left open could not be read from the store; they stay open")]
    public static partial void UnclosedAlertsFailed(this ILogger logger, Exception exception);

    [LoggerMessage(EventId = 1321, Level = LogLevel.Error, Message = "Retiring the idle monitor of stream {Stream} failed")]
    public static partial void RetireFailed(this ILogger logger, Exception exception, string stream);
}
