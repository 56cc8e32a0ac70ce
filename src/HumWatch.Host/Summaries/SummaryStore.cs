using HumWatch.Core.Summaries;
using HumWatch.Host.Store;

namespace HumWatch.Host.Summaries;

/// <summary>
/// The summaries' view of the store: reads ledger, alerts and spectra as Core's summary inputs and keeps the record of
/// rendered days. No SQL and no connection of its own: everything goes through <see cref="HumWatchStore"/>'s tables
/// (and so through its one connection and lock). Thread-safe.
/// </summary>
internal sealed class SummaryStore(HumWatchStore store)
{
    /// <summary>The underlying store.</summary>
    public HumWatchStore Store { get; } = store ?? throw new ArgumentNullException(nameof(store));

    /// <summary>
    /// The seconds-weighted mean spectrum of a stream over [fromUtc, toUtc) (hours by their start), using the bin
    /// width that covers the most time; null when no part is stored.
    /// </summary>
    public DaySpectrum? DaySpectrum(string stream, DateTimeOffset fromUtc, DateTimeOffset toUtc) =>
        DaySpectrumMean.Of(Store.Spectra.Between(stream, fromUtc, toUtc));

    /// <summary>Ledger rows of one stream and UTC range, as the core summarizer reads them.</summary>
    public IReadOnlyList<LedgerMinute> LedgerMinutes(string stream, DateTimeOffset fromUtc, DateTimeOffset toUtc)
    {
        var rows = Store.Ledger.Rows(stream, fromUtc, toUtc);
        var result = new LedgerMinute[rows.Count];
        for (var i = 0; i < rows.Count; i++)
        {
            var r = rows[i];
            result[i] = new LedgerMinute(r.MinuteUtc, r.SourceKey, r.MonitoredSeconds, r.AffectedSeconds, r.MaxUvRms, r.MeanMedianUvRms, r.WorstChannels, r.MainsHz);
        }

        return result;
    }

    /// <summary>Alert events of all streams in a UTC range, grouped by stream.</summary>
    public Dictionary<string, List<AlertRecord>> AlertsByStream(DateTimeOffset fromUtc, DateTimeOffset toUtc)
    {
        var result = new Dictionary<string, List<AlertRecord>>(StringComparer.Ordinal);
        foreach (var a in Store.Alerts.Between(fromUtc, toUtc))
        {
            if (!result.TryGetValue(a.Stream, out var list))
            {
                list = [];
                result.Add(a.Stream, list);
            }

            list.Add(new AlertRecord(a.Utc, a.Key, a.Event, a.Severity, a.FrequencyHz));
        }

        return result;
    }

    /// <summary>The instances that watched a stream's data of a UTC range, ordinal order; empty when none is recorded.</summary>
    public IReadOnlyList<string> Instances(string stream, DateTimeOffset fromUtc, DateTimeOffset toUtc) => Store.StreamOwners.InstancesBetween(stream, fromUtc, toUtc);

    /// <summary>Streams with ledger rows or alerts in a UTC range, ordinal order.</summary>
    public IReadOnlyList<string> StreamsWithLedger(DateTimeOffset fromUtc, DateTimeOffset toUtc) => Store.Activity.StreamsBetween(fromUtc, toUtc);

    /// <summary>Whether the summary of (day, zone, stream) was written; stream "" is the day's page.</summary>
    public bool IsRendered(DateOnly day, string zone, string stream) => Store.Renders.IsRendered(day, zone, stream);

    /// <summary>Records that the summary of (day, zone, stream) was written (after its files are in place).</summary>
    public void MarkRendered(DateOnly day, string zone, string stream, DayVerdict? verdict) => Store.Renders.MarkRendered(day, zone, stream, verdict);

    /// <summary>
    /// Whether this instance renders the day: true for the one instance of the fleet that holds the day's claim (or
    /// takes it over from a stopped one), and always for a store opened without an instance name (tools).
    /// </summary>
    public bool ClaimDay(DateOnly day, string zone) =>
        Store.Instance is not { } me || Store.Instances.Hold(SummaryRenderTable.ClaimName(day, zone), me, Store.Connection.TimeProvider.GetUtcNow());

    /// <summary>How many summaries (streams, not pages) were recorded as written for a day.</summary>
    public int RenderedCount(DateOnly day, string zone) => Store.Renders.RenderedCount(day, zone);
}
