using System.Diagnostics.Metrics;
using HumWatch.Core.Findings;
using HumWatch.Formats.Wire;
using HumWatch.Host.Ingest;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Store;

namespace HumWatch.Host.Web;

/// <summary>
/// The service's figures as System.Diagnostics.Metrics instruments, read when scraped from the counters the service
/// keeps anyway (nothing is counted twice). Exported at /metrics in the Prometheus text format by OpenTelemetry.
/// </summary>
internal sealed class HumWatchMetrics : IDisposable
{
    /// <summary>The meter's name; OpenTelemetry is told to read this meter.</summary>
    public const string MeterName = "HumWatch";

    private readonly Meter _meter;

    public HumWatchMetrics(
        StreamMonitorService monitors,
        IngestCounters counters,
        IngestQueue queue,
        RoomBoard board,
        StoreHealth storeHealth,
        EventClients clients)
    {
        _meter = new Meter(MeterName);
        _meter.CreateObservableGauge("humwatch.streams", () => monitors.Monitors.Count, "{stream}", "Streams with a monitor now.");
        _meter.CreateObservableCounter("humwatch.frames.analysed", () => monitors.FramesAnalysedTotal, "{frame}", "Analysis frames made since start, every stream.");
        _meter.CreateObservableCounter("humwatch.chunks.accepted", () => counters.AcceptedTotal, "{chunk}", "Chunks decoded and queued since start.");
        _meter.CreateObservableCounter("humwatch.chunks.rejected", () => ByReason<WireRejectReason>(counters.RejectedTotal), "{chunk}", "Messages refused since start, by reason.");
        _meter.CreateObservableCounter("humwatch.chunks.dropped", () => ByReason<IngestDropReason>(counters.DroppedTotal), "{chunk}", "Good chunks dropped before analysis since start, by reason.");
        _meter.CreateObservableGauge("humwatch.ingest.queue", () => queue.Count, "{chunk}", "Chunks waiting between the sockets and the streams.");
        _meter.CreateObservableGauge("humwatch.analysis.lag", Lags, "s", "Real time minus the time of the latest analysed sample, per stream whose chunks carry times (latest status).");
        _meter.CreateObservableCounter("humwatch.alerts.raised", () => Kinds(board.RaisedByKind()), "{alert}", "Alerts raised since start, by kind.");
        _meter.CreateObservableGauge("humwatch.alerts.active", () => Active(board), "{alert}", "Alerts active now, by kind.");
        _meter.CreateObservableCounter("humwatch.store.write_failures", () => storeHealth.Failures, "{write}", "Store writes refused since start (first attempts and retries).");
        _meter.CreateObservableGauge("humwatch.store.deferred_writes", () => storeHealth.Deferred, "{write}", "Writes waiting in memory for the store now.");
        _meter.CreateObservableCounter("humwatch.store.dropped_writes", () => storeHealth.Dropped, "{write}", "Writes given up since start because their backlog was full.");
        _meter.CreateObservableGauge("humwatch.web.event_clients", () => clients.Count, "{page}", "Pages connected to the event stream now.");
        IEnumerable<Measurement<double>> Lags()
        {
            foreach (var (stream, lag) in board.Lags())
            {
                yield return new Measurement<double>(lag, new KeyValuePair<string, object?>("stream", stream));
            }
        }
    }

    public void Dispose() => _meter.Dispose();

    /// <summary>Every reason, zeros included, so a rate over a reason has a series from the start.</summary>
    private static IEnumerable<Measurement<long>> ByReason<TReason>(Func<TReason, long> count)
        where TReason : struct, Enum
    {
        foreach (var reason in Enum.GetValues<TReason>())
        {
            yield return new Measurement<long>(count(reason), new KeyValuePair<string, object?>("reason", reason.ToString()));
        }
    }

    /// <summary>The kinds of alert as messages spell them.</summary>
    internal static readonly string[] AllKinds = [.. Enum.GetValues<FindingCategory>().Where(c => c != FindingCategory.All).Select(c => c.ToText())];

    private static IEnumerable<Measurement<long>> Kinds(IReadOnlyList<KeyValuePair<string, long>> counts)
    {
        foreach (var kind in AllKinds)
        {
            var count = counts.FirstOrDefault(c => c.Key == kind).Value;
            yield return new Measurement<long>(count, new KeyValuePair<string, object?>("kind", kind));
        }
    }

    private static IEnumerable<Measurement<int>> Active(RoomBoard board)
    {
        var active = board.ActiveByKind();
        foreach (var kind in AllKinds)
        {
            yield return new Measurement<int>(active.GetValueOrDefault(kind), new KeyValuePair<string, object?>("kind", kind));
        }
    }
}
