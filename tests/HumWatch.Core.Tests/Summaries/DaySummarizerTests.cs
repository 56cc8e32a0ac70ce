using HumWatch.Core.Alerts;
using HumWatch.Core.Faults;
using HumWatch.Core.Findings;
using HumWatch.Core.Ledger;
using HumWatch.Core.Summaries;
using Xunit;

namespace HumWatch.Core.Tests.Summaries;

public sealed class DaySummarizerTests
{
    private static readonly TimeZoneInfo Berlin = TimeZoneInfo.FindSystemTimeZoneById("Europe/Berlin");
    private static readonly TimeZoneInfo NewYork = TimeZoneInfo.FindSystemTimeZoneById("America/New_York");

    [Theory]
    // IANA tz database, EU rule: clocks go forward on the last Sunday of March and back on the last Sunday of October, at 01:00 UTC.
    [InlineData("Europe/Berlin", "2026-03-29", "2026-03-28T23:00:00Z", "2026-03-29T22:00:00Z", 23)]
    [InlineData("Europe/Berlin", "2026-10-25", "2026-10-24T22:00:00Z", "2026-10-25T23:00:00Z", 25)]
    [InlineData("Europe/Berlin", "2026-06-15", "2026-06-14T22:00:00Z", "2026-06-15T22:00:00Z", 24)]
    // IANA tz database, US rule: forward on the second Sunday of March, back on the first Sunday of November, at 02:00 local.
    [InlineData("America/New_York", "2026-03-08", "2026-03-08T05:00:00Z", "2026-03-09T04:00:00Z", 23)]
    [InlineData("America/New_York", "2026-11-01", "2026-11-01T04:00:00Z", "2026-11-02T05:00:00Z", 25)]
    public void Local_days_have_the_length_the_tz_rules_give(string zoneId, string day, string fromUtc, string toUtc, int hours)
    {
        var zone = TimeZoneInfo.FindSystemTimeZoneById(zoneId);
        var (from, to) = LocalDay.RangeUtc(DateOnly.Parse(day, System.Globalization.CultureInfo.InvariantCulture), zone);
        Assert.Equal(DateTimeOffset.Parse(fromUtc, System.Globalization.CultureInfo.InvariantCulture), from);
        Assert.Equal(DateTimeOffset.Parse(toUtc, System.Globalization.CultureInfo.InvariantCulture), to);

        var summary = DaySummarizer.Summarize("room-a", DateOnly.Parse(day, System.Globalization.CultureInfo.InvariantCulture), zone, [], [], null, new DaySummaryRules());
        Assert.Equal(hours, summary.HoursInDay);
        Assert.Equal(hours, summary.Timeline.HourStartsLocal.Count);
        Assert.Equal(hours * 60, summary.Mains.Hz.Count);
        Assert.Equal(DayVerdict.NoData, summary.Verdict);
    }

    [Fact]
    public void The_hour_after_the_spring_gap_is_labelled_03_00_summer_time()
    {
        // IANA tz database: Europe/Berlin jumps from 02:00 CET to 03:00 CEST on 2026-03-29.
        var summary = DaySummarizer.Summarize("room-a", new DateOnly(2026, 3, 29), Berlin, [], [], null, new DaySummaryRules());
        Assert.Equal("2026-03-29T01:00+01:00", summary.Timeline.HourStartsLocal[1]);
        Assert.Equal("2026-03-29T03:00+02:00", summary.Timeline.HourStartsLocal[2]);
    }

    [Fact]
    public void An_afternoon_display_line_is_found_as_one_episode_at_its_local_time()
    {
        var day = new DateOnly(2026, 10, 25); // 25 h day in Berlin
        var (from, _) = LocalDay.RangeUtc(day, Berlin);
        var rows = new List<LedgerMinute>();
        // Monitored all day; 75 Hz display line 14:10–15:40 local (CET, +01:00 after the change) with one quiet minute at 15:00.
        var start = new DateTimeOffset(2026, 10, 25, 13, 10, 0, TimeSpan.Zero);
        for (var m = 0; m < 25 * 60; m++)
        {
            var minute = from.AddMinutes(m);
            var inEpisode = minute >= start && minute < start.AddMinutes(90) && minute != start.AddMinutes(50);
            rows.Add(new LedgerMinute(minute, MinuteLedger.AllSourcesKey, 60, inEpisode ? 60 : 0, inEpisode ? 4 : null, inEpisode ? 3 : null, inEpisode ? ["O1", "O2"] : [], 50.0 + ((m % 10) - 5) * 0.002));
            if (inEpisode)
            {
                rows.Add(new LedgerMinute(minute, FindingKey.Display("display 75 Hz", 1), 60, 60, 4, 3, ["O1", "O2"], null));
            }
        }

        var summary = DaySummarizer.Summarize("room-a", day, Berlin, rows, [], null, new DaySummaryRules());

        Assert.Equal(25, summary.HoursMonitored, 6);
        var display = Assert.Single(summary.Sources);
        Assert.Equal(FindingCategory.Display, display.Category);
        Assert.Equal(89, display.AffectedMinutes, 6);
        Assert.Equal(1, display.EpisodeCount); // one quiet minute is bridged (EpisodeBridgeMinutes = 2)
        Assert.Equal("2026-10-25T14:10+01:00", display.Episodes[0].StartLocal);
        Assert.Equal("2026-10-25T15:40+01:00", display.Episodes[0].EndLocal);
        Assert.Equal(90, display.Episodes[0].SpanMinutes);
        Assert.Equal("O1", display.WorstChannels[0].Channel);
        Assert.Equal(89, display.WorstChannels[0].Minutes);

        // Hour index 15 is 14:00 CET (the day has two 02:00 hours).
        Assert.Equal("2026-10-25T14:00+01:00", summary.Timeline.HourStartsLocal[15]);
        var row = Assert.Single(summary.Timeline.Rows);
        Assert.Equal(50, row.Minutes[15], 6);
        Assert.Equal(39, row.Minutes[16], 6);
        Assert.Equal(display.AffectedMinutes, row.Minutes.Sum(), 6);

        // 89 min of display lines: over the warn level (30) and under the fail level (120).
        Assert.Equal(DayVerdict.Warn, summary.Verdict);
        // Without a configuration key from the caller the reason names the rule itself (the Host passes "Summaries:Day").
        Assert.Contains("(Display:WarnMinutes)", Assert.Single(summary.VerdictReasons), StringComparison.Ordinal);

        // Mains track: minute values cycle 49.990 … 50.008; mean of 150 full cycles is 49.999.
        Assert.Equal(1500, summary.Mains.MinutesWithEstimate);
        Assert.Equal(49.99, summary.Mains.MinHz!.Value, 9);
        Assert.Equal(50.008, summary.Mains.MaxHz!.Value, 9);
        Assert.Equal(49.999, summary.Mains.MeanHz!.Value, 9);

        // EN 50160: a 50 Hz system stays within ±1 % (49.5–50.5 Hz), so the day's grid is 50 Hz.
        Assert.Equal(50, summary.Mains.NominalHz);
    }

    [Fact]
    public void Quiet_gaps_longer_than_the_bridge_split_episodes()
    {
        var day = new DateOnly(2026, 6, 15);
        var (from, _) = LocalDay.RangeUtc(day, NewYork);
        var rows = new List<LedgerMinute>();
        int[] on = [10, 11, 12, 14, 15, 30, 31];
        foreach (var m in on)
        {
            rows.Add(new LedgerMinute(from.AddMinutes(m), MinuteLedger.AllSourcesKey, 60, 60, 2, 2, ["Cz"], 60.0));
            rows.Add(new LedgerMinute(from.AddMinutes(m), FindingKey.Mains(3), 60, 60, 2, 2, ["Cz"], 60.0));
        }

        var summary = DaySummarizer.Summarize("room-b", day, NewYork, rows, [], null, new DaySummaryRules { EpisodeBridgeMinutes = 1 });
        var mains = Assert.Single(summary.Sources);
        Assert.Equal(2, mains.EpisodeCount);
        Assert.Equal(6, mains.Episodes[0].SpanMinutes); // 10–16 with minute 13 bridged
        Assert.Equal(5, mains.Episodes[0].AffectedMinutes);
        Assert.Equal(2, mains.Episodes[1].SpanMinutes);
        Assert.Equal(3, mains.Harmonic);
        Assert.Equal(DayVerdict.Pass, summary.Verdict);
    }

    [Fact]
    public void Category_minutes_count_a_minute_once_when_two_harmonics_share_it()
    {
        var day = new DateOnly(2026, 6, 15);
        var (from, _) = LocalDay.RangeUtc(day, Berlin);
        var rows = new List<LedgerMinute>();
        for (var m = 0; m < 300; m++)
        {
            rows.Add(new LedgerMinute(from.AddMinutes(m), MinuteLedger.AllSourcesKey, 60, 60, 30, 25, ["T3"], 50.0));
            rows.Add(new LedgerMinute(from.AddMinutes(m), FindingKey.Mains(1), 60, 60, 30, 25, ["T3"], 50.0));
            rows.Add(new LedgerMinute(from.AddMinutes(m), FindingKey.Mains(3), 60, 30, 5, 4, ["T4"], 50.0));
            rows.Add(new LedgerMinute(from.AddMinutes(m), FindingKey.ChannelFault("Fp1", ChannelFaultKind.Flat), 60, m < 15 ? 60 : 0, null, null, ["Fp1"], 50.0));
        }

        var summary = DaySummarizer.Summarize("room-c", day, Berlin, rows, [], null, new DaySummaryRules());
        var mains = summary.Categories.Single(c => c.Category == FindingCategory.Mains);
        Assert.Equal(300, mains.AffectedMinutes, 6); // not 450
        Assert.Equal(DayVerdict.Fail, mains.Verdict); // ≥ 240 min
        Assert.Equal(DayVerdict.Warn, summary.Categories.Single(c => c.Category == FindingCategory.ChannelFault).Verdict); // 15 min ≥ 10
        Assert.Equal(DayVerdict.Fail, summary.Verdict);
        Assert.Equal(2, summary.VerdictReasons.Count);
        Assert.Equal(30, summary.MaxAmplitudeUvRms);
        Assert.Equal("Fp1 flat", summary.Sources.Single(s => s.Key == FindingKey.ChannelFault("Fp1", ChannelFaultKind.Flat)).Label);
    }

    [Fact]
    public void Alerts_of_the_day_are_counted_by_event_and_severity()
    {
        var day = new DateOnly(2026, 3, 8);
        var (from, to) = LocalDay.RangeUtc(day, NewYork);
        AlertRecord[] alerts =
        [
            new(from.AddMinutes(-1), FindingKey.Mains(1), AlertEventKind.Raised, AlertSeverity.Minor, 60), // day before: ignored
            new(from.AddHours(1), FindingKey.Mains(1), AlertEventKind.Raised, AlertSeverity.Minor, 60.01),
            new(from.AddHours(2), FindingKey.Mains(1), AlertEventKind.SeverityChanged, AlertSeverity.Marked, 60.01),
            new(from.AddHours(3), FindingKey.Mains(1), AlertEventKind.Cleared, AlertSeverity.Marked, 60.02),
            new(from.AddHours(4), FindingKey.Unidentified(37.25), AlertEventKind.Raised, AlertSeverity.Severe, 37.25),
            new(to, FindingKey.Mains(1), AlertEventKind.Raised, AlertSeverity.Severe, 60), // next day: ignored
        ];
        var summary = DaySummarizer.Summarize("room-a", day, NewYork, [], alerts, null, new DaySummaryRules());
        Assert.Equal(2, summary.Alerts.Raised);
        Assert.Equal(1, summary.Alerts.Cleared);
        Assert.Equal(1, summary.Alerts.SeverityChanges);
        Assert.Equal(1, summary.Alerts.RaisedMinor);
        Assert.Equal(1, summary.Alerts.RaisedSevere);
        var mains = summary.Alerts.ByKey.Single(k => k.Key == FindingKey.Mains(1));
        Assert.Equal(AlertSeverity.Marked, mains.PeakSeverity);
        Assert.Equal("2026-03-08T01:00-05:00", mains.FirstRaisedLocal); // IANA: EST (-05:00) until 02:00 local
    }

    [Fact]
    public void Invalid_limits_are_reported_under_the_key_the_caller_gives()
    {
        var options = new DaySummaryRules
        {
            Mains = new DailyLimit { WarnMinutes = 300, FailMinutes = 100 },
            EpisodeMinuteMinSeconds = 0,
            WorstChannelCount = 0,
        };
        Assert.Contains(options.Validate(), e => e.StartsWith("Mains:WarnMinutes", StringComparison.Ordinal));
        var errors = options.Validate("Summaries:Day");
        Assert.Contains(errors, e => e.Contains("Summaries:Day:Mains:WarnMinutes", StringComparison.Ordinal) && e.Contains("Summaries:Day:Mains:FailMinutes", StringComparison.Ordinal));
        Assert.Contains(errors, e => e.StartsWith("Summaries:Day:EpisodeMinuteMinSeconds", StringComparison.Ordinal));
        Assert.Contains(errors, e => e.StartsWith("Summaries:Day:WorstChannelCount", StringComparison.Ordinal));
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => DaySummarizer.Summarize("r", new DateOnly(2026, 1, 1), Berlin, [], [], null, options));
        Assert.Equal("options", ex.ParamName);
    }

    [Theory]
    [InlineData("mains/h2", FindingCategory.Mains, 2)]
    [InlineData("display 75 Hz/h2", FindingCategory.Display, 2)]
    [InlineData("site:pump room drive/h1", FindingCategory.SiteTone, 1)]
    [InlineData("site-tone:pump room drive/h1", FindingCategory.SiteTone, 1)]
    [InlineData("unidentified/37.25Hz", FindingCategory.Unidentified, null)]
    [InlineData("fault/Fp1/clipped", FindingCategory.ChannelFault, null)]
    public void Ledger_keys_are_read_back_into_their_source(string key, FindingCategory category, int? harmonic)
    {
        var parsed = FindingKey.Parse(key);
        Assert.Equal(category, parsed.Category);
        Assert.Equal(harmonic, parsed.Harmonic);
    }

    [Fact]
    public void Rows_stored_as_text_in_the_older_spelling_summarise_with_the_new_one()
    {
        // Keys as stores have held them: a site tone first as "site:", later as "site-tone:"; both are one source.
        var day = new DateOnly(2026, 6, 15);
        var (from, _) = LocalDay.RangeUtc(day, Berlin);
        string[] stored = ["*", "mains/h1", "site:pump room drive/h1", "unidentified/37.25Hz", "fault/Fp1/flat"];
        var rows = new List<LedgerMinute>();
        for (var m = 0; m < 40; m++)
        {
            foreach (var text in stored)
            {
                var key = m >= 20 && text.StartsWith("site:", StringComparison.Ordinal) ? "site-tone:" + text["site:".Length..] : text;
                rows.Add(new LedgerMinute(from.AddMinutes(m), FindingKey.Parse(key), 60, 60, 3, 2, ["Cz"], 50.0));
            }
        }

        var summary = DaySummarizer.Summarize("room-d", day, Berlin, rows, [], null, new DaySummaryRules());

        Assert.Equal(4, summary.Sources.Count);
        var tone = Assert.Single(summary.Sources, s => s.Category == FindingCategory.SiteTone);
        Assert.Equal(40, tone.AffectedMinutes, 6); // 20 minutes under each spelling
        Assert.Equal("site-tone:pump room drive/h1", tone.Key.ToString());
        Assert.Equal("site-tone pump room drive h1", tone.Label);
        Assert.Equal(40, summary.Categories.Single(c => c.Category == FindingCategory.SiteTone).AffectedMinutes, 6);
        Assert.Equal(DayVerdict.Warn, summary.Categories.Single(c => c.Category == FindingCategory.SiteTone).Verdict); // 40 ≥ 30 (default warn)
        Assert.Contains(summary.VerdictReasons, r => r.StartsWith("site-tone: 40 affected minutes", StringComparison.Ordinal));
        Assert.Equal(37.25, summary.Sources.Single(s => s.Category == FindingCategory.Unidentified).FrequencyHz);
        Assert.Equal(FindingKey.ChannelFault("Fp1", ChannelFaultKind.Flat), summary.Sources.Single(s => s.Category == FindingCategory.ChannelFault).Key);
        Assert.Equal(40.0 / 60, summary.HoursMonitored, 4);
    }
}
