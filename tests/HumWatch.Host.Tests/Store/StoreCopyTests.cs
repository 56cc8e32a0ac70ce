using System.Data.Common;
using HumWatch.Core.Findings;
using HumWatch.Core.Ledger;
using HumWatch.Core.Summaries;
using HumWatch.Host.Store;
using HumWatch.Host.Tests.Publishing.Support;
using HumWatch.Host.Tests.Store.Postgres;
using HumWatch.TestSupport;
using Microsoft.Extensions.Time.Testing;
using Xunit;

namespace HumWatch.Host.Tests.Store;

/// <summary>`store copy`: a SQLite history into an empty store of either provider, proved by counts and checksums.</summary>
[Collection(PostgresCollection.Name)]
public sealed class StoreCopyTests(PostgresServer server) : IDisposable
{
    private readonly TempFolder _temp = new();
    private readonly FakeTimeProvider _time = new(new DateTimeOffset(2026, 3, 2, 12, 0, 0, TimeSpan.Zero));
    private readonly List<IDisposable> _open = [];

    public void Dispose()
    {
        for (var i = _open.Count - 1; i >= 0; i--)
        {
            _open[i].Dispose();
        }

        _temp.Dispose();
    }

    private HumWatchStore Open(string name, string? instance = "lab-a") => Keep(new HumWatchStore(new StoreOptions { Path = _temp.File(name) }, _time, instance));

    /// <summary>An empty target store on the provider the theory row names.</summary>
    private HumWatchStore Target(string provider) => Keep(Keep(new StoreUnderTest(provider, server, _time)).Open("lab-a"));

    private T Keep<T>(T disposable)
        where T : IDisposable
    {
        _open.Add(disposable);
        return disposable;
    }

    /// <summary>A store with rows in every table, each kind of column value (NULL, integers, reals, text, blobs) among them.</summary>
    private static void Fill(HumWatchStore store)
    {
        store.Instances.Register("lab-a", "1.0.0", Some.Utc);
        store.Alerts.AppendAlert(Some.Raised());
        store.Alerts.AppendAlert(Some.SeverityChanged());
        store.Alerts.AppendAlert(Some.Cleared());
        store.Alerts.AppendAlert(Some.Raised(stream: "room-b", utc: Some.Utc.AddHours(1)));
        store.Ledger.AddMinuteRows([
            Some.Row("s1", 1, 60, 60, 3, 2),
            Some.Row("s1", 2, 60, 0, double.NaN, double.NaN, key: MinuteLedger.AllSourcesKey),
            Some.Row("s1", 3, 30, 12.5, 7.25, 4.125, stream: "room-b", mainsHz: 49.98),
        ]);
        Assert.True(store.Files.TryBegin("/inbox/a.edf", 1234, Some.Utc, new string('a', 64), out _));
        store.Files.Complete(new string('a', 64), 1234, FileJournalState.Archived, "/reports/a.json");
        Assert.True(store.Files.TryBegin("/inbox/b.edf", 99, Some.Utc, new string('b', 64), out _));
        store.Spectra.Add([new SpectrumPart("room-a", "s1", 1, Some.Utc.AddMinutes(-15), 0.25, 100, [1.5f, 2.25f, float.Epsilon],
            new Dictionary<FindingKey, LineFrequencyTally> { [FindingKey.Mains(1)] = new(500.1, 10) })]);
        store.Renders.MarkRendered(new DateOnly(2026, 3, 1), "UTC", "room-a", DayVerdict.Pass);
        store.StreamOwners.Record("lab-a", [new StreamSighting("room-a", Some.Utc.ToUnixTimeSeconds() / 3600 * 3600, Some.Utc)]);
        store.Instances.ClaimOnce("summary:2026-03-01", "lab-a", Some.Utc);
    }

    private static IReadOnlyList<TableCopyResult> Copy(HumWatchStore source, HumWatchStore target) =>
        source.Connection.Run(s => target.Connection.Run(t => StoreCopy.Copy(s, t, target.Connection.AfterRowsCopiedWithIds)));

    private static (long Rows, string Checksum) ChecksumOf(HumWatchStore store, string table) =>
        store.Connection.Run(c => StoreCopy.Checksum(c, table));

    private static void Execute(HumWatchStore store, string sql) => store.Connection.Run(c =>
    {
        using var command = c.CreateCommand();
        command.CommandText = sql;
        return command.ExecuteNonQuery();
    });

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void A_copy_holds_every_row_and_both_sides_read_back_equal(string provider)
    {
        var source = Open("source.db");
        var target = Target(provider);
        Fill(source);

        var results = Copy(source, target);

        Assert.Equal(StoreCopy.Tables, results.Select(r => r.Table));
        Assert.All(results, r => Assert.True(r.Matches, $"{r.Table}: {r.SourceRows} → {r.TargetRows} rows, {r.SourceChecksum} → {r.TargetChecksum}"));
        Assert.All(results, r => Assert.True(r.SourceRows > 0, $"{r.Table} was left empty by Fill, so the copy of it proves nothing"));
        Assert.Equal(4, results.Single(r => r.Table == "alerts").TargetRows);

        // Read through the table classes, not only by checksum: the copy is a working store.
        var from = Some.Utc.AddDays(-1);
        var to = Some.Utc.AddDays(1);
        Assert.Equal(source.Alerts.Between(from, to).Select(a => (a.Id, a.Key, a.Event, a.Utc)), target.Alerts.Between(from, to).Select(a => (a.Id, a.Key, a.Event, a.Utc)));
        Assert.Equal(source.Ledger.Rows("room-b", from, to), target.Ledger.Rows("room-b", from, to), new StoredMinuteComparer());
        Assert.Equal(FileJournalState.Archived, target.Files.Find(new string('a', 64), 1234)!.State);
        Assert.Equal([1.5f, 2.25f, float.Epsilon], Assert.Single(target.Spectra.Between("room-a", from, to)).MeanPsdUv2PerHz);
        Assert.True(target.Renders.IsRendered(new DateOnly(2026, 3, 1), "UTC", "room-a"));
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void New_rows_in_the_copy_take_ids_after_the_copied_ones(string provider)
    {
        var source = Open("source.db");
        var target = Target(provider);
        Fill(source);
        Copy(source, target);

        var next = target.Alerts.AppendAlert(Some.Raised(stream: "room-c"));

        Assert.Equal(5, next);
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void A_target_that_already_holds_rows_is_refused_and_left_as_it_was(string provider)
    {
        var source = Open("source.db");
        var target = Target(provider);
        Fill(source);
        target.Alerts.AppendAlert(Some.Raised(stream: "room-z"));

        var error = Assert.Throws<InvalidOperationException>(() => Copy(source, target));

        Assert.Contains("1 row(s) in alerts", error.Message, StringComparison.Ordinal);
        Assert.Contains("empty store", error.Message, StringComparison.Ordinal);
        Assert.Equal(1, ChecksumOf(target, "alerts").Rows);
        Assert.Equal(0, ChecksumOf(target, "minute_ledger").Rows);
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void Stores_of_different_schema_versions_are_refused(string provider)
    {
        var source = Open("source.db");
        var target = Target(provider);
        Execute(target, $"DELETE FROM schema_version WHERE version = {StoreSchema.LatestVersion}");

        var error = Assert.Throws<InvalidOperationException>(() => Copy(source, target));

        Assert.Contains($"schema version {StoreSchema.LatestVersion} and the target {StoreSchema.LatestVersion - 1}", error.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void The_job_opens_both_stores_from_their_addresses_a_connection_string_file_among_them(string provider)
    {
        using (var source = new HumWatchStore(new StoreOptions { Path = _temp.File("box.db") }, _time, "lab-a"))
        {
            Fill(source);
        }

        string to;
        if (provider == StoreUnderTest.Sqlite)
        {
            to = "sqlite:" + _temp.File("copy.db");
        }
        else
        {
            // The connection string in a file of its own, as docs/fleet.md tells operators to keep it.
            var file = _temp.File("store.conn");
            File.WriteAllText(file, server.CreateDatabase());
            to = "postgres-file:" + file;
        }

        Assert.True(StoreAddress.TryParse("sqlite:" + _temp.File("box.db"), "--from", out var from, out _));
        Assert.True(StoreAddress.TryParse(to, "--to", out var target, out _));
        var versions = new List<int>();
        var tables = new List<string>();

        var results = StoreCopyJob.Run(from, target, versions.Add, (table, _) => tables.Add(table));

        Assert.Equal([StoreSchema.LatestVersion], versions);
        Assert.Equal(StoreCopy.Tables, tables);
        Assert.All(results, r => Assert.True(r.Matches, r.Table));
    }

    [Fact]
    public void The_checksum_ignores_row_order_and_sees_a_changed_value()
    {
        var forward = Open("forward.db");
        var backward = Open("backward.db");
        MinuteRow[] rows = [Some.Row("s1", 1, 60, 60, 3, 2), Some.Row("s1", 2, 60, 30, 5, 1, stream: "room-b"), Some.Row("s1", 3, 60, 10, 2, 1, stream: "room-c")];
        forward.Ledger.AddMinuteRows(rows);
        backward.Ledger.AddMinuteRows([.. rows.Reverse()]);

        Assert.Equal(ChecksumOf(forward, "minute_ledger"), ChecksumOf(backward, "minute_ledger"));

        // The smallest change a copy could make to a double: one unit in the last place.
        Execute(backward, "UPDATE minute_ledger SET max_uv_rms = 5.000000000000001 WHERE stream = 'room-b'");
        Assert.NotEqual(ChecksumOf(forward, "minute_ledger").Checksum, ChecksumOf(backward, "minute_ledger").Checksum);
    }

    [Fact]
    public void The_checksum_sees_a_changed_text_and_a_real_where_an_integer_was()
    {
        var store = Open("kinds.db");
        string Sum()
        {
            return ChecksumOf(store, "store_claims").Checksum;
        }

        Execute(store, "INSERT INTO store_claims (name, instance, utc_ms) VALUES ('x', 'lab-a', 0)");
        var integer = Sum();
        Execute(store, "UPDATE store_claims SET utc_ms = 0.0");
        // SQLite keeps 0.0 in an INTEGER column as the integer 0 (type affinity, sqlite.org/datatype3.html).
        Assert.Equal(integer, Sum());
        Execute(store, "UPDATE store_claims SET instance = ''");
        var empty = Sum();
        Assert.NotEqual(integer, empty);
        Execute(store, "UPDATE store_claims SET utc_ms = 0.5");
        Assert.NotEqual(empty, Sum());
    }

    private sealed class StoredMinuteComparer : IEqualityComparer<StoredMinute>
    {
        public bool Equals(StoredMinute? x, StoredMinute? y) =>
            x is not null && y is not null && x.Stream == y.Stream && x.MinuteUtc == y.MinuteUtc && x.SourceKey == y.SourceKey
            && x.MonitoredSeconds == y.MonitoredSeconds && x.AffectedSeconds == y.AffectedSeconds && x.MaxUvRms == y.MaxUvRms
            && x.MeanMedianUvRms == y.MeanMedianUvRms && x.WorstChannels.SequenceEqual(y.WorstChannels) && x.MainsHz == y.MainsHz && x.Parts == y.Parts;

        public int GetHashCode(StoredMinute obj) => HashCode.Combine(obj.Stream, obj.MinuteUtc);
    }
}
