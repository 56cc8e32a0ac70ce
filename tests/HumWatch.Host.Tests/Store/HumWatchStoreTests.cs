using HumWatch.Core.Alerts;
using HumWatch.Core.Findings;
using HumWatch.Core.Ledger;
using HumWatch.Host.Store;
using HumWatch.Host.Tests.Publishing.Support;
using Microsoft.Data.Sqlite;
using Microsoft.Extensions.Time.Testing;
using Xunit;

namespace HumWatch.Host.Tests.Store;

/// <summary>
/// The SQLite store's own behaviour (WAL, the file, older spellings in raw rows). The promises both providers keep are
/// held on each of them by <see cref="Postgres.StoreContractTests"/>.
/// </summary>
public sealed class HumWatchStoreTests : IDisposable
{
    private readonly TempFolder _temp = new();
    private readonly FakeTimeProvider _time = new(new DateTimeOffset(2026, 3, 2, 12, 0, 0, TimeSpan.Zero));

    public void Dispose() => _temp.Dispose();

    private HumWatchStore Open(string name = "store.db") => new(new StoreOptions { Path = _temp.File(name) }, _time);

    private object? RawScalar(string sql, string name = "store.db")
    {
        using var connection = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = _temp.File(name), Pooling = false }.ToString());
        connection.Open();
        using var command = connection.CreateCommand();
        command.CommandText = sql;
        return command.ExecuteScalar();
    }

    [Fact]
    public void Fresh_store_creates_the_schema_in_WAL_mode()
    {
        using (var store = Open("sub/dir/store.db"))
        {
            Assert.Equal(StoreSchema.LatestVersion, store.SchemaVersion);
        }

        Assert.Equal("wal", RawScalar("PRAGMA journal_mode", "sub/dir/store.db")); // SQLite docs: WAL journal mode is persistent across connections (from memory)
        Assert.Equal((long)StoreSchema.LatestVersion, RawScalar("SELECT max(version) FROM schema_version", "sub/dir/store.db"));
        Assert.Equal(5L, RawScalar("SELECT count(*) FROM sqlite_master WHERE type = 'table' AND name IN ('alerts', 'minute_ledger', 'minute_ledger_parts', 'file_journal', 'schema_version')", "sub/dir/store.db"));
    }

    [Fact]
    public void Reopening_keeps_data_and_runs_no_migration_twice()
    {
        using (var store = Open())
        {
            store.Alerts.AppendAlert(Some.Raised());
        }

        using (var store = Open())
        {
            Assert.Equal(StoreSchema.LatestVersion, store.SchemaVersion);
            Assert.Single(store.Alerts.Between(Some.Utc.AddHours(-1), Some.Utc.AddHours(1)));
        }

        Assert.Equal((long)StoreSchema.LatestVersion, RawScalar("SELECT count(*) FROM schema_version"));
    }

    [Fact]
    public void A_file_that_is_not_a_database_gives_an_error_naming_it()
    {
        File.WriteAllText(_temp.File("junk.db"), new string('x', 4096));
        var ex = Assert.Throws<InvalidOperationException>(() => Open("junk.db"));
        Assert.Contains(_temp.File("junk.db"), ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Text_columns_hold_the_documented_spellings()
    {
        using (var store = Open())
        {
            var tone = new Core.Attribution.SourceMatch(Core.Attribution.SourceKind.SiteTone, "pump room drive", 16.7, 1, false, 16.7, 0);
            store.Alerts.AppendAlert(Some.Raised() with { Key = FindingKey.ForLine(tone, 16.7), Source = tone });
            store.Ledger.AddMinuteRows([Some.Row("s", 1, 60, 60, 3, 2, key: FindingKey.SiteTone("pump room drive", 1))]);
        }

        // docs/store.md: kind is mains/display/site-tone/unidentified/fault; keys as in docs/messages.md.
        Assert.Equal("site-tone", RawScalar("SELECT kind FROM alerts"));
        Assert.Equal("site-tone:pump room drive/h1", RawScalar("SELECT key FROM alerts"));
        Assert.Equal("raised", RawScalar("SELECT event FROM alerts"));
        Assert.Equal("marked", RawScalar("SELECT severity FROM alerts"));
        Assert.Equal("site-tone:pump room drive/h1", RawScalar("SELECT source_key FROM minute_ledger"));
        Assert.Equal("site-tone:pump room drive/h1", RawScalar("SELECT source_key FROM minute_ledger_parts"));
    }

    [Fact]
    public void Rows_a_store_holds_in_the_older_site_tone_spelling_read_back_as_site_tones()
    {
        // Rows as earlier builds wrote them: kind "site", keys "site:<name>/h<n>", in a schema-3 file (ledger columns max_uv, median_uv).
        OlderStoreFile.Create(_temp.File("store.db"), version: 3);
        RawScalar("""
            INSERT INTO alerts (stream, key, kind, event, severity, source_name, harmonic, aliased, worst_channels, stream_seconds, utc_ms, peak_severity, reason)
            VALUES ('room-a', 'site:pump room drive/h1', 'site', 'cleared', 'minor', 'pump room drive', 1, 0, '["Cz"]', 40, 1772442930000, 'marked', 'stream ended')
            """);
        RawScalar("""
            INSERT INTO minute_ledger (stream, minute_utc, source_key, monitored_s, affected_s, max_uv, median_uv, worst_channels, mains_hz, parts)
            VALUES ('room-a', 1772442900, 'site:pump room drive/h1', 60, 45, 3, 2, '["Cz"]', NULL, 1)
            """);

        using var store = Open();
        var alert = Assert.Single(store.Alerts.Between(Some.Utc.AddMinutes(-1), Some.Utc.AddMinutes(1)));
        Assert.Equal(FindingKey.SiteTone("pump room drive", 1), alert.Key);
        Assert.Equal(FindingCategory.SiteTone, alert.Kind);
        Assert.Equal(AlertEventKind.Cleared, alert.Event);
        Assert.Equal(AlertSeverity.Minor, alert.Severity);
        Assert.Equal(AlertSeverity.Marked, alert.PeakSeverity);
        Assert.Equal(AlertClearReason.StreamEnded, alert.Reason);
        var row = Assert.Single(store.Ledger.Rows("room-a", Some.Utc.AddMinutes(-1), Some.Utc.AddMinutes(1)));
        Assert.Equal(FindingKey.SiteTone("pump room drive", 1), row.SourceKey);
        Assert.Equal(45, row.AffectedSeconds);
    }

    [Fact]
    public void Non_finite_values_are_stored_as_null()
    {
        using var store = Open();
        var fault = new AlertCleared("room-a", FindingKey.ChannelFault("Cz", Core.Faults.ChannelFaultKind.Flat), AlertCategory.ChannelFault, Core.Attribution.SourceMatch.None,
            Core.Faults.ChannelFaultKind.Flat, 20, Some.Utc, double.NaN, AlertClearReason.StreamEnded, 12, double.NaN, AlertSeverity.Marked, AlertSeverity.Marked);
        store.Alerts.AppendAlert(fault);
        var stored = Assert.Single(store.Alerts.Between(Some.Utc, Some.Utc.AddSeconds(1)));
        Assert.Equal(FindingCategory.ChannelFault, stored.Kind);
        Assert.Null(stored.FrequencyHz);
        Assert.Null(stored.PeakUvRms);
        Assert.Equal(AlertClearReason.StreamEnded, stored.Reason);
    }

    [Fact]
    public void A_re_delivered_ledger_row_is_not_counted_twice()
    {
        using (var store = Open())
        {
            MinuteRow[] rows = [Some.Row("file-ab12", 1, 60, 60, 3, 2), Some.Row("file-ab12", 2, 60, 0, double.NaN, double.NaN, key: MinuteLedger.AllSourcesKey)];
            Assert.Equal(2, store.Ledger.AddMinuteRows(rows));
            Assert.Equal(0, store.Ledger.AddMinuteRows(rows));
        }

        // After a restart the same file is processed again: same session and sequence numbers.
        using (var store = Open())
        {
            Assert.Equal(0, store.Ledger.AddMinuteRows([Some.Row("file-ab12", 1, 60, 60, 3, 2)]));
            var rows = store.Ledger.Rows("room-a", Some.Utc.AddMinutes(-5), Some.Utc.AddMinutes(5));
            Assert.Equal(2, rows.Count);
            Assert.Equal(60, rows.Single(r => r.SourceKey.ToString() == "mains/h1").MonitoredSeconds, 9);
            Assert.Null(rows.Single(r => r.SourceKey == MinuteLedger.AllSourcesKey).MaxUvRms);
        }
    }

    [Fact]
    public void Ledger_query_selects_by_stream_and_utc_range()
    {
        using var store = Open();
        store.Ledger.AddMinuteRows([Some.Row("s", 1, 60, 0, 1, 1), Some.Row("s", 2, 60, 0, 1, 1, stream: "room-b")]);
        var minute = new DateTimeOffset(2026, 3, 2, 9, 15, 0, TimeSpan.Zero);
        Assert.Single(store.Ledger.Rows("room-a", minute, minute.AddMinutes(1)));
        Assert.Empty(store.Ledger.Rows("room-a", minute.AddMinutes(1), minute.AddMinutes(2)));
        Assert.Empty(store.Ledger.Rows("room-a", minute.AddMinutes(-1), minute));
    }

    [Fact]
    public void File_journal_hands_out_each_file_exactly_once_across_restarts()
    {
        const string sha = "9F86D081884C7D659A2FEAA0C55AD015A3BF4F1B2B0B822CD15D6C15B0F00A08";
        var mtime = new DateTimeOffset(2026, 3, 2, 8, 0, 0, TimeSpan.Zero);
        using (var store = Open())
        {
            Assert.True(store.Files.TryBegin("/in/a.edf", 1234, mtime, sha, out var first));
            Assert.Equal(FileJournalState.Received, first.State);
            Assert.Equal(_time.GetUtcNow(), first.Utc);
            Assert.Equal(sha.ToLowerInvariant(), first.Sha256);

            // Same content again while the first is in progress (e.g. copied under another name).
            Assert.False(store.Files.TryBegin("/in/copy-of-a.edf", 1234, mtime, sha, out var busy));
            Assert.Equal(FileJournalState.Received, busy.State);
        }

        // Crash before Complete: after restart the file is handed out again, counted as a second attempt.
        _time.Advance(TimeSpan.FromMinutes(3));
        using (var store = Open())
        {
            Assert.True(store.Files.TryBegin("/in/a.edf", 1234, mtime, sha, out var retry));
            Assert.Equal(2, retry.Attempts);
            var done = store.Files.Complete(sha, 1234, FileJournalState.Archived, "/reports/a.json");
            Assert.Equal(FileJournalState.Archived, done.State);
            Assert.Equal("/reports/a.json", done.ReportPath);
            Assert.Equal(_time.GetUtcNow(), done.Utc);
        }

        using (var store = Open())
        {
            Assert.False(store.Files.TryBegin("/in/a-again.edf", 1234, mtime, sha, out var again));
            Assert.Equal(FileJournalState.Archived, again.State);
            Assert.Throws<InvalidOperationException>(() => store.Files.Complete(sha, 1234, FileJournalState.Rejected));

            Assert.True(store.Files.TryBegin("/in/b.edf", 10, mtime, "00ff", out _));
            var rejected = store.Files.Complete("00FF", 10, FileJournalState.Rejected, reason: "not an EDF header");
            Assert.Equal("not an EDF header", rejected.Reason);
            Assert.False(store.Files.TryBegin("/in/b.edf", 10, mtime, "00ff", out _));
        }
    }

    [Fact]
    public void Options_validation_names_the_keys()
    {
        var errors = new StoreOptions { Path = " ", BusyTimeoutMs = -1 }.Validate();
        Assert.Contains(errors, e => e.StartsWith("Store:Path", StringComparison.Ordinal));
        Assert.Contains(errors, e => e.StartsWith("Store:BusyTimeoutMs", StringComparison.Ordinal));
        Assert.Empty(new StoreOptions().Validate());
    }

    [Fact]
    public void Concurrent_claims_of_one_file_hand_it_out_once()
    {
        using var store = Open();
        var wins = 0;
        Parallel.For(0, 8, i =>
        {
            if (store.Files.TryBegin("/in/c.edf", 99, Some.Utc, "abcdef", out _))
            {
                Interlocked.Increment(ref wins);
            }
        });

        Assert.Equal(1, wins);
    }

    [Fact]
    public void Concurrent_writers_share_one_store_safely()
    {
        using var store = Open();
        Parallel.For(0, 40, i =>
        {
            store.Alerts.AppendAlert(Some.Raised(stream: $"room-{i % 4}"));
            store.Ledger.AddMinuteRows([Some.Row($"session-{i}", 1, 1, 1, i, i)]);
        });

        Assert.Equal(40, store.Alerts.Between(Some.Utc, Some.Utc.AddSeconds(1)).Count);
        var row = Assert.Single(store.Ledger.Rows("room-a", Some.Utc.AddMinutes(-1), Some.Utc.AddMinutes(1)));
        Assert.Equal(40, row.MonitoredSeconds, 9);
        Assert.Equal(39, row.MaxUvRms);
        Assert.Equal(40, row.Parts);
    }
}
