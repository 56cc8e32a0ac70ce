using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Web;

/// <summary>Source-generated log messages of the live page and its API. Event ids 1400–1439.</summary>
internal static partial class WebLog
{
    [LoggerMessage(EventId = 1400, Level = LogLevel.Information, Message = "Live page on {Address} (rooms, API under /api/v1/, /healthz, /readyz, /metrics)")]
    public static partial void Listening(this ILogger logger, string address);

    [LoggerMessage(EventId = 1401, Level = LogLevel.Warning, Message = "Live page on {Address} is reachable from other hosts; requests need the {Credential}. Plain HTTP: put it behind TLS on an untrusted network")]
    public static partial void ListeningOffHost(this ILogger logger, string address, string credential);

    [LoggerMessage(EventId = 1402, Level = LogLevel.Information, Message = "Live page stopped ({Served} event streams served, {Messages} messages sent)")]
    public static partial void Stopped(this ILogger logger, long served, long messages);

    [LoggerMessage(EventId = 1410, Level = LogLevel.Warning, Message = "Could not read a published {Kind} message of {Stream} for the live page; the room keeps its last state")]
    public static partial void MessageUnreadable(this ILogger logger, Exception exception, string kind, string stream);

    [LoggerMessage(EventId = 1411, Level = LogLevel.Information, Message = "Event stream of a page closed: it fell {Queued} messages behind (the page reconnects and starts from a fresh snapshot)")]
    public static partial void ClientTooSlow(this ILogger logger, int queued);

    [LoggerMessage(EventId = 1412, Level = LogLevel.Warning, Message = "Event stream refused: {Clients} pages are connected, the most Web:MaxEventClients allows")]
    public static partial void TooManyClients(this ILogger logger, int clients);

    [LoggerMessage(EventId = 1413, Level = LogLevel.Error, Message = "The live page's room update failed; it is tried again")]
    public static partial void UpdateFailed(this ILogger logger, Exception exception);

    [LoggerMessage(EventId = 1414, Level = LogLevel.Warning, Message = "The live page could not list the rooms of the last day from the store; rooms appear as their data arrives")]
    public static partial void SeedFailed(this ILogger logger, Exception exception);

    [LoggerMessage(EventId = 1420, Level = LogLevel.Warning, Message = "Refused {Method} {Path} from {Remote}: no valid credential")]
    public static partial void Unauthorized(this ILogger logger, string method, string path, string remote);

    [LoggerMessage(EventId = 1421, Level = LogLevel.Error, Message = "Request {Method} {Path} failed")]
    public static partial void RequestFailed(this ILogger logger, Exception exception, string method, string path);

    [LoggerMessage(EventId = 1422, Level = LogLevel.Warning, Message = "Not ready: {Reasons}")]
    public static partial void NotReady(this ILogger logger, string reasons);
}
