using HumWatch.Core.Summaries;
using HumWatch.Host.Summaries;
using Xunit;

namespace HumWatch.Host.Tests.Summaries;

/// <summary>The day sheet and the day's files as tools read them.</summary>
public sealed class DaySheetTests
{
    private static readonly DateOnly Day = new(2026, 3, 8);

    [Fact]
    public void The_day_sheet_says_a_days_verdict_counts_affected_minutes_against_the_configured_day_limits()
    {
        var (from, to) = LocalDay.RangeUtc(Day, TimeZoneInfo.Utc);
        using var h = new SummaryHarness("UTC", to.AddHours(1));
        h.Options.Day.Mains = new DailyLimit { WarnMinutes = 45, FailMinutes = 200 };
        h.Store.Ledger.AddMinuteRows(SummaryHarness.Rows("room-a", "s1", from, to, seed: 3));

        h.Renderer().RenderDay(Day);
        var page = File.ReadAllText(Path.Combine(h.Options.Folder, "2026-03-08", SummaryMarkdown.FileName));

        var line = Assert.Single(page.Split('\n'), l => l.StartsWith("A day's verdict counts", StringComparison.Ordinal));
        Assert.Contains("Summaries:Day", line, StringComparison.Ordinal);
        Assert.Contains("mains 45 / 200 min", line, StringComparison.Ordinal); // the configured limits, not the defaults
        Assert.Contains("display 30 / 120 min", line, StringComparison.Ordinal);
        Assert.Contains("fault 10 / 60 min", line, StringComparison.Ordinal);
        Assert.Contains("Check:FailLineUvRms", line, StringComparison.Ordinal);
    }

    [Fact]
    public void Summary_files_are_UTF8_without_a_byte_order_mark()
    {
        var (from, to) = LocalDay.RangeUtc(Day, TimeZoneInfo.Utc);
        using var h = new SummaryHarness("UTC", to.AddHours(1));
        h.Store.Ledger.AddMinuteRows(SummaryHarness.Rows("room-a", "s1", from, to, seed: 3));

        h.Renderer().RenderDay(Day);

        // RFC 8259 section 8.1: no byte-order mark before JSON text; the Markdown page starts with its heading.
        var folder = Path.Combine(h.Options.Folder, "2026-03-08");
        Assert.Equal((byte)'{', File.ReadAllBytes(Path.Combine(folder, "room-a.json"))[0]);
        Assert.Equal((byte)'{', File.ReadAllBytes(Path.Combine(folder, "room-a.plots.json"))[0]);
        Assert.Equal((byte)'#', File.ReadAllBytes(Path.Combine(folder, SummaryMarkdown.FileName))[0]);
    }
}
