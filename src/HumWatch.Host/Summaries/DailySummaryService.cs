using HumWatch.Core.Summaries;
using HumWatch.Host.Configuration;
using HumWatch.Host.Publishing;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Options;

namespace HumWatch.Host.Summaries;

/// <summary>
/// Writes each stream's daily summary after the site's local midnight (plus <see cref="SummaryOutputOptions.SettleSeconds"/>),
/// publishes it as "summary/&lt;stream&gt;" and logs it. At start it renders days that ended while the service was down
/// (up to <see cref="SummaryOutputOptions.CatchUpDays"/> back). The store's rendered-day record keeps a day from being written twice,
/// and the day's claim (<see cref="SummaryStore.ClaimDay"/>) keeps the instances sharing a store from each writing it.
/// </summary>
internal sealed class DailySummaryService : BackgroundService
{
    private readonly SummaryStore _store;
    private readonly DailySummaryRenderer _renderer;
    private readonly IMessagePublisher _publisher;
    private readonly SummaryOutputOptions _options;
    private readonly TimeZoneInfo _zone;
    private readonly ILogger<DailySummaryService> _logger;
    private readonly TimeProvider _timeProvider;
    private readonly TimeSpan _settle;
    private readonly IDispatchSink[] _sinks;

    public DailySummaryService(
        SummaryStore store,
        IMessagePublisher publisher,
        IOptions<SummaryOutputOptions> options,
        IOptions<SiteOptions> site,
        ILogger<DailySummaryService> logger,
        TimeProvider timeProvider,
        Core.Analysis.AnalysisOptions? analysis = null,
        IEnumerable<IDispatchSink>? sinks = null)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(publisher);
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(site);
        ArgumentNullException.ThrowIfNull(logger);
        ArgumentNullException.ThrowIfNull(timeProvider);
        _store = store;
        _publisher = publisher;
        _options = options.Value;
        _zone = site.Value.ResolveTimeZone();
        _logger = logger;
        _timeProvider = timeProvider;
        _settle = TimeSpan.FromSeconds(_options.SettleSeconds);
        _sinks = sinks?.ToArray() ?? [];
        _renderer = new DailySummaryRenderer(store, _options, site.Value.Name, _zone, analysis?.Sources.MainsHz);
    }

    /// <summary>When the next render is due: the end of the current local day (23, 24 or 25 h long) plus the settle time.</summary>
    internal DateTimeOffset NextRenderUtc(DateTimeOffset nowUtc)
    {
        var today = LocalDay.DayOf(nowUtc - _settle, _zone);
        return LocalDay.RangeUtc(today, _zone).ToUtc + _settle;
    }

    /// <summary>Renders every finished day within the catch-up window that is not fully written yet; returns the summaries written.</summary>
    internal IReadOnlyList<RenderedStream> RenderDueDays()
    {
        var now = _timeProvider.GetUtcNow();
        var today = LocalDay.DayOf(now - _settle, _zone);
        var written = new List<RenderedStream>();
        for (var day = today.AddDays(-Math.Max(1, _options.CatchUpDays)); day < today; day = day.AddDays(1))
        {
            var dayText = day.ToString("yyyy-MM-dd", System.Globalization.CultureInfo.InvariantCulture);
            try
            {
                var (from, to) = LocalDay.RangeUtc(day, _zone);
                var streams = _store.StreamsWithLedger(from, to);
                if (streams.Count == 0 || (_store.RenderedCount(day, _zone.Id) >= streams.Count && _store.IsRendered(day, _zone.Id, string.Empty)))
                {
                    continue;
                }

                foreach (var rendered in _renderer.RenderDay(day))
                {
                    if (!rendered.Written)
                    {
                        continue;
                    }

                    written.Add(rendered);
                    var s = rendered.Summary;
                    _logger.SummaryWritten(dayText, s.Stream, s.Verdict.ToText(), s.HoursMonitored, s.AffectedMinutes, s.Alerts.Raised, DailySummaryRenderer.DayFolder(_options.Folder, day));
                    if (!_publisher.TryPublish(Messages.SummaryKind, s.Stream, rendered.Json))
                    {
                        _logger.SummaryNotPublished(dayText, s.Stream);
                    }

                    foreach (var sink in _sinks)
                    {
                        // Sinks never throw (IDispatchSink); they only queue the summary for their own task.
                        sink.OnSummaryPublished(s, rendered.Json);
                    }
                }
            }
            catch (Exception ex) when (ex is IOException or UnauthorizedAccessException or InvalidOperationException or System.Data.Common.DbException)
            {
                // By design: one failing day must not stop the service; the day stays unrecorded and is tried again.
                _logger.RenderFailed(ex, dayText);
            }
        }

        return written;
    }

    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        if (!_options.Enabled)
        {
            return;
        }

        while (!stoppingToken.IsCancellationRequested)
        {
            RenderDueDays();
            var now = _timeProvider.GetUtcNow();
            var next = NextRenderUtc(now);
            _logger.NextRollover(next, LocalDay.DayOf(now - _settle, _zone).ToString("yyyy-MM-dd", System.Globalization.CultureInfo.InvariantCulture), _zone.Id);
            try
            {
                await Task.Delay(next - now, _timeProvider, stoppingToken).ConfigureAwait(false);
            }
            catch (OperationCanceledException) when (stoppingToken.IsCancellationRequested)
            {
                return;
            }
        }
    }
}
