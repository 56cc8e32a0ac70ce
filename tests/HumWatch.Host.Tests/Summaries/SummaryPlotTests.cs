using System.Globalization;
using System.Text.Json;
using HumWatch.Core.Findings;
using HumWatch.Core.Ledger;
using HumWatch.Core.Summaries;
using HumWatch.Host.Summaries;
using Xunit;

namespace HumWatch.Host.Tests.Summaries;

/// <summary>
/// The plots as a lab manager reads them: each test draws a plot as SVG (the same drawing as its PNG) and finds its
/// texts and the track's points by position. A data position is read off the axis through the tick labels.
/// </summary>
public sealed class SummaryPlotTests
{
    // Navy, the mains track's colour.
    private const string TrackStroke = "navy";

    private static readonly DateOnly Day = new(2026, 6, 10);

    [Fact]
    public void Timeline_has_a_colour_key_in_minutes_from_0_to_60()
    {
        var rows = new[] { new TimelineRow(FindingKey.Mains(1), "mains h1", [.. Enumerable.Range(0, 24).Select(h => h * 2.5)]) };
        var svg = SvgReader.Parse(SummaryPlots.Svg(Data(EmptyTrack(60), rows: rows), "timeline"));

        var key = svg.Text(SummaryPlots.TimelineKeyLabel);
        var zero = svg.Text("0");
        var sixty = svg.Text("60");
        Assert.Contains(svg.Texts, t => t.Content == "30");
        // The key stands right of the hours (its own scale), 60 above 0 on one vertical.
        var lastHour = svg.Text("21:00");
        Assert.True(zero.X > lastHour.X && key.X > zero.X, $"key at x {zero.X:0}, label at {key.X:0}, last hour tick at {lastHour.X:0}");
        Assert.Equal(zero.X, sixty.X, 0.5);
        Assert.True(sixty.Y < zero.Y, "60 minutes must sit above 0 on the key");
        Assert.DoesNotContain(svg.Texts, t => t.Content.Contains("dark: a few", StringComparison.Ordinal));
    }

    [Fact]
    public void Mains_plot_fits_the_monitored_hours_and_shows_them_within_the_whole_day()
    {
        var zone = TimeZoneInfo.FindSystemTimeZoneById("Europe/Berlin");
        var (from, to) = LocalDay.RangeUtc(Day, zone);
        using var h = new SummaryHarness("Europe/Berlin", to.AddHours(1));
        // Half an hour from 09:00 local (a 24 h day: elapsed hours are clock hours), a mains estimate every minute.
        h.Store.Ledger.AddMinuteRows([.. Enumerable.Range(0, 30).Select(m => AllRow(from.AddHours(9).AddMinutes(m), m, 50.01))]);
        var data = RenderAndReadPlots(h);

        Assert.Equal(9, data.Mains.FromHour);
        Assert.Equal(10, data.Mains.ToHour);
        var svg = SvgReader.Parse(SummaryPlots.Svg(data, "mains"));
        var nine = svg.Text("09:00");
        var ten = svg.Text("10:00");
        Assert.DoesNotContain(svg.Texts, t => t.Content is "08:00" or "11:00");

        // One line of 30 points from 09:00 to 09:29.
        var track = Assert.Single(svg.Paths, p => p.Stroke == TrackStroke);
        Assert.Equal(30, track.Points.Count);
        Assert.Equal(nine.X, track.Points[0].X, 0.5);
        Assert.Equal(nine.X + ((ten.X - nine.X) * 29 / 60), track.Points[^1].X, 0.5);

        // The day's extent stays visible above: its own scale from 00:00 to 24:00, and a note saying what it is.
        var dayStart = svg.Text("00:00");
        var dayEnd = svg.Text("24:00");
        Assert.True(dayStart.Y < nine.Y && dayEnd.Y < nine.Y, "the whole-day scale is the top axis");
        Assert.Contains(svg.Texts, t => t.Content.Contains("09:00–10:00 of the 24 h day (strip above)", StringComparison.Ordinal));
        var shownBand = Assert.Single(svg.Rects, r => r.Fill == TrackStroke);
        Assert.Equal(dayStart.X + ((dayEnd.X - dayStart.X) * 9 / 24), shownBand.X, 0.5);
        Assert.Equal((dayEnd.X - dayStart.X) / 24, shownBand.Width, 0.5);
    }

    [Fact]
    public void Mains_track_is_a_line_where_minutes_are_consecutive_and_a_dot_where_one_stands_alone()
    {
        var hz = new double?[1440];
        for (var i = 540; i < 545; i++)
        {
            hz[i] = 50.01 + (0.001 * (i - 540));
        }

        hz[550] = 50.02;
        var svg = SvgReader.Parse(SummaryPlots.Svg(Data(new MainsPlot("m", DateTimeOffset.UnixEpoch, 60, 50.013, 50.01, 50.02, hz) { FromHour = 9, ToHour = 10 }), "mains"));

        var line = Assert.Single(svg.Paths, p => p.Stroke == TrackStroke);
        Assert.Equal(5, line.Points.Count);
        var dot = Assert.Single(svg.Dots, d => d.Fill == TrackStroke);
        var nine = svg.Text("09:00");
        var ten = svg.Text("10:00");
        Assert.Equal(nine.X + ((ten.X - nine.X) * 10 / 60), dot.X, 0.5);
        Assert.True(dot.X > line.Points[^1].X, "the lone minute is not joined to the run before it");
    }

    [Fact]
    public void Mains_points_sit_at_the_datas_own_step()
    {
        // Five-minute steps: 288 values make the day; value i is at i × 5 min, so index 111 is 09:15.
        var hz = new double?[288];
        for (var i = 108; i <= 111; i++)
        {
            hz[i] = 60.0 + (0.002 * (i - 108));
        }

        var data = Data(new MainsPlot("m", DateTimeOffset.UnixEpoch, 300, 60.003, 60.0, 60.006, hz) { FromHour = 9, ToHour = 10 });
        var svg = SvgReader.Parse(SummaryPlots.Svg(data, "mains"));

        var line = Assert.Single(svg.Paths, p => p.Stroke == TrackStroke);
        var nine = svg.Text("09:00");
        var ten = svg.Text("10:00");
        Assert.Equal([nine.X, nine.X + ((ten.X - nine.X) / 12), nine.X + ((ten.X - nine.X) / 6), nine.X + ((ten.X - nine.X) / 4)], line.Points.Select(p => p.X), new Tolerance(0.5));
    }

    [Fact]
    public void Without_a_monitored_range_the_mains_plot_fits_the_track_at_its_step()
    {
        // The track alone decides: 5-minute values from 13:00 to 14:55 give the hours 13–15, on the step's clock (not 288 / 60 h).
        var hz = new double?[288];
        for (var i = 156; i < 180; i++)
        {
            hz[i] = 50.0;
        }

        var summary = SummaryFor(new MainsTrack(50.0, 50.0, 50.0, 24, 300, hz));
        var data = SummaryPlots.DataFor(summary, null, 640, 320);
        Assert.Equal(13, data.Mains.FromHour);
        Assert.Equal(15, data.Mains.ToHour);
    }

    [Theory]
    [InlineData(60.0, "60")]
    [InlineData(50.0, "50")]
    public void Fundamental_not_seen_is_written_at_the_sites_grid(double gridHz, string tick)
    {
        var zone = TimeZoneInfo.FindSystemTimeZoneById("America/New_York");
        var (from, to) = LocalDay.RangeUtc(Day, zone);
        using var h = new SummaryHarness("America/New_York", to.AddHours(1));
        h.Store.Ledger.AddMinuteRows([.. Enumerable.Range(0, 20).Select(m => AllRow(from.AddHours(14).AddMinutes(m), m, double.NaN))]);
        var data = RenderAndReadPlots(h, gridHz);

        Assert.Equal(gridHz, data.Mains.GridHz);
        var svg = SvgReader.Parse(SummaryPlots.Svg(data, "mains"));
        var note = svg.Text(string.Create(CultureInfo.InvariantCulture, $"{SummaryPlots.FundamentalNotSeen} (grid {gridHz:0} Hz)"));
        Assert.Equal(svg.Text(tick).Y, note.Y, 1.0);
    }

    [Fact]
    public void Fundamental_neither_set_nor_seen_says_so_without_a_frequency_scale()
    {
        var svg = SvgReader.Parse(SummaryPlots.Svg(Data(EmptyTrack(60)), "mains"));
        Assert.Contains(svg.Texts, t => t.Content == $"{SummaryPlots.FundamentalNotSeen} (grid neither set nor seen)");
        Assert.DoesNotContain(svg.Texts, t => t.Content is "50" or "60" || (double.TryParse(t.Content, CultureInfo.InvariantCulture, out var v) && v > 1));
    }

    [Fact]
    public void Spectrum_starts_at_0_Hz_with_plain_tick_labels_and_says_power_density_in_words()
    {
        // Densities over seven decades, 10^-3 to 10^3 µV²/Hz, bins every 0.25 Hz up to 64 Hz.
        var psd = Enumerable.Range(0, 257).Select(k => Math.Pow(10, (k - 128) / 40.0)).ToList();
        var data = Data(EmptyTrack(60), new SpectrumPlot("s", 0.25, 400, psd, [new LineMark(FindingKey.Mains(1), "mains h1", 50.01)]));
        var svg = SvgReader.Parse(SummaryPlots.Svg(data, "spectrum"));

        Assert.Contains(svg.Texts, t => t.Content == SummaryPlots.SpectrumYLabel);
        Assert.StartsWith("power density, µV²/Hz", SummaryPlots.SpectrumYLabel, StringComparison.Ordinal);
        foreach (var decade in new[] { "0.001", "0.01", "0.1", "1", "10", "100", "1000" })
        {
            Assert.Contains(svg.Texts, t => t.Content == decade);
        }

        Assert.DoesNotContain(svg.Texts, t => System.Text.RegularExpressions.Regex.IsMatch(t.Content, @"\d[Ee][+-]?\d"));
        Assert.DoesNotContain(svg.Texts, t => t.Content.StartsWith('-') || t.Content.StartsWith('−'));
        Assert.Contains(svg.Texts, t => t.Content == "0");
        Assert.Contains(svg.Texts, t => t.Content.EndsWith("(7 min analysed)", StringComparison.Ordinal));
    }

    [Theory]
    [InlineData(-3, "0.001")]
    [InlineData(0, "1")]
    [InlineData(3, "1000")]
    [InlineData(6, "1000000")]
    [InlineData(-8, "10⁻⁸")]
    [InlineData(12, "10¹²")]
    public void Decade_labels_are_written_out_or_as_a_power_of_ten(int exponent, string expected)
    {
        Assert.Equal(expected, SummaryPlots.DecadeLabel(exponent));
    }

    [Theory]
    [InlineData(0, "0 s")]
    [InlineData(40, "40 s")]
    [InlineData(90, "2 min")]
    [InlineData(1500, "25 min")]
    [InlineData(3600, "1 h")]
    [InlineData(5400, "1.5 h")]
    public void Durations_under_an_hour_read_in_minutes(double seconds, string expected)
    {
        Assert.Equal(expected, SummaryPlots.DurationText(seconds));
    }

    [Fact]
    public void The_day_sheet_gives_a_short_day_in_minutes_not_0_h()
    {
        var zone = TimeZoneInfo.FindSystemTimeZoneById("Europe/Berlin");
        var (from, to) = LocalDay.RangeUtc(Day, zone);
        using var h = new SummaryHarness("Europe/Berlin", to.AddHours(1));
        h.Store.Ledger.AddMinuteRows([.. Enumerable.Range(0, 25).Select(m => AllRow(from.AddHours(9).AddMinutes(m), m, 50.0))]);
        h.Renderer().RenderDay(Day);
        var page = File.ReadAllText(Path.Combine(h.Options.Folder, "2026-06-10", SummaryMarkdown.FileName));
        Assert.Contains("Monitored 25 min of 24 h", page, StringComparison.Ordinal);
        Assert.Contains("| 25 min |", page, StringComparison.Ordinal);
        Assert.DoesNotContain("Monitored 0.", page, StringComparison.Ordinal);
    }

    private static MinuteRow AllRow(DateTimeOffset minuteUtc, long sequence, double mainsHz) =>
        new("room-a", "s1", sequence + 1, minuteUtc, MinuteLedger.AllSourcesKey, 60, 0, double.NaN, double.NaN, [], mainsHz);

    private static PlotData RenderAndReadPlots(SummaryHarness h, double? siteGridHz = null)
    {
        var renderer = new DailySummaryRenderer(h.Summaries, h.Options, "Test site", h.Zone, siteGridHz);
        renderer.RenderDay(Day);
        var bytes = File.ReadAllBytes(Path.Combine(h.Options.Folder, "2026-06-10", "room-a.plots.json"));
        return JsonSerializer.Deserialize(bytes, SummaryJsonContext.Default.PlotData)!;
    }

    private static MainsPlot EmptyTrack(int stepSeconds) => new("m", DateTimeOffset.UnixEpoch, stepSeconds, null, null, null, new double?[86400 / stepSeconds]) { FromHour = 0, ToHour = 24 };

    private static PlotData Data(MainsPlot mains, SpectrumPlot? spectrum = null, IReadOnlyList<TimelineRow>? rows = null) =>
        new(1, "room-a", "2026-06-10", 640, 320, spectrum, new TimelinePlot("t", HourStarts(), rows ?? []), mains);

    private static List<string> HourStarts() => [.. Enumerable.Range(0, 24).Select(h => string.Create(CultureInfo.InvariantCulture, $"2026-06-10T{h:00}:00+02:00"))];

    private static DaySummary SummaryFor(MainsTrack track) => new(
        1, "room-a", "2026-06-10", "Europe/Berlin", DateTimeOffset.UnixEpoch, DateTimeOffset.UnixEpoch.AddDays(1), 24, 2, DayVerdict.Pass, [], 0, null, null, null, [], [], [],
        new AlertTally(0, 0, 0, 0, 0, 0, []), track, new HourTimeline(HourStarts(), []));

    /// <summary>Compares pixel positions within a tolerance.</summary>
    private sealed class Tolerance(double px) : IEqualityComparer<double>
    {
        public bool Equals(double x, double y) => Math.Abs(x - y) <= px;

        public int GetHashCode(double obj) => 0;
    }
}
