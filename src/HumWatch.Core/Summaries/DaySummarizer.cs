using System.Globalization;
using HumWatch.Core.Findings;

namespace HumWatch.Core.Summaries;

/// <summary>
/// Builds a <see cref="DaySummary"/> from the stored minute ledger and alert events of one stream and local day: sorts
/// the rows into one <see cref="DaySourceTally"/> per source and puts the parts together (verdict: <see cref="DayJudgement"/>,
/// alerts: <see cref="DayAlertCounter"/>, frequencies and mains: <see cref="DayLineFigures"/>).
/// Pure: the same rows always give the same summary (figures are rounded so the JSON is stable), which is what makes
/// summaries restart-safe — they depend on the store only, never on what a process happened to hold in memory.
/// </summary>
public static class DaySummarizer
{
    /// <summary>Schema version of <see cref="DaySummary"/>.</summary>
    public const int Version = 1;

    /// <summary>Summarises one stream's local day.</summary>
    /// <param name="streamId">Stream id.</param>
    /// <param name="day">Local date.</param>
    /// <param name="zone">Site time zone (IANA id in <see cref="TimeZoneInfo.Id"/>).</param>
    /// <param name="minutes">Ledger rows of the stream; rows outside the day are ignored.</param>
    /// <param name="alerts">Alert events of the stream; events outside the day are ignored.</param>
    /// <param name="spectrum">The day's mean spectrum when stored (gives line frequencies), else null.</param>
    /// <param name="options">Validated limits and episode rules.</param>
    /// <param name="rulesKey">The configuration key the rules were bound from, named in verdict reasons and errors; null names the rules alone.</param>
    public static DaySummary Summarize(
        string streamId,
        DateOnly day,
        TimeZoneInfo zone,
        IReadOnlyList<LedgerMinute> minutes,
        IReadOnlyList<AlertRecord> alerts,
        DaySpectrum? spectrum,
        DaySummaryRules options,
        string? rulesKey = null)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(streamId);
        ArgumentNullException.ThrowIfNull(zone);
        ArgumentNullException.ThrowIfNull(minutes);
        ArgumentNullException.ThrowIfNull(alerts);
        ArgumentNullException.ThrowIfNull(options);
        var errors = options.Validate(rulesKey);
        if (errors.Count > 0)
        {
            throw new ArgumentOutOfRangeException(nameof(options), string.Join(" ", errors));
        }

        var (fromUtc, toUtc) = LocalDay.RangeUtc(day, zone);
        var dayMinutes = (int)((toUtc - fromUtc).Ticks / TimeSpan.TicksPerMinute);
        var all = new DaySourceTally(FindingKey.All, dayMinutes);
        // Keyed by the typed key, so the spellings a store holds for one finding (e.g. "site:" and "site-tone:") add up.
        var tallies = new Dictionary<FindingKey, DaySourceTally>();
        var mainsHz = new double?[dayMinutes];
        var monitoredSeconds = 0.0;

        foreach (var row in minutes)
        {
            var index = (int)Math.Floor((row.MinuteUtc - fromUtc).Ticks / (double)TimeSpan.TicksPerMinute);
            if (index < 0 || index >= dayMinutes)
            {
                continue;
            }

            DaySourceTally tally;
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
                tally = new DaySourceTally(row.SourceKey, dayMinutes);
                tallies.Add(row.SourceKey, tally);
            }

            tally.Add(index, row);
        }

        var frequencies = DayLineFigures.Frequencies(alerts, spectrum, fromUtc, toUtc);
        var sources = new List<(DaySourceTally Tally, SourceSummary Summary)>(tallies.Count);
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

        var categories = DayJudgement.Categories(tallies.Values, options, dayMinutes);
        var allSummary = all.ToSummary(options, fromUtc, zone, 0);
        var hasData = monitoredSeconds > 0;
        var (verdict, reasons) = DayJudgement.Judge(categories, hasData, rulesKey);
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
            SummaryRounding.Round(monitoredSeconds / 3600, 4),
            verdict,
            reasons,
            allSummary.AffectedMinutes,
            allSummary.MaxAmplitudeUvRms,
            allSummary.MedianAmplitudeUvRms,
            allSummary.Episodes.Count > 0 ? allSummary.Episodes[0] : null,
            allSummary.WorstChannels,
            categories,
            sources.ConvertAll(s => s.Summary),
            DayAlertCounter.Count(alerts, fromUtc, toUtc, zone),
            DayLineFigures.Mains(mainsHz),
            new HourTimeline(hourStarts, rows));
    }
}
