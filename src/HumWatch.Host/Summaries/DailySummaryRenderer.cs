using System.Text.Json;
using HumWatch.Core.Summaries;

namespace HumWatch.Host.Summaries;

/// <summary>One stream's rendered day.</summary>
/// <param name="Stream">Stream id.</param>
/// <param name="Summary">The summary.</param>
/// <param name="Json">UTF-8 JSON as written to &lt;stream&gt;.json (and published).</param>
/// <param name="Written">False when the day was already recorded as written and not forced.</param>
internal sealed record RenderedStream(string Stream, DaySummary Summary, byte[] Json, bool Written);

/// <summary>
/// Renders a local day from the store into &lt;folder&gt;/&lt;yyyy-MM-dd&gt;/: &lt;stream&gt;.json, &lt;stream&gt;.plots.json,
/// PNG plots, and day.md for all rooms. Built only from the store, so any process renders the same day the same way.
/// </summary>
internal sealed class DailySummaryRenderer
{
    /// <summary>Where the day rules are bound from; verdict reasons name their limits under it.</summary>
    private const string DayRulesKey = SummaryOutputOptions.SectionName + ":Day";

    private readonly SummaryStore _store;
    private readonly SummaryOutputOptions _options;
    private readonly string _siteName;
    private readonly TimeZoneInfo _zone;
    private readonly double? _siteGridHz;

    /// <param name="store">Summary view of the store.</param>
    /// <param name="options">Validated options.</param>
    /// <param name="siteName">Shown on the day page.</param>
    /// <param name="zone">Site time zone.</param>
    /// <param name="siteGridHz">The grid the settings name (Analysis:Sources:MainsHz); null when left to the data. Places the mains plot on a day without a fundamental.</param>
    public DailySummaryRenderer(SummaryStore store, SummaryOutputOptions options, string siteName, TimeZoneInfo zone, double? siteGridHz = null)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(zone);
        var errors = options.Validate();
        if (errors.Count > 0)
        {
            throw new ArgumentOutOfRangeException(nameof(options), string.Join(" ", errors));
        }

        _store = store;
        _options = options;
        _siteName = siteName;
        _zone = zone;
        _siteGridHz = siteGridHz;
    }

    /// <summary>Site time zone.</summary>
    public TimeZoneInfo Zone => _zone;

    /// <summary>Folder of one day's output.</summary>
    public static string DayFolder(string root, DateOnly day) => Path.Combine(root, day.ToString("yyyy-MM-dd", System.Globalization.CultureInfo.InvariantCulture));

    /// <summary>Builds a stream's summary for a day from the store, without writing anything.</summary>
    public (DaySummary Summary, DaySpectrum? Spectrum) Build(DateOnly day, string stream, IReadOnlyList<AlertRecord>? alerts = null)
    {
        var (summary, spectrum, _) = BuildWithMonitored(day, stream, alerts);
        return (summary, spectrum);
    }

    /// <summary>As <see cref="Build"/>, plus the first and last minute of the day with analysed data (the mains plot's range).</summary>
    private (DaySummary Summary, DaySpectrum? Spectrum, (int First, int Last)? Monitored) BuildWithMonitored(DateOnly day, string stream, IReadOnlyList<AlertRecord>? alerts)
    {
        var (from, to) = LocalDay.RangeUtc(day, _zone);
        alerts ??= _store.AlertsByStream(from, to).GetValueOrDefault(stream) ?? [];
        var spectrum = _store.DaySpectrum(stream, from, to);
        var minutes = _store.LedgerMinutes(stream, from, to);
        var summary = DaySummarizer.Summarize(stream, day, _zone, minutes, alerts, spectrum, _options.Day, DayRulesKey)
            with { Instances = _store.Instances(stream, from, to) };
        return (summary, spectrum, MonitoredRange(minutes, from, to));
    }

    private static (int First, int Last)? MonitoredRange(IReadOnlyList<LedgerMinute> minutes, DateTimeOffset fromUtc, DateTimeOffset toUtc)
    {
        int? first = null;
        int? last = null;
        foreach (var row in minutes)
        {
            if (row.SourceKey != Core.Findings.FindingKey.All || !(row.MonitoredSeconds > 0) || row.MinuteUtc < fromUtc || row.MinuteUtc >= toUtc)
            {
                continue;
            }

            var index = (int)((row.MinuteUtc - fromUtc).Ticks / TimeSpan.TicksPerMinute);
            first = first is { } f ? Math.Min(f, index) : index;
            last = last is { } l ? Math.Max(l, index) : index;
        }

        return first is { } a && last is { } b ? (a, b) : null;
    }

    /// <summary>Serialises a summary as written to its file.</summary>
    public static byte[] ToJson(DaySummary summary) => JsonSerializer.SerializeToUtf8Bytes(summary, SummaryJsonContext.Output.DaySummary);

    /// <summary>
    /// Renders a day. Streams already recorded as written are left alone unless <paramref name="force"/>; the day
    /// page is rewritten whenever a stream was written (it covers every stream of the day). Unless forced, only the
    /// instance holding the day's claim writes anything (<see cref="SummaryStore.ClaimDay"/>): once for the fleet.
    /// </summary>
    /// <param name="day">Local date.</param>
    /// <param name="onlyStream">Render just this stream (the page still lists all); null for all.</param>
    /// <param name="folder">Output root; null for the configured folder.</param>
    /// <param name="force">Write even when recorded as written (the CLI's re-render).</param>
    public IReadOnlyList<RenderedStream> RenderDay(DateOnly day, string? onlyStream = null, string? folder = null, bool force = false)
    {
        var root = folder ?? _options.Folder;
        var dayFolder = DayFolder(root, day);
        var (from, to) = LocalDay.RangeUtc(day, _zone);
        var streams = _store.StreamsWithLedger(from, to);
        var alerts = _store.AlertsByStream(from, to);
        var results = new List<RenderedStream>(streams.Count);
        var summaries = new List<DaySummary>(streams.Count);
        var plots = new Dictionary<string, PlotData>(StringComparer.Ordinal);
        var anyWritten = false;
        bool? claimed = null;
        bool Mine() => claimed ??= _store.ClaimDay(day, _zone.Id);
        foreach (var stream in streams)
        {
            var (summary, spectrum, monitored) = BuildWithMonitored(day, stream, alerts.GetValueOrDefault(stream) ?? []);
            summaries.Add(summary);
            var plotData = SummaryPlots.DataFor(summary, spectrum, _options.PlotWidthPx, _options.PlotHeightPx, _siteGridHz, monitored);
            plots[stream] = plotData;
            var json = ToJson(summary);
            var selected = onlyStream is null || string.Equals(stream, onlyStream, StringComparison.Ordinal);
            var write = selected && (force || (!_store.IsRendered(day, _zone.Id, stream) && Mine()));
            if (write)
            {
                AtomicFile.Write(Path.Combine(dayFolder, stream + ".json"), json);
                AtomicFile.Write(Path.Combine(dayFolder, stream + ".plots.json"), JsonSerializer.SerializeToUtf8Bytes(plotData, SummaryJsonContext.Output.PlotData));
                SummaryPlots.Render(plotData, dayFolder);
                _store.MarkRendered(day, _zone.Id, stream, summary.Verdict);
                anyWritten = true;
            }

            if (selected)
            {
                results.Add(new RenderedStream(stream, summary, json, write));
            }
        }

        if (summaries.Count > 0 && (anyWritten || (!_store.IsRendered(day, _zone.Id, string.Empty) && (force || Mine()))))
        {
            var page = SummaryMarkdown.Build(_siteName, day, _zone, summaries, plots);
            AtomicFile.Write(Path.Combine(dayFolder, SummaryMarkdown.FileName), Serialization.OutputText.Utf8.GetBytes(page));
            _store.MarkRendered(day, _zone.Id, string.Empty, null);
        }

        return results;
    }
}
