using System.Globalization;
using System.Text;
using HumWatch.Core.Findings;
using HumWatch.Core.Summaries;

namespace HumWatch.Host.Summaries;

/// <summary>The lab-log page of one day: every room's verdict in one table, then one section per room.</summary>
internal static class SummaryMarkdown
{
    /// <summary>File name of the day's page: "day.md".</summary>
    public const string FileName = "day.md";

    /// <summary>Builds the page; <paramref name="summaries"/> in stream order, <paramref name="plots"/> by stream.</summary>
    public static string Build(string siteName, DateOnly day, TimeZoneInfo zone, IReadOnlyList<DaySummary> summaries, IReadOnlyDictionary<string, PlotData> plots)
    {
        ArgumentNullException.ThrowIfNull(summaries);
        var c = CultureInfo.InvariantCulture;
        var (from, to) = LocalDay.RangeUtc(day, zone);
        var sb = new StringBuilder();
        sb.Append(c, $"# {siteName}: line-noise day sheet for {day:yyyy-MM-dd}").AppendLine().AppendLine();
        sb.Append(c, $"Site time zone {zone.Id}; this day has {(to - from).TotalHours:0} hours ({LocalDay.LocalText(from, zone)} to {LocalDay.LocalText(to, zone)}). ");
        var fails = summaries.Count(s => s.Verdict == DayVerdict.Fail);
        var warns = summaries.Count(s => s.Verdict == DayVerdict.Warn);
        sb.Append(c, $"{summaries.Count} room(s): {fails} fail, {warns} warn, {summaries.Count(s => s.Verdict == DayVerdict.Pass)} pass, {summaries.Count(s => s.Verdict == DayVerdict.NoData)} without data.").AppendLine().AppendLine();
        sb.AppendLine(DayLimitsLine(summaries[0])).AppendLine();

        sb.AppendLine("| Room | Instance | Verdict | Monitored | Affected min | Longest run | Max µV RMS | Mains Hz (min–max) | Alerts raised / cleared |");
        sb.AppendLine("|---|---|---|---:|---:|---|---:|---|---:|");
        foreach (var s in summaries)
        {
            var longest = s.LongestEpisode is { } e ? $"{ClockRange(e.StartLocal, e.EndLocal)} ({e.SpanMinutes:0} min)" : "–";
            var grid = s.Mains.NominalHz is { } nominal ? string.Create(c, $"{nominal:0} Hz grid: ") : "";
            var mains = s.Mains.MeanHz is { } mean ? string.Create(c, $"{grid}{mean:0.000} ({s.Mains.MinHz:0.000}–{s.Mains.MaxHz:0.000})") : "–";
            sb.Append(c, $"| {Cell(s.Stream)} | {InstancesText(s)} | **{s.Verdict.ToText()}** | {SummaryPlots.DurationText(s.HoursMonitored * 3600)} | {s.AffectedMinutes:0.#} | {longest} | {Num(s.MaxAmplitudeUvRms)} | {mains} | {s.Alerts.Raised} / {s.Alerts.Cleared} |").AppendLine();
        }

        foreach (var s in summaries)
        {
            sb.AppendLine().Append(c, $"## {Cell(s.Stream)}: {s.Verdict.ToText()}").AppendLine().AppendLine();
            foreach (var reason in s.VerdictReasons)
            {
                sb.Append("- ").AppendLine(reason);
            }

            if (s.VerdictReasons.Count > 0)
            {
                sb.AppendLine();
            }

            if (s.Instances.Count > 0)
            {
                sb.Append(c, $"Watched by {InstancesText(s)}. ");
            }

            sb.Append(c, $"Monitored {SummaryPlots.DurationText(s.HoursMonitored * 3600)} of {s.HoursInDay} h; any line present {s.AffectedMinutes:0.#} min; median of the strongest line {Num(s.MedianAmplitudeUvRms)} µV RMS.");
            if (s.WorstChannels.Count > 0)
            {
                sb.Append(" Worst channels: ").AppendJoin(", ", s.WorstChannels.Select(w => string.Create(c, $"{w.Channel} ({w.Minutes} min)"))).Append('.');
            }

            sb.AppendLine().AppendLine();
            sb.AppendLine("| Kind | Affected min | Warn at | Fail at | Result |");
            sb.AppendLine("|---|---:|---:|---:|---|");
            foreach (var cat in s.Categories)
            {
                sb.Append(c, $"| {cat.Category.ToText()} | {cat.AffectedMinutes:0.#} | {Num(cat.WarnMinutes)} | {Num(cat.FailMinutes)} | {cat.Verdict.ToText()} |").AppendLine();
            }

            if (s.Sources.Count > 0)
            {
                sb.AppendLine().AppendLine("| Source | Hz | Affected min | Episodes | Longest | Max µV RMS | Median µV RMS | Channels |");
                sb.AppendLine("|---|---:|---:|---:|---|---:|---:|---|");
                foreach (var src in s.Sources)
                {
                    var longest = src.Episodes.Count > 0 ? ClockRange(src.Episodes[0].StartLocal, src.Episodes[0].EndLocal) : "–";
                    sb.Append(c, $"| {Cell(src.Label)} | {Num(src.FrequencyHz)} | {src.AffectedMinutes:0.#} | {src.EpisodeCount} | {longest} | {Num(src.MaxAmplitudeUvRms)} | {Num(src.MedianAmplitudeUvRms)} | {Cell(string.Join(", ", src.WorstChannels.Select(w => w.Channel)))} |").AppendLine();
                }
            }

            if (plots.TryGetValue(s.Stream, out var p))
            {
                sb.AppendLine();
                if (p.Spectrum is { } spectrum)
                {
                    sb.Append(c, $"![{s.Stream} mean spectrum]({Uri.EscapeDataString(spectrum.File)}) ");
                }

                sb.Append(c, $"![{s.Stream} timeline]({Uri.EscapeDataString(p.Timeline.File)}) ![{s.Stream} mains frequency]({Uri.EscapeDataString(p.Mains.File)})").AppendLine();
            }
        }

        sb.AppendLine().AppendLine("---").AppendLine();
        sb.AppendLine("Figures come from the HumWatch minute ledger. Where a cause is suggested (cables, grounding, nearby equipment), treat it as a lead to check, not a diagnosis; HumWatch is not a medical device, and changes to mains wiring or medical electrical equipment are for qualified staff under local codes.");
        return sb.ToString();
    }

    /// <summary>
    /// Why a file's `check` verdict and its day's verdict can differ (a file fails, its day passes): the day counts
    /// affected minutes per kind of source against the day limits, the file judges line amplitudes.
    /// </summary>
    internal static string DayLimitsLine(DaySummary summary)
    {
        var limits = string.Join(", ", summary.Categories.Select(c => $"{c.Category.ToText()} {Num(c.WarnMinutes)} / {Num(c.FailMinutes)} min"));
        return $"A day's verdict counts each kind of source's affected minutes against the day limits (Summaries:Day, warn / fail: {limits}), not line amplitudes: a file that fails `check` on µV RMS (Check:FailLineUvRms) can belong to a day that passes.";
    }

    /// <summary>"HH:mm–HH:mm" of two local ISO times; an end at the next day's midnight reads 24:00, not 00:00.</summary>
    internal static string ClockRange(string startLocal, string endLocal)
    {
        var end = endLocal.Substring(11, 5);
        if (end == "00:00" && !endLocal.AsSpan(0, 10).SequenceEqual(startLocal.AsSpan(0, 10)))
        {
            end = "24:00";
        }

        return $"{startLocal.Substring(11, 5)}–{end}";
    }

    /// <summary>The day's instances, comma-separated; "–" when none is recorded (data of builds before instance names).</summary>
    private static string InstancesText(DaySummary summary) => summary.Instances.Count > 0 ? Cell(string.Join(", ", summary.Instances)) : "–";

    private static string Num(double? value) => value is { } v ? v.ToString("0.###", CultureInfo.InvariantCulture) : "–";

    private static string Cell(string text) => text.Replace("|", "\\|", StringComparison.Ordinal);
}
