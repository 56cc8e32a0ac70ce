using System.Buffers.Binary;
using System.Text.Json;
using HumWatch.Core.Findings;
using HumWatch.Core.Summaries;
using HumWatch.Host.Summaries;
using Xunit;

namespace HumWatch.Host.Tests.Summaries;

public sealed class SummaryOutputTests
{
    private static readonly DateOnly Day = new(2026, 10, 25);

    [Theory]
    [InlineData("2026-10-25T00:00+02:00", "2026-10-26T00:00+01:00", "00:00–24:00")]
    [InlineData("2026-10-25T13:05+01:00", "2026-10-25T13:40+01:00", "13:05–13:40")]
    [InlineData("2026-10-25T23:10+01:00", "2026-10-26T00:00+01:00", "23:10–24:00")]
    public void Episode_times_end_a_day_at_24_00_not_00_00(string startLocal, string endLocal, string expected)
    {
        // ISO 8601-1:2019 §5.3.2 allows 24:00 for the end of a calendar day; an end at 00:00 would read as the day's start.
        Assert.Equal(expected, SummaryMarkdown.ClockRange(startLocal, endLocal));
    }

    [Fact]
    public void A_day_fed_in_two_halves_with_a_restart_between_gives_byte_identical_json()
    {
        var zone = TimeZoneInfo.FindSystemTimeZoneById("Europe/Berlin");
        var (from, to) = LocalDay.RangeUtc(Day, zone);
        var split = from.AddMinutes(617);
        var now = to.AddHours(1);

        using var once = new SummaryHarness("Europe/Berlin", now);
        once.Store.Ledger.AddMinuteRows(SummaryHarness.Rows("room-a", "live-1", from, to, seed: 11));
        var expected = once.Renderer().RenderDay(Day).Single().Json;

        using var halves = new SummaryHarness("Europe/Berlin", now);
        var first = SummaryHarness.Rows("room-a", "live-1", from, split, seed: 11);
        halves.Store.Ledger.AddMinuteRows(first);
        halves.Reopen();
        // After the restart: a re-delivery of the last rows of the first session adds nothing, then a new session continues.
        halves.Store.Ledger.AddMinuteRows(first.GetRange(first.Count - 5, 5));
        var second = SummaryHarness.Rows("room-a", "live-2", from, to, seed: 11).Where(r => r.MinuteUtc >= split).ToList();
        halves.Store.Ledger.AddMinuteRows(second);
        halves.Reopen();
        var actual = halves.Renderer().RenderDay(Day).Single().Json;

        Assert.Equal(System.Text.Encoding.UTF8.GetString(expected), System.Text.Encoding.UTF8.GetString(actual));
        Assert.Equal(expected, actual);
    }

    [Fact]
    public void A_store_with_keys_in_the_text_written_so_far_summarises_with_one_spelling()
    {
        var zone = TimeZoneInfo.FindSystemTimeZoneById("Europe/Berlin");
        var (from, to) = LocalDay.RangeUtc(Day, zone);
        using var h = new SummaryHarness("Europe/Berlin", to.AddHours(1));
        using (var connection = new Microsoft.Data.Sqlite.SqliteConnection($"Data Source={h.DbPath};Pooling=False"))
        {
            connection.Open();
            // Keys as stores hold them today: a site tone first as "site:" (kind "site"), later as "site-tone:".
            for (var m = 0; m < 40; m++)
            {
                var minute = from.AddHours(9).AddMinutes(m).ToUnixTimeSeconds();
                var toneKey = m < 20 ? "site:pump room drive/h1" : "site-tone:pump room drive/h1";
                foreach (var key in new[] { "*", "mains/h1", toneKey, "unidentified/37.25Hz", "fault/Fp1/flat" })
                {
                    using var insert = connection.CreateCommand();
                    insert.CommandText = """
                        INSERT INTO minute_ledger (stream, minute_utc, source_key, monitored_s, affected_s, max_uv_rms, mean_median_uv_rms, worst_channels, mains_hz, parts)
                        VALUES ('room-a', $minute, $key, 60, 60, 3, 2, '["Cz"]', 50.0, 1)
                        """;
                    insert.Parameters.AddWithValue("$minute", minute);
                    insert.Parameters.AddWithValue("$key", key);
                    insert.ExecuteNonQuery();
                }
            }

            using var alert = connection.CreateCommand();
            alert.CommandText = """
                INSERT INTO alerts (stream, key, kind, event, severity, source_name, harmonic, aliased, frequency_hz, worst_channels, stream_seconds, utc_ms)
                VALUES ('room-a', 'site:pump room drive/h1', 'site', 'raised', 'marked', 'pump room drive', 1, 0, 16.7, '["Cz"]', 10, $utc)
                """;
            alert.Parameters.AddWithValue("$utc", from.AddHours(9).ToUnixTimeMilliseconds());
            alert.ExecuteNonQuery();
        }

        var rendered = h.Renderer().RenderDay(Day).Single();
        using var json = JsonDocument.Parse(rendered.Json);
        var root = json.RootElement;

        var sources = root.GetProperty("sources").EnumerateArray().ToList();
        Assert.Equal(4, sources.Count);
        var tone = Assert.Single(sources, e => e.GetProperty("category").GetString() == "site-tone");
        Assert.Equal("site-tone:pump room drive/h1", tone.GetProperty("key").GetString());
        Assert.Equal("site-tone pump room drive h1", tone.GetProperty("label").GetString());
        Assert.Equal(40, tone.GetProperty("affectedMinutes").GetDouble()); // 20 minutes under each spelling
        Assert.Equal(16.7, tone.GetProperty("frequencyHz").GetDouble(), 9); // from the alert
        // Equal minutes: ordered by key text.
        Assert.Equal(["fault/Fp1/flat", "mains/h1", "site-tone:pump room drive/h1", "unidentified/37.25Hz"], sources.Select(e => e.GetProperty("key").GetString()));
        Assert.Equal(37.25, Assert.Single(sources, e => e.GetProperty("key").GetString() == "unidentified/37.25Hz").GetProperty("frequencyHz").GetDouble());
        Assert.Equal("Fp1 flat", Assert.Single(sources, e => e.GetProperty("key").GetString() == "fault/Fp1/flat").GetProperty("label").GetString());

        var categories = root.GetProperty("categories").EnumerateArray().ToDictionary(c => c.GetProperty("category").GetString()!);
        Assert.Equal(["mains", "display", "site-tone", "unidentified", "fault"], categories.Keys);
        Assert.Equal(40, categories["site-tone"].GetProperty("affectedMinutes").GetDouble());
        Assert.Equal("warn", categories["site-tone"].GetProperty("verdict").GetString()); // 40 ≥ the default 30
        Assert.Equal("warn", root.GetProperty("verdict").GetString()); // no kind reaches its default fail level
        Assert.Contains(root.GetProperty("verdictReasons").EnumerateArray(), r => r.GetString()!.StartsWith("site-tone: 40 affected minutes", StringComparison.Ordinal));
        var byKey = Assert.Single(root.GetProperty("alerts").GetProperty("byKey").EnumerateArray());
        Assert.Equal("site-tone:pump room drive/h1", byKey.GetProperty("key").GetString());
        Assert.Equal("marked", byKey.GetProperty("peakSeverity").GetString());
        Assert.Equal(1, root.GetProperty("alerts").GetProperty("raisedMarked").GetInt32());

        var page = File.ReadAllText(Path.Combine(h.Options.Folder, "2026-10-25", SummaryMarkdown.FileName));
        Assert.Contains("| site-tone | 40 |", page, StringComparison.Ordinal);
        Assert.Contains("| site-tone pump room drive h1 |", page, StringComparison.Ordinal);
        Assert.DoesNotContain("site:pump", page, StringComparison.Ordinal);
    }

    [Fact]
    public void Plots_are_pngs_of_the_configured_size_and_their_json_matches_the_summary()
    {
        var zone = TimeZoneInfo.FindSystemTimeZoneById("Europe/Berlin");
        var (from, to) = LocalDay.RangeUtc(Day, zone);
        using var h = new SummaryHarness("Europe/Berlin", to.AddHours(1));
        h.Store.Ledger.AddMinuteRows(SummaryHarness.Rows("room-a", "s1", from, to, seed: 5));

        // Two spectrum parts of one hour: the day's mean is their seconds-weighted mean.
        var bins = 257;
        var a = new float[bins];
        var b = new float[bins];
        for (var k = 0; k < bins; k++)
        {
            a[k] = 1f + k;
            b[k] = 4f;
        }

        h.Store.Spectra.Add(
        [
            new SpectrumPart("room-a", "s1", 1, from.AddHours(12), 0.25, 100, a, new Dictionary<FindingKey, LineFrequencyTally> { [FindingKey.Display("display 75 Hz", 1)] = new(750.1, 10) }),
            new SpectrumPart("room-a", "s1", 2, from.AddHours(12), 0.25, 300, b, new Dictionary<FindingKey, LineFrequencyTally> { [FindingKey.Display("display 75 Hz", 1)] = new(225.0, 3), [FindingKey.Mains(1)] = new(150.03, 3) }),
        ]);

        var rendered = h.Renderer().RenderDay(Day).Single();
        var folder = Path.Combine(h.Options.Folder, "2026-10-25");
        foreach (var kind in new[] { "spectrum", "timeline", "mains" })
        {
            var png = File.ReadAllBytes(Path.Combine(folder, $"room-a.{kind}.png"));
            // PNG spec (ISO/IEC 15948): 8-byte signature, then the IHDR chunk with big-endian width and height.
            Assert.Equal(new byte[] { 0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A }, png[..8]);
            Assert.Equal("IHDR"u8.ToArray(), png[12..16]);
            Assert.Equal(h.Options.PlotWidthPx, BinaryPrimitives.ReadInt32BigEndian(png.AsSpan(16)));
            Assert.Equal(h.Options.PlotHeightPx, BinaryPrimitives.ReadInt32BigEndian(png.AsSpan(20)));
        }

        using var plots = JsonDocument.Parse(File.ReadAllBytes(Path.Combine(folder, "room-a.plots.json")));
        using var summary = JsonDocument.Parse(File.ReadAllBytes(Path.Combine(folder, "room-a.json")));
        var s = summary.RootElement;
        var p = plots.RootElement;

        // Timeline: the same rows, and each row's hours add up to the source's affected minutes.
        var rows = p.GetProperty("timeline").GetProperty("rows");
        var sources = s.GetProperty("sources");
        Assert.Equal(sources.GetArrayLength(), rows.GetArrayLength());
        for (var i = 0; i < rows.GetArrayLength(); i++)
        {
            Assert.Equal(sources[i].GetProperty("key").GetString(), rows[i].GetProperty("key").GetString());
            var sum = rows[i].GetProperty("minutes").EnumerateArray().Sum(m => m.GetDouble());
            Assert.Equal(sources[i].GetProperty("affectedMinutes").GetDouble(), sum, 1);
        }

        Assert.Equal(25, p.GetProperty("timeline").GetProperty("hourStartsLocal").GetArrayLength());

        // Mains: the plotted series is the summary's track.
        Assert.Equal(s.GetProperty("mains").GetProperty("hz").GetRawText(), p.GetProperty("mains").GetProperty("hz").GetRawText());
        Assert.Equal(s.GetProperty("mains").GetProperty("meanHz").GetDouble(), p.GetProperty("mains").GetProperty("meanHz").GetDouble());

        // Spectrum: weighted mean (100 s of 1 + k, 300 s of 4) and one mark per source with a frequency.
        var psd = p.GetProperty("spectrum").GetProperty("psdUv2PerHz");
        Assert.Equal(bins, psd.GetArrayLength());
        for (var k = 0; k < bins; k += 64)
        {
            var expected = ((100.0 * (1 + k)) + (300.0 * 4)) / 400;
            Assert.Equal(expected, psd[k].GetDouble(), expected * 1e-5);
        }

        var marks = p.GetProperty("spectrum").GetProperty("marks").EnumerateArray().ToDictionary(m => m.GetProperty("key").GetString()!, m => m.GetProperty("frequencyHz").GetDouble());
        Assert.Equal(75.008, marks["display 75 Hz/h1"], 9); // (750.1 + 225.0) / 13 frames
        Assert.Equal(50.01, marks["mains/h1"], 9);
        foreach (var source in sources.EnumerateArray())
        {
            Assert.Equal(source.GetProperty("frequencyHz").GetDouble(), marks[source.GetProperty("key").GetString()!]);
        }

        Assert.Contains("room-a", File.ReadAllText(Path.Combine(folder, "day.md")), StringComparison.Ordinal);
        Assert.Equal(rendered.Json, File.ReadAllBytes(Path.Combine(folder, "room-a.json")));
    }

    [Fact]
    public void On_demand_rendering_rewrites_a_day_and_lists_it()
    {
        var zone = TimeZoneInfo.FindSystemTimeZoneById("America/New_York");
        var (from, to) = LocalDay.RangeUtc(new DateOnly(2026, 3, 8), zone);
        using var h = new SummaryHarness("America/New_York", to.AddHours(1));
        h.Store.Ledger.AddMinuteRows(SummaryHarness.Rows("room-a", "s1", from, to, seed: 9));
        h.Store.Ledger.AddMinuteRows(SummaryHarness.Rows("room-b", "s1", from, from.AddHours(2), seed: 9));
        h.Reopen();
        h.Store.Dispose();

        var storeOptions = new HumWatch.Host.Store.StoreOptions { Path = h.DbPath };
        var days = HumWatch.Host.Summaries.SummaryOnDemand.ListDays(storeOptions, zone);
        var listed = Assert.Single(days);
        Assert.Equal(23, listed.HoursInDay); // IANA: 2026-03-08 is 23 h in New York
        Assert.Equal(["room-a", "room-b"], listed.Streams);

        var outDir = Path.Combine(h.Root, "out");
        var rendered = HumWatch.Host.Summaries.SummaryOnDemand.Render(storeOptions, h.Options, "Test site", zone, new DateOnly(2026, 3, 8), "room-b", outDir);
        Assert.Equal("room-b", Assert.Single(rendered).Stream);
        Assert.True(File.Exists(Path.Combine(outDir, "2026-03-08", "room-b.json")));
        Assert.False(File.Exists(Path.Combine(outDir, "2026-03-08", "room-a.json")));
        Assert.Contains("room-a", File.ReadAllText(Path.Combine(outDir, "2026-03-08", "day.md")), StringComparison.Ordinal);
        Assert.Equal(1, HumWatch.Host.Summaries.SummaryOnDemand.ListDays(storeOptions, zone)[0].SummariesWritten);
        h.Open();
    }
}
