using System.Globalization;
using HumWatch.Host.Ingest;
using HumWatch.Host.Publishing;
using HumWatch.Host.Store;

namespace HumWatch.Host.Web;

/// <summary>
/// What /readyz checks: the store takes writes, the sockets are bound, and analysis keeps up (the ingest queue is not
/// nearly full and no chunk was dropped for want of room in the last <see cref="DropWindow"/>). Thread-safe.
/// </summary>
internal sealed class Readiness(
    HumWatchStore store,
    StoreHealth storeHealth,
    ZmqPublisher publisher,
    Func<IReadOnlyList<string>> ingestEndpoints,
    int ingestEndpointCount,
    IngestQueue queue,
    IngestCounters counters,
    TimeProvider time)
{
    /// <summary>A drop for want of room this recent means analysis is not keeping up.</summary>
    public static readonly TimeSpan DropWindow = TimeSpan.FromSeconds(60);

    /// <summary>Queue fill (of capacity) at which analysis counts as falling behind.</summary>
    public const double QueueHighShare = 0.9;

    private static readonly IngestDropReason[] BacklogReasons = [IngestDropReason.QueueFull, IngestDropReason.BufferFull, IngestDropReason.StreamQueueFull];

    private readonly Lock _gate = new();
    private long _dropsSeen;
    private long? _lastDropAt;

    public ReadinessView Check()
    {
        var checks = new List<CheckView> { Store(), Sockets(), Analysis() };
        return new ReadinessView(checks.TrueForAll(c => c.Ok), checks);
    }

    private CheckView Store()
    {
        try
        {
            store.Activity.CheckWritable();
        }
        catch (Exception ex) when (ex is not OutOfMemoryException)
        {
            return new CheckView("store", false, $"the store cannot be written (Store:Path): {ex.Message}");
        }

        var health = storeHealth.Snapshot();
        if (storeHealth.IsFaulted)
        {
            return new CheckView("store", false, string.Create(CultureInfo.InvariantCulture, $"the store is {health.State} since {health.Since:O} ({health.Deferred} writes wait): {health.Error}"));
        }

        return health.Deferred > 0
            ? new CheckView("store", false, string.Create(CultureInfo.InvariantCulture, $"{health.Deferred} writes wait for the store to take them again"))
            : new CheckView("store", true, null);
    }

    private CheckView Sockets()
    {
        var bound = ingestEndpoints();
        if (bound.Count < ingestEndpointCount)
        {
            return new CheckView("sockets", false, string.Create(CultureInfo.InvariantCulture, $"{bound.Count} of {ingestEndpointCount} ingest sockets are open (Ingest:Endpoints)"));
        }

        return publisher.Endpoint.Length > 0
            ? new CheckView("sockets", true, null)
            : new CheckView("sockets", false, "the publish socket is not bound (Publish:Endpoint)");
    }

    private CheckView Analysis()
    {
        var waiting = queue.Count;
        if (waiting >= QueueHighShare * queue.Capacity)
        {
            return new CheckView("analysis", false, string.Create(CultureInfo.InvariantCulture, $"the ingest queue holds {waiting} of {queue.Capacity} chunks: analysis is falling behind"));
        }

        long drops = 0;
        foreach (var reason in BacklogReasons)
        {
            drops += counters.DroppedTotal(reason);
        }

        var now = time.GetTimestamp();
        lock (_gate)
        {
            if (drops > _dropsSeen)
            {
                _lastDropAt = now;
            }

            _dropsSeen = drops;
            if (_lastDropAt is { } at && time.GetElapsedTime(at, now) < DropWindow)
            {
                return new CheckView("analysis", false, string.Create(CultureInfo.InvariantCulture,
                    $"chunks were dropped for want of room in the last {DropWindow.TotalSeconds:0} s ({drops} since start): analysis is not keeping up"));
            }
        }

        return new CheckView("analysis", true, null);
    }
}
