using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Store;

/// <summary>Source-generated log messages of the store. Event ids 3100–3149.</summary>
internal static partial class StoreLog
{
    [LoggerMessage(EventId = 3100, Level = LogLevel.Error,
        Message = "Could not write {Count} minute ledger rows to the store; kept in memory and retried")]
    public static partial void LedgerWriteFailed(this ILogger logger, Exception exception, int count);

    [LoggerMessage(EventId = 3101, Level = LogLevel.Error,
        Message = "Minute ledger backlog over {Capacity} rows: dropped {Dropped} oldest rows of stream {Stream}")]
    public static partial void LedgerBacklogDropped(this ILogger logger, int capacity, int dropped, string stream);

    [LoggerMessage(EventId = 3102, Level = LogLevel.Information, Message = "Wrote {Count} minute ledger rows that had been waiting")]
    public static partial void LedgerRecovered(this ILogger logger, int count);
}
