namespace HumWatch.Host.Ingest;

/// <summary>Why a good chunk was dropped before analysis. Each value is counted separately per stream.</summary>
public enum IngestDropReason
{
    /// <summary>The ingest queue held <c>Ingest:QueueCapacity</c> chunks.</summary>
    QueueFull,

    /// <summary>Decoded samples in flight already filled <c>Ingest:BufferBytes</c>.</summary>
    BufferFull,

    /// <summary>The stream's own queue held <c>Monitor:StreamQueueCapacity</c> chunks (its analysis is behind).</summary>
    StreamQueueFull,

    /// <summary>The service already held <c>Monitor:MaxStreams</c> streams.</summary>
    TooManyStreams,

    /// <summary>The chunk arrived while the service was stopping.</summary>
    ShuttingDown,

    /// <summary>The stream sent faster than <c>Ingest:RateAllowance</c> × its declared rate (after <c>Ingest:RateBurstSeconds</c> of samples).</summary>
    RateExceeded,
}
