using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Monitoring;

internal static partial class MonitoringLog
{
    [LoggerMessage(EventId = 3001, Level = LogLevel.Information, Message = "Stream {Stream}: session started, {ChannelCount} channels at {SampleRateHz} Hz")]
    public static partial void SessionStarted(this ILogger logger, string stream, int channelCount, double sampleRateHz);

    [LoggerMessage(EventId = 3002, Level = LogLevel.Information, Message = "Stream {Stream}: session ended ({Reason}) after {Frames} frames")]
    public static partial void SessionEnded(this ILogger logger, string stream, string reason, long frames);

    [LoggerMessage(EventId = 3003, Level = LogLevel.Warning, Message = "Stream {Stream}: analysis is behind, {Dropped} chunk(s) dropped so far (queue of {Capacity} full)")]
    public static partial void ChunksDropped(this ILogger logger, string stream, long dropped, int capacity);

    [LoggerMessage(EventId = 3004, Level = LogLevel.Warning, Message = "Stream {Stream}: gap or overlap in sample index; analysis restarted ({Gaps} so far)")]
    public static partial void GapDetected(this ILogger logger, string stream, long gaps);

    [LoggerMessage(EventId = 3005, Level = LogLevel.Error, Message = "Stream {Stream}: a chunk could not be analysed; the stream goes on")]
    public static partial void ChunkFailed(this ILogger logger, Exception exception, string stream);

    [LoggerMessage(EventId = 3006, Level = LogLevel.Error, Message = "Ledger: {Count} minute row(s) could not be stored; kept for a retry ({Pending} pending)")]
    public static partial void LedgerWriteFailed(this ILogger logger, Exception exception, int count, int pending);

    [LoggerMessage(EventId = 3007, Level = LogLevel.Warning, Message = "Stream {Stream} refused: already holding the maximum of {MaxStreams} streams")]
    public static partial void TooManyStreams(this ILogger logger, string stream, int maxStreams);

    [LoggerMessage(EventId = 3008, Level = LogLevel.Error, Message = "Status publishing failed; it will be tried again at the next interval")]
    public static partial void StatusFailed(this ILogger logger, Exception exception);
}
