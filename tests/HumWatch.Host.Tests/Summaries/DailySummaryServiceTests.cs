using System.Globalization;
using System.Text.Json;
using HumWatch.Core.Summaries;
using HumWatch.Host.Summaries;
using Xunit;

namespace HumWatch.Host.Tests.Summaries;

public sealed class DailySummaryServiceTests
{
    [Theory]
    // IANA tz database: EU clocks change on the last Sundays of March and October at 01:00 UTC; US clocks on the
    // second Sunday of March and the first Sunday of November at 02:00 local. Plain days around them are 24 h.
    [InlineData("Europe/Berlin", "2026-03-29", "2026-03-29T22:00:00Z", 23)]
    [InlineData("Europe/Berlin", "2026-10-25", "2026-10-25T23:00:00Z", 25)]
    [InlineData("America/New_York", "2026-03-08", "2026-03-09T04:00:00Z", 23)]
    [InlineData("America/New_York", "2026-11-01", "2026-11-02T05:00:00Z", 25)]
    [InlineData("Europe/Berlin", "2026-07-01", "2026-07-01T22:00:00Z", 24)]
    public void A_day_is_written_once_just_after_its_local_midnight(string zoneId, string dayText, string endUtcText, int hours)
    {
        var day = DateOnly.Parse(dayText, CultureInfo.InvariantCulture);
        var endUtc = DateTimeOffset.Parse(endUtcText, CultureInfo.InvariantCulture);
        var zone = TimeZoneInfo.FindSystemTimeZoneById(zoneId);
        var (fromUtc, toUtc) = LocalDay.RangeUtc(day, zone);
        Assert.Equal(endUtc, toUtc);
        Assert.Equal(hours, (toUtc - fromUtc).TotalHours);

        using var h = new SummaryHarness(zoneId, fromUtc.AddHours(12));
        h.Store.Ledger.AddMinuteRows(SummaryHarness.Rows("room-a", "s1", fromUtc, toUtc, seed: 7));
        var service = h.Service();

        // During the day, and until the settle time after midnight has passed, nothing is due.
        Assert.Empty(service.RenderDueDays());
        var next = service.NextRenderUtc(h.Time.GetUtcNow());
        Assert.Equal(endUtc.AddSeconds(120), next);
        h.Time.SetUtcNow(next.AddSeconds(-1));
        Assert.Empty(service.RenderDueDays());
        Assert.Equal(next, service.NextRenderUtc(h.Time.GetUtcNow()));

        h.Time.SetUtcNow(next);
        var written = Assert.Single(service.RenderDueDays());
        Assert.Equal(hours, written.Summary.HoursInDay);
        Assert.Equal(hours, written.Summary.HoursMonitored, 6);
        Assert.Equal(hours * 60, written.Summary.Mains.Hz.Count);
        Assert.Equal(dayText, written.Summary.Day);

        var file = Path.Combine(h.Options.Folder, dayText, "room-a.json");
        Assert.Equal(written.Json, File.ReadAllBytes(file));
        Assert.True(File.Exists(Path.Combine(h.Options.Folder, dayText, "day.md")));
        var message = Assert.Single(h.Publisher.Published);
        Assert.Equal(("summary", "room-a"), (message.Kind, message.Stream));
        Assert.Equal(written.Json, message.Body);

        // The next rollover is the following local midnight, and the day is never written again.
        Assert.True(service.NextRenderUtc(h.Time.GetUtcNow()) > next.AddHours(22));
        h.Time.Advance(TimeSpan.FromHours(1));
        Assert.Empty(service.RenderDueDays());
        Assert.Single(h.Publisher.Published);
    }

    [Fact]
    public void Days_that_ended_while_the_service_was_down_are_written_at_the_next_start_and_only_then()
    {
        var zone = TimeZoneInfo.FindSystemTimeZoneById("Europe/Berlin");
        var (d1From, d1To) = LocalDay.RangeUtc(new DateOnly(2026, 3, 28), zone);
        var (d2From, d2To) = LocalDay.RangeUtc(new DateOnly(2026, 3, 29), zone);
        using var h = new SummaryHarness("Europe/Berlin", d2To.AddDays(2));
        h.Store.Ledger.AddMinuteRows(SummaryHarness.Rows("room-a", "s1", d1From, d1To, seed: 1));
        h.Store.Ledger.AddMinuteRows(SummaryHarness.Rows("room-b", "s2", d2From, d2To.AddHours(-3), seed: 2));

        var written = h.Service().RenderDueDays();
        Assert.Equal(["2026-03-28/room-a", "2026-03-29/room-b"], written.Select(w => $"{w.Summary.Day}/{w.Stream}"));
        Assert.Equal(2, h.Publisher.Published.Count);

        // A restart (store reopened, new service) writes nothing again.
        h.Reopen();
        Assert.Empty(h.Service().RenderDueDays());
        Assert.Equal(2, h.Publisher.Published.Count);
    }

    [Fact]
    public async Task The_running_service_writes_the_day_when_the_fake_clock_passes_midnight()
    {
        var zone = TimeZoneInfo.FindSystemTimeZoneById("America/New_York");
        var (from, to) = LocalDay.RangeUtc(new DateOnly(2026, 11, 1), zone);
        using var h = new SummaryHarness("America/New_York", from.AddHours(20));
        h.Store.Ledger.AddMinuteRows(SummaryHarness.Rows("room-a", "s1", from, to, seed: 3));
        var service = h.Service();
        await service.StartAsync(CancellationToken.None);
        try
        {
            // The loop renders, then waits on the fake clock; advance until the message arrives (bounded, no timing assertion).
            for (var i = 0; i < 200 && h.Publisher.Published.Count == 0; i++)
            {
                h.Time.Advance(TimeSpan.FromMinutes(5));
                await Task.Delay(10);
            }

            var message = Assert.Single(h.Publisher.Published);
            using var json = JsonDocument.Parse(message.Body);
            Assert.Equal(25, json.RootElement.GetProperty("hoursInDay").GetInt32()); // IANA: 2026-11-01 is 25 h in New York
            Assert.Equal(1, json.RootElement.GetProperty("v").GetInt32());
        }
        finally
        {
            await service.StopAsync(CancellationToken.None);
        }
    }

    [Fact]
    public void Invalid_summary_options_name_their_keys()
    {
        var options = new SummaryOutputOptions { PlotWidthPx = 10, CatchUpDays = -1, Day = new DaySummaryRules { Display = new DailyLimit { WarnMinutes = -5 } } };
        var errors = options.Validate();
        Assert.Contains(errors, e => e.StartsWith("Summaries:PlotWidthPx", StringComparison.Ordinal));
        Assert.Contains(errors, e => e.StartsWith("Summaries:CatchUpDays", StringComparison.Ordinal));
        Assert.Contains(errors, e => e.StartsWith("Summaries:Day:Display:WarnMinutes", StringComparison.Ordinal));
    }
}
