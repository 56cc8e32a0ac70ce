using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Store;

/// <summary>Source-generated log messages of the store. Event ids 3100–3149 and 1340–1344.</summary>
internal static partial class StoreLog
{
    [LoggerMessage(EventId = 1340, Level = LogLevel.Warning,
        Message = "Store {Path} is {Fault}: {What} could not be written ({Error}). Writes are kept in memory and retried; analysis and publishing go on. Check {Hint}")]
    public static partial void StoreFaultStarted(this ILogger logger, Exception exception, string path, string fault, string what, string error, string hint);

    [LoggerMessage(EventId = 1341, Level = LogLevel.Warning,
        Message = "Store {Path} is still {Fault} since {SinceUtc:o}: {Deferred} write(s) waiting in memory, {Dropped} given up so far; next try in {RetrySeconds:0} s ({Error})")]
    public static partial void StoreFaultContinues(this ILogger logger, string path, string fault, DateTimeOffset sinceUtc, int deferred, long dropped, double retrySeconds, string error);

    [LoggerMessage(EventId = 1342, Level = LogLevel.Information,
        Message = "Store {Path} takes writes again after {DurationSeconds:0} s {Fault}: {Stored} waiting write(s) stored ({Detail}), {Dropped} given up")]
    public static partial void StoreFaultCleared(this ILogger logger, string path, string fault, double durationSeconds, long stored, string detail, long dropped);

    [LoggerMessage(EventId = 1343, Level = LogLevel.Error,
        Message = "Store {Path}: the backlog of {Backlog} is full ({Capacity}); gave up {Count} oldest write(s) ({Total} in all), the latest {Last}")]
    public static partial void StoreBacklogDropped(this ILogger logger, string path, string backlog, int capacity, long count, long total, string last);

    [LoggerMessage(EventId = 1344, Level = LogLevel.Error,
        Message = "Store {Path} is {Fault} at stop: {Count} waiting write(s) are not in the store ({Detail})")]
    public static partial void StoreBacklogLostAtStop(this ILogger logger, string path, string fault, int count, string detail);
}
