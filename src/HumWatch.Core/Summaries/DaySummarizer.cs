using System.Globalization;
using HumWatch.Core.Alerts;
using HumWatch.Core.Findings;

namespace HumWatch.Core.Summaries;

/// <summary>
/// Builds a <see cref="DaySummary"/> from the stored minute ledger and alert events of one stream and local day.
/// Pure: the same rows always give the same summary (figures are rounded so the JSON is stable), which is what makes
/// summaries restart-safe — they depend on the store only, never on what a process happened to hold in memory.
/// </summary>
public static class DaySummarizer
{
    /// <summary>Schema version of <see cref="DaySummary"/>.</summary>
    public const int Version = 1;

    /// <summary>Kinds of source in the order they are listed and judged.</summary>
    private static readonly FindingCategory[] CategoryOrder =
        [FindingCategory.Mains, FindingCategory.Display, FindingCategory.SiteTone, FindingCategory.Unidentified, FindingCategory.ChannelFault];

    /// <summary>Summarises one stream's local day.</summary>
    /// <param name="streamId">Stream id.</param>
    /// <param name="day">Local date.</param>
    /// <param name="zone">Site time zone (IANA id in <see cref="TimeZoneInfo.Id"/>).</param>
    /// <param name="minutes">Ledger rows of the stream; rows outside the day are ignored.</param>
    /// <param name="alerts">Alert events of the stream; events outside the day are ignored.</param>
    /// <param name="spectrum">The day's mean spectrum when stored (gives line frequencies), else null.</param>
    /// <param name="options">Validated limits and episode rules.</param>
    public static DaySummary Summarize(
        string streamId,
        DateOnly day,
        TimeZoneInfo zone,
        IReadOnlyList<LedgerMinute> minutes,
        IReadOnlyList<AlertRecord> alerts,
        DaySpectrum? spectrum,
        SummaryOptions options)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(streamId);
        ArgumentNullException.ThrowIfNull(zone);
        ArgumentNullException.ThrowIfNull(minutes);
        ArgumentNullException.ThrowIfNull(alerts);
        ArgumentNullException.ThrowIfNull(options);
        var errors = options.Validate();
        if (errors.Count > 0)
        {
            throw new ArgumentOutOfRangeException(nameof(options), string.Join(" ", errors));
        }

        var (fromUtc, toUtc) = LocalDay.RangeUtc(day, zone);
        var dayMinutes = (int)((toUtc - fromUtc).Ticks / TimeSpan.TicksPerMinute);
        var all = new SourceTally(FindingKey.All, dayMinutes);
        // Keyed by the typed key, so the spellings a store holds for one finding (e.g. "site:" and "site-tone:") add up.
        var tallies = new Dictionary<FindingKey, SourceTally>();
        var mainsHz = new double?[dayMinutes];
        var monitoredSeconds = 0.0;

        foreach (var row in minutes)
        {
            var index = (int)Math.Floor((row.MinuteUtc - fromUtc).Ticks / (double)TimeSpan.TicksPerMinute);
            if (index < 0 || index >= dayMinutes)
            {
                continue;
            }

            SourceTally tally;
            if (row.SourceKey == FindingKey.All)
            {
                tally = all;
                monitoredSeconds += row.MonitoredSeconds;
                if (row.MainsHz is { } hz && double.IsFinite(hz))
                {
                    mainsHz[index] = hz;
                }
            }
            else if (!tallies.TryGetValue(row.SourceKey, out tally!))
            {
                tally = new SourceTally(row.SourceKey, dayMinutes);
                tallies.Add(row.SourceKey, tally);
            }

            tally.Add(index, row);
        }

        var frequencies = LineFrequencies(alerts, spectrum, fromUtc, toUtc);
        var sources = new List<(SourceTally Tally, SourceSummary Summary)>(tallies.Count);
        foreach (var tally in tallies.Values)
        {
            frequencies.TryGetValue(tally.Key, out var hz);
            sources.Add((tally, tally.ToSummary(options, fromUtc, zone, hz)));
        }

        // Most affected first; the key breaks ties so the order never depends on dictionary order.
        sources.Sort(static (a, b) =>
        {
            var byMinutes = b.Summary.AffectedMinutes.CompareTo(a.Summary.AffectedMinutes);
            return byMinutes != 0 ? byMinutes : FindingKey.TextOrder.Compare(a.Summary.Key, b.Summary.Key);
        });

        var categories = Categories(tallies, options, dayMinutes);
        var allSummary = all.ToSummary(options, fromUtc, zone, 0);
        var hasData = monitoredSeconds > 0;
        var (verdict, reasons) = Judge(categories, options, hasData);
        var hourStarts = new string[(dayMinutes + 59) / 60];
        for (var h = 0; h < hourStarts.Length; h++)
        {
            hourStarts[h] = LocalDay.LocalText(fromUtc.AddHours(h), zone);
        }

        var rows = new List<TimelineRow>(sources.Count);
        foreach (var (tally, summary) in sources)
        {
            rows.Add(new TimelineRow(summary.Key, summary.Label, tally.HourlyMinutes(hourStarts.Length)));
        }

        return new DaySummary(
            Version,
            streamId,
            day.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture),
            zone.Id,
            fromUtc,
            toUtc,
            (int)Math.Round((toUtc - fromUtc).TotalHours),
            Round(monitoredSeconds / 3600, 4),
            verdict,
            reasons,
            allSummary.AffectedMinutes,
            allSummary.MaxAmplitudeUvRms,
            allSummary.MedianAmplitudeUvRms,
            allSummary.Episodes.Count > 0 ? allSummary.Episodes[0] : null,
            allSummary.WorstChannels,
            categories,
            sources.ConvertAll(s => s.Summary),
            TallyAlerts(alerts, fromUtc, toUtc, zone),
            Track(mainsHz),
            new HourTimeline(hourStarts, rows));
    }

    /// <summary>Rounds for output so that the JSON does not carry floating-point noise; NaN stays NaN.</summary>
    internal static double Round(double value, int digits) => double.IsFinite(value) ? Math.Round(value, digits, MidpointRounding.AwayFromZero) : value;

    private static double? Round(double? value, int digits) => value is { } v ? Round(v, digits) : null;

    private static Dictionary<FindingKey, double> LineFrequencies(IReadOnlyList<AlertRecord> alerts, DaySpectrum? spectrum, DateTimeOffset fromUtc, DateTimeOffset toUtc)
    {
        var result = new Dictionary<FindingKey, double>();
        if (spectrum is not null)
        {
            foreach (var (key, hz) in spectrum.LineFrequenciesHz)
            {
                result[key] = hz;
            }
        }

        // Alerts fill in lines the spectrum store does not know (older data); the mean of the events' frequencies.
        var sums = new Dictionary<FindingKey, (double Sum, int Count)>();
        foreach (var alert in alerts)
        {
            if (alert.Utc < fromUtc || alert.Utc >= toUtc || alert.FrequencyHz is not { } hz || !double.IsFinite(hz) || result.ContainsKey(alert.Key))
            {
                continue;
            }

            sums.TryGetValue(alert.Key, out var s);
            sums[alert.Key] = (s.Sum + hz, s.Count + 1);
        }

        foreach (var (key, s) in sums)
        {
            result[key] = s.Sum / s.Count;
        }

        return result;
    }

    private static List<CategorySummary> Categories(Dictionary<FindingKey, SourceTally> tallies, SummaryOptions options, int dayMinutes)
    {
        var result = new List<CategorySummary>(CategoryOrder.Length);
        var perMinute = new double[dayMinutes];
        foreach (var category in CategoryOrder)
        {
            Array.Clear(perMinute);
            foreach (var tally in tallies.Values)
            {
                if (tally.Key.Category == category)
                {
                    tally.MaxInto(perMinute);
                }
            }

            var seconds = 0.0;
            for (var i = 0; i < perMinute.Length; i++)
            {
                seconds += perMinute[i];
            }

            var minutes = Round(seconds / 60, 2);
            var limit = options.LimitFor(category)!;
            result.Add(new CategorySummary(category, minutes, limit.WarnMinutes, limit.FailMinutes, VerdictOf(minutes, limit)));
        }

        return result;
    }

    private static DayVerdict VerdictOf(double minutes, DailyLimit limit) =>
        limit.FailMinutes is { } fail && minutes >= fail ? DayVerdict.Fail
        : limit.WarnMinutes is { } warn && minutes >= warn ? DayVerdict.Warn
        : DayVerdict.Pass;

    private static (DayVerdict Verdict, List<string> Reasons) Judge(List<CategorySummary> categories, SummaryOptions options, bool hasData)
    {
        var reasons = new List<string>();
        if (!hasData)
        {
            return (DayVerdict.NoData, reasons);
        }

        var verdict = DayVerdict.Pass;
        foreach (var c in categories)
        {
            var key = $"Summaries:Day:{SummaryOptions.LimitKey(c.Category)}";
            if (c.Verdict == DayVerdict.Fail)
            {
                verdict = DayVerdict.Fail;
                reasons.Add(string.Create(CultureInfo.InvariantCulture, $"{c.Category.ToText()}: {c.AffectedMinutes:0.##} affected minutes reach the fail limit of {c.FailMinutes:0.##} ({key}:FailMinutes)."));
            }
            else if (c.Verdict == DayVerdict.Warn)
            {
                if (verdict == DayVerdict.Pass)
                {
                    verdict = DayVerdict.Warn;
                }

                reasons.Add(string.Create(CultureInfo.InvariantCulture, $"{c.Category.ToText()}: {c.AffectedMinutes:0.##} affected minutes reach the warn limit of {c.WarnMinutes:0.##} ({key}:WarnMinutes)."));
            }
        }

        return (verdict, reasons);
    }

    private static AlertTally TallyAlerts(IReadOnlyList<AlertRecord> alerts, DateTimeOffset fromUtc, DateTimeOffset toUtc, TimeZoneInfo zone)
    {
        int raised = 0, cleared = 0, changes = 0, minor = 0, marked = 0, severe = 0;
        // Ordered as the key texts, as the list has always been.
        var byKey = new SortedDictionary<FindingKey, (int Raised, int Cleared, AlertSeverity Peak, DateTimeOffset? First)>(FindingKey.TextOrder);
        foreach (var alert in alerts)
        {
            if (alert.Utc < fromUtc || alert.Utc >= toUtc)
            {
                continue;
            }

            byKey.TryGetValue(alert.Key, out var k);
            if (alert.Severity > k.Peak)
            {
                k.Peak = alert.Severity;
            }

            switch (alert.Event)
            {
                case AlertEventKind.Raised:
                    raised++;
                    k.Raised++;
                    k.First ??= alert.Utc;
                    switch (alert.Severity)
                    {
                        case AlertSeverity.Minor:
                            minor++;
                            break;
                        case AlertSeverity.Marked:
                            marked++;
                            break;
                        case AlertSeverity.Severe:
                            severe++;
                            break;
                        default:
                            break;
                    }

                    break;
                case AlertEventKind.Cleared:
                    cleared++;
                    k.Cleared++;
                    break;
                default:
                    changes++;
                    break;
            }

            byKey[alert.Key] = k;
        }

        var list = new List<AlertKeyTally>(byKey.Count);
        foreach (var (key, k) in byKey)
        {
            list.Add(new AlertKeyTally(key, k.Raised, k.Cleared, k.Peak, k.First is { } first ? LocalDay.LocalText(first, zone) : null));
        }

        return new AlertTally(raised, cleared, changes, minor, marked, severe, list);
    }

    private static MainsTrack Track(double?[] hz)
    {
        var count = 0;
        var sum = 0.0;
        var min = double.PositiveInfinity;
        var max = double.NegativeInfinity;
        var series = new double?[hz.Length];
        for (var i = 0; i < hz.Length; i++)
        {
            if (hz[i] is not { } value)
            {
                continue;
            }

            series[i] = Round(value, 4);
            count++;
            sum += value;
            min = Math.Min(min, value);
            max = Math.Max(max, value);
        }

        return count == 0
            ? new MainsTrack(null, null, null, 0, 60, series)
            : new MainsTrack(Round(sum / count, 4), Round(min, 4), Round(max, 4), count, 60, series);
    }

    internal static double? Median(List<double> values)
    {
        if (values.Count == 0)
        {
            return null;
        }

        values.Sort();
        var mid = values.Count / 2;
        return values.Count % 2 == 1 ? values[mid] : (values[mid - 1] + values[mid]) / 2;
    }

    /// <summary>One source key's minutes over the day.</summary>
    private sealed class SourceTally(FindingKey key, int dayMinutes)
    {
        private readonly double[] _affectedSeconds = new double[dayMinutes];
        private readonly List<double> _medians = [];
        private readonly Dictionary<string, int> _channelMinutes = new(StringComparer.Ordinal);
        private double _max = double.NaN;

        public FindingKey Key { get; } = key;

        public void Add(int index, LedgerMinute row)
        {
            _affectedSeconds[index] += row.AffectedSeconds;
            if (row.MaxAmplitudeUvRms is { } max && !(_max >= max))
            {
                _max = max;
            }

            if (row.MedianAmplitudeUvRms is { } median && double.IsFinite(median) && row.AffectedSeconds > 0)
            {
                _medians.Add(median);
            }

            if (row.AffectedSeconds > 0)
            {
                foreach (var channel in row.WorstChannels)
                {
                    _channelMinutes[channel] = _channelMinutes.GetValueOrDefault(channel) + 1;
                }
            }
        }

        public void MaxInto(double[] perMinute)
        {
            for (var i = 0; i < perMinute.Length; i++)
            {
                if (_affectedSeconds[i] > perMinute[i])
                {
                    perMinute[i] = _affectedSeconds[i];
                }
            }
        }

        public double[] HourlyMinutes(int hours)
        {
            var result = new double[hours];
            for (var i = 0; i < _affectedSeconds.Length; i++)
            {
                result[i / 60] += _affectedSeconds[i];
            }

            for (var h = 0; h < hours; h++)
            {
                result[h] = Round(result[h] / 60, 2);
            }

            return result;
        }

        public SourceSummary ToSummary(SummaryOptions options, DateTimeOffset fromUtc, TimeZoneInfo zone, double frequencyHz)
        {
            var total = 0.0;
            for (var i = 0; i < _affectedSeconds.Length; i++)
            {
                total += _affectedSeconds[i];
            }

            var episodes = Episodes(options, fromUtc, zone);
            var episodeCount = episodes.Count;
            episodes.Sort(static (a, b) =>
            {
                var bySpan = b.SpanMinutes.CompareTo(a.SpanMinutes);
                return bySpan != 0 ? bySpan : a.StartUtc.CompareTo(b.StartUtc);
            });
            if (episodes.Count > options.EpisodesListed)
            {
                episodes.RemoveRange(options.EpisodesListed, episodes.Count - options.EpisodesListed);
            }

            var channels = new List<KeyValuePair<string, int>>(_channelMinutes);
            channels.Sort(static (a, b) =>
            {
                var byMinutes = b.Value.CompareTo(a.Value);
                return byMinutes != 0 ? byMinutes : string.CompareOrdinal(a.Key, b.Key);
            });
            var worst = new List<ChannelMinutes>(Math.Min(channels.Count, options.WorstChannelCount));
            for (var i = 0; i < channels.Count && i < options.WorstChannelCount; i++)
            {
                worst.Add(new ChannelMinutes(channels[i].Key, channels[i].Value));
            }

            double? hz = frequencyHz > 0 ? Round(frequencyHz, 3) : Key.FrequencyHz;
            return new SourceSummary(
                Key,
                Key.Category,
                Key.Label,
                Key.Harmonic,
                Key.Category == FindingCategory.ChannelFault ? null : hz,
                Round(total / 60, 2),
                episodeCount,
                episodes,
                double.IsFinite(_max) ? Round(_max, 3) : null,
                Round(Median(_medians), 3),
                worst);
        }

        private List<Episode> Episodes(SummaryOptions options, DateTimeOffset fromUtc, TimeZoneInfo zone)
        {
            var result = new List<Episode>();
            var start = -1;
            var lastOn = -1;
            for (var i = 0; i <= _affectedSeconds.Length; i++)
            {
                var on = i < _affectedSeconds.Length && _affectedSeconds[i] >= options.EpisodeMinuteMinSeconds;
                if (on)
                {
                    if (start < 0)
                    {
                        start = i;
                    }
                    else if (i - lastOn - 1 > options.EpisodeBridgeMinutes)
                    {
                        result.Add(MakeEpisode(start, lastOn + 1, fromUtc, zone));
                        start = i;
                    }

                    lastOn = i;
                }
            }

            if (start >= 0)
            {
                result.Add(MakeEpisode(start, lastOn + 1, fromUtc, zone));
            }

            return result;
        }

        private Episode MakeEpisode(int start, int end, DateTimeOffset fromUtc, TimeZoneInfo zone)
        {
            var seconds = 0.0;
            for (var i = start; i < end; i++)
            {
                seconds += _affectedSeconds[i];
            }

            var startUtc = fromUtc.AddMinutes(start);
            var endUtc = fromUtc.AddMinutes(end);
            return new Episode(Key, startUtc, endUtc, LocalDay.LocalText(startUtc, zone), LocalDay.LocalText(endUtc, zone), end - start, Round(seconds / 60, 2));
        }
    }
}
