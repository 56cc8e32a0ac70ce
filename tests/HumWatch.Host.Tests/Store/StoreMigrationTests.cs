using HumWatch.Core.Findings;
using HumWatch.Core.Summaries;
using HumWatch.Host.Store;
using HumWatch.Host.Summaries;
using HumWatch.Host.Tests.Publishing.Support;
using Microsoft.Extensions.Time.Testing;
using Xunit;

namespace HumWatch.Host.Tests.Store;

/// <summary>Files of earlier schema versions open, migrate in place and read back; one connection serves every table.</summary>
public sealed class StoreMigrationTests : IDisposable
{
    private readonly TempFolder _temp = new();
    private readonly FakeTimeProvider _time = new(new DateTimeOffset(2026, 3, 2, 12, 0, 0, TimeSpan.Zero));

    public void Dispose() => _temp.Dispose();

    private string DbPath => _temp.File("old.db");

    [Fact]
    public void A_schema_3_ledger_reads_back_under_the_new_column_names_and_keeps_merging()
    {
        OlderStoreFile.Create(DbPath, version: 3);
        // A minute as a schema-3 build stored it: 45 s affected, median 2 µV RMS, under the columns max_uv / median_uv.
        OlderStoreFile.Raw(DbPath, """
            INSERT INTO minute_ledger (stream, minute_utc, source_key, monitored_s, affected_s, max_uv, median_uv, worst_channels, mains_hz, parts)
            VALUES ('room-a', 1772442900, 'mains/h1', 45, 45, 3, 2, '["Cz"]', 50.0, 1)
            """);

        using (var store = new HumWatchStore(new StoreOptions { Path = DbPath }, _time))
        {
            Assert.Equal(StoreSchema.LatestVersion, store.SchemaVersion);
            var row = Assert.Single(store.Ledger.Rows("room-a", Some.Utc.AddMinutes(-1), Some.Utc.AddMinutes(1)));
            Assert.Equal(3, row.MaxUvRms);
            Assert.Equal(2, row.MeanMedianUvRms);

            // A later session adds the minute's last 15 s: the merged figure is the affected-time weighted mean of the
            // two medians, (2·45 + 6·15) / 60 = 3 (docs/store.md), and the larger maximum wins.
            Assert.Equal(1, store.Ledger.AddMinuteRows([Some.Row("session-b", 1, 15, 15, maxUvRms: 7, medianUvRms: 6)]));
            row = Assert.Single(store.Ledger.Rows("room-a", Some.Utc.AddMinutes(-1), Some.Utc.AddMinutes(1)));
            Assert.Equal(3, row.MeanMedianUvRms!.Value, 9);
            Assert.Equal(7, row.MaxUvRms);
            Assert.Equal(60, row.MonitoredSeconds, 9);
        }

        var columns = string.Join(",", Enumerable.Range(0, 10).Select(i => OlderStoreFile.Raw(DbPath, $"SELECT name FROM pragma_table_info('minute_ledger') WHERE cid = {i}")));
        Assert.Equal("stream,minute_utc,source_key,monitored_s,affected_s,max_uv_rms,mean_median_uv_rms,worst_channels,mains_hz,parts", columns);
        // One schema_version row per version, the three it had and each migration since.
        Assert.Equal((long)StoreSchema.LatestVersion, OlderStoreFile.Raw(DbPath, "SELECT count(*) FROM schema_version"));
    }

    [Fact]
    public void A_schema_1_file_gains_every_later_table_and_column()
    {
        OlderStoreFile.Create(DbPath, version: 1);
        using var store = new HumWatchStore(new StoreOptions { Path = DbPath }, _time);
        Assert.Equal(StoreSchema.LatestVersion, store.SchemaVersion);
        store.Alerts.AppendAlert(Some.Raised());
        Assert.NotNull(Assert.Single(store.Alerts.Between(Some.Utc, Some.Utc.AddSeconds(1))).EvidenceJson); // version 3's column
        store.Renders.MarkRendered(new DateOnly(2026, 3, 2), "UTC", "room-a", DayVerdict.Pass); // version 2's table
        Assert.True(store.Renders.IsRendered(new DateOnly(2026, 3, 2), "UTC", "room-a"));
    }

    [Fact]
    public void Spectrum_parts_round_trip_and_one_line_under_two_spellings_adds_up()
    {
        var hour = new DateTimeOffset(2026, 3, 2, 9, 0, 0, TimeSpan.Zero);
        using (var store = new HumWatchStore(new StoreOptions { Path = DbPath }, _time))
        {
            SpectrumPart part = new("room-a", "s1", 1, hour, 0.25, 120, [1.5f, 2.25f, float.Epsilon], new Dictionary<FindingKey, LineFrequencyTally> { [FindingKey.Mains(1)] = new(500.1, 10) });
            Assert.Equal(1, store.Spectra.Add([part]));
            Assert.Equal(0, store.Spectra.Add([part])); // re-delivered: same (stream, session, seq)
        }

        // An earlier build's spelling of a site tone in the same hour, written raw.
        OlderStoreFile.Raw(DbPath, """
            INSERT INTO spectrum_parts (stream, session, seq, hour_utc, bin_width_hz, seconds, psd, lines)
            VALUES ('room-a', 's0', 1, 1772442000, 0.25, 60, x'0000803f0000803f0000803f', '{"site:pump/h1": [33.4, 2], "site-tone:pump/h1": [16.7, 1]}')
            """);

        using (var store = new HumWatchStore(new StoreOptions { Path = DbPath }, _time))
        {
            var parts = store.Spectra.Between("room-a", hour, hour.AddHours(1));
            Assert.Equal(["s0", "s1"], parts.Select(p => p.SessionId));
            Assert.Equal([1f, 1f, 1f], parts[0].MeanPsdUv2PerHz); // 0x3f800000 is 1.0f (IEEE 754 binary32)
            var tone = parts[0].Lines[FindingKey.SiteTone("pump", 1)];
            Assert.Equal(33.4 + 16.7, tone.SumHz, 12);
            Assert.Equal(3, tone.Frames);
            Assert.Equal([1.5f, 2.25f, float.Epsilon], parts[1].MeanPsdUv2PerHz);
            Assert.Equal(new LineFrequencyTally(500.1, 10), parts[1].Lines[FindingKey.Mains(1)]);
            Assert.Empty(store.Spectra.Between("room-a", hour.AddHours(1), hour.AddHours(2)));

            // The summaries read the same connection's tables: the day's mean weights 60 s of 1.0 and 120 s of the part.
            var day = new SummaryStore(store).DaySpectrum("room-a", hour, hour.AddHours(1))!;
            Assert.Equal((1.0 * 60 + 1.5 * 120) / 180, day.MeanPsdUv2PerHz[0], 12);
        }
    }
}
