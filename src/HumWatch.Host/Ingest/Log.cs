using HumWatch.Formats.Wire;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Ingest;

/// <summary>Source-generated log messages of the socket ingest. Event ids 1100–1199.</summary>
internal static partial class IngestLog
{
    [LoggerMessage(1100, LogLevel.Information, "Ingest {SocketType} socket {Mode} {Endpoint} (configured as Ingest:Endpoints:{EndpointIndex}, CURVE {CurveEnabled})")]
    public static partial void SocketOpened(this ILogger logger, IngestSocketType socketType, IngestSocketMode mode, string endpoint, int endpointIndex, bool curveEnabled);

    [LoggerMessage(1101, LogLevel.Warning, "Ingest socket binds to non-loopback address {Endpoint}: other hosts can send data to it. Use CURVE (Ingest:Endpoints:{EndpointIndex}:Curve) or a firewall for off-host senders")]
    public static partial void NonLoopbackBind(this ILogger logger, string endpoint, int endpointIndex);

    [LoggerMessage(1102, LogLevel.Warning, "Rejected message on {Endpoint}: {Problem} (reason {Reason}; {Suppressed} similar rejections not logged since the last warning)")]
    public static partial void MessageRejected(this ILogger logger, string endpoint, string problem, WireRejectReason reason, long suppressed);

    [LoggerMessage(1103, LogLevel.Warning, "Dropped a chunk of stream {StreamId} from {Endpoint} ({Reason}): {Detail}; {Suppressed} more drops of this stream since the last warning")]
    public static partial void ChunkDropped(this ILogger logger, string streamId, string endpoint, IngestDropReason reason, string detail, long suppressed);

    [LoggerMessage(1104, LogLevel.Error, "Ingest socket {Endpoint} failed while receiving; the socket keeps running")]
    public static partial void ReceiveFailed(this ILogger logger, Exception exception, string endpoint);

    [LoggerMessage(1105, LogLevel.Information, "Ingest socket {Endpoint} closed")]
    public static partial void SocketClosed(this ILogger logger, string endpoint);

    [LoggerMessage(1106, LogLevel.Information, "Stream {StreamId} started a new session on {Endpoint}: {SampleRateHz} Hz, {ChannelCount} channels")]
    public static partial void NewSession(this ILogger logger, string streamId, string endpoint, double sampleRateHz, int channelCount);

    [LoggerMessage(1108, LogLevel.Information, "Ingest holds up to {BufferMiB:F0} MiB of decoded samples in flight (Ingest:BufferBytes) and up to {QueueCapacity} chunks in its queue (Ingest:QueueCapacity)")]
    public static partial void BufferBudget(this ILogger logger, double bufferMiB, int queueCapacity);

    [LoggerMessage(1320, LogLevel.Warning, "{Suppressed} ingest warnings not logged in the last {IntervalSeconds:0.#} s: more than {MaxWarnings} in one interval (Ingest:MaxWarningsPerInterval); the counters have every one")]
    public static partial void WarningsSuppressed(this ILogger logger, long suppressed, double intervalSeconds, int maxWarnings);

    [LoggerMessage(1107, LogLevel.Warning, "CURVE key file {Path} can be read by other users; restrict it to the service account (e.g. chmod 600)")]
    public static partial void KeyFileTooOpen(this ILogger logger, string path);
}
