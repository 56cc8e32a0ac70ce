using System.Globalization;
using System.Text.Json;
using HumWatch.Core.Alerts;
using HumWatch.Host.Store;
using HumWatch.Host.Tests.EndToEnd;
using Microsoft.Data.Sqlite;
using Xunit;

namespace HumWatch.Host.Tests.Store;

/// <summary>
/// The store refuses writes while a stream is analysed: the fault is logged once and shown in the status, alerts are
/// still published, what could not be stored waits and is counted, and once the fault clears everything is in the
/// store exactly once. Each fault is made with SQLite's own means on a real file, so the error codes are SQLite's.
/// </summary>
public sealed class StoreFaultTests
{
    [Fact]
    public async Task A_full_store_defers_writes_while_analysis_and_publishing_go_on_and_stores_each_once_when_space_is_back()
    {
        // SQLite docs, PRAGMA max_page_count: a write that needs a page past the limit fails with SQLITE_FULL. With
        // 512-byte pages nearly every write needs a new page, so the limit acts as a full disk at once.
        using var rig = new StoreFaultRig(pageSizeBytes: 512);
        var pages = rig.Count("PRAGMA page_count");
        rig.OnStoreConnection($"PRAGMA max_page_count = {pages.ToString(CultureInfo.InvariantCulture)}");

        await FaultCycleAsync(rig, "full", () => rig.OnStoreConnection("PRAGMA max_page_count = 1000000"));
    }

    [Fact]
    public async Task A_read_only_store_defers_writes_while_analysis_and_publishing_go_on_and_stores_each_once_when_writable_again()
    {
        // SQLite docs, PRAGMA query_only: every write fails with SQLITE_READONLY, as for a write-protected file. Chosen
        // over chmod, which root (CI) ignores and which an already open connection would not notice anyway.
        using var rig = new StoreFaultRig();
        rig.OnStoreConnection("PRAGMA query_only = 1");

        await FaultCycleAsync(rig, "read-only", () => rig.OnStoreConnection("PRAGMA query_only = 0"));
    }

    [Fact]
    public async Task A_store_locked_by_another_connection_defers_writes_past_the_busy_timeout_and_stores_each_once_after_the_lock()
    {
        // Another connection holds a write transaction (SQLite docs: BEGIN EXCLUSIVE; in WAL mode it keeps other
        // writers out, readers go on). SQLite's file locks work the same between connections as between processes.
        using var rig = new StoreFaultRig(busyTimeoutMs: 100);
        using var other = new SqliteConnection($"Data Source={rig.Store.FullPath};Pooling=False");
        other.Open();
        using (var begin = other.CreateCommand())
        {
            begin.CommandText = "BEGIN EXCLUSIVE";
            begin.ExecuteNonQuery();
        }

        await FaultCycleAsync(rig, "locked", () =>
        {
            using var commit = other.CreateCommand();
            commit.CommandText = "COMMIT";
            commit.ExecuteNonQuery();
        });
    }

    [WriteProtectionFact]
    [System.Runtime.Versioning.UnsupportedOSPlatform("windows")]
    public void A_write_protected_store_file_is_refused_at_open_naming_the_file()
    {
        // SQLite docs, sqlite3_open_v2: SQLITE_OPEN_READWRITE opens a file that the operating system write-protects
        // read-only, without an error; the store must not start on it and fail every write afterwards.
        using var temp = new TempFolder();
        var path = temp.File("protected.db");
        new HumWatchStore(new StoreOptions { Path = path }, TimeProvider.System).Dispose();
        File.SetUnixFileMode(path, UnixFileMode.UserRead | UnixFileMode.GroupRead | UnixFileMode.OtherRead);
        try
        {
            var refused = Assert.Throws<InvalidOperationException>(() => new HumWatchStore(new StoreOptions { Path = path }, TimeProvider.System));
            Assert.Contains(path, refused.Message, StringComparison.Ordinal);
            Assert.Contains("read-only", refused.Message, StringComparison.Ordinal);
        }
        finally
        {
            File.SetUnixFileMode(path, UnixFileMode.UserRead | UnixFileMode.UserWrite);
        }
    }

    [Fact]
    public void Every_fault_kind_has_its_documented_spelling()
    {
        // docs/messages.md, status "store.state": ok, full, read-only, locked or failing.
        Assert.Equal(["ok", "full", "read-only", "locked", "failing"], Enum.GetValues<StoreFaultKind>().Select(k => k.ToText()));
    }

    [Theory]
    [InlineData(typeof(UnauthorizedAccessException), "read-only")]
    [InlineData(typeof(IOException), "failing")]
    [InlineData(typeof(InvalidOperationException), "failing")]
    public void Failures_that_are_not_SQLite_errors_are_classified_by_their_type(Type type, string expected)
    {
        var failure = (Exception)Activator.CreateInstance(type, "refused")!;

        Assert.Equal(expected, StoreFaults.Classify(failure).ToText());
        Assert.False(StoreFaults.IsStoreFailure(failure));
    }

    [Fact]
    public void Retries_wait_1_s_then_twice_as_long_each_time_up_to_30_s_and_remind_at_most_once_a_minute()
    {
        var time = new Microsoft.Extensions.Time.Testing.FakeTimeProvider(Rooms.Start);
        var logger = new RecordingLogger<StoreHealth>();
        using var health = new StoreHealth("backoff.db", time, logger);
        var backlog = new RefusingBacklog(time);
        health.Register(backlog);
        health.ReportFailure(new IOException("disk gone"), "one write");

        for (var s = 0; s < 200; s++)
        {
            time.Advance(TimeSpan.FromSeconds(1));
            health.RetryIfDue();
        }

        var waits = backlog.Attempts.Zip(backlog.Attempts.Skip(1), (a, b) => (b - a).TotalSeconds).Prepend((backlog.Attempts[0] - Rooms.Start).TotalSeconds);
        Assert.Equal([1.0, 2, 4, 8, 16, 30, 30, 30, 30, 30], waits.Take(10));
        Assert.Single(logger.Entries, e => e.EventId.Id == 1340);
        Assert.InRange(logger.Entries.Count(e => e.EventId.Id == 1341), 2, 3); // 200 s: at 61 s or later, 121 s or later, maybe 181 s
        Assert.True(health.IsFaulted);
    }

    [Fact]
    public void A_full_backlog_gives_up_its_oldest_write_and_counts_it()
    {
        var time = new Microsoft.Extensions.Time.Testing.FakeTimeProvider(Rooms.Start);
        var logger = new RecordingLogger<StoreHealth>();
        using var health = new StoreHealth("drops.db", time, logger);
        var stored = new List<string>();
        var refuse = true;
        var writes = new DeferredWrites<string>("test writes", 1, capacity: 2, s => { if (refuse) { throw new IOException("no"); } stored.Add(s); }, s => s, health);

        Assert.False(writes.Write("a"));
        Assert.False(writes.Write("b"));
        Assert.False(writes.Write("c"));

        Assert.Equal(2, writes.Waiting);
        Assert.Equal(1, health.Dropped);
        var drop = Assert.Single(logger.Entries, e => e.EventId.Id == 1343);
        Assert.Contains("the latest a", drop.Message, StringComparison.Ordinal);
        refuse = false;
        Assert.True(health.RetryNow());
        Assert.Equal(["b", "c"], stored);
        Assert.Equal(1, health.Snapshot().Dropped);
    }

    /// <summary>
    /// The common course of a fault: a stream with a mains episode is analysed for 90 s under the fault, a minute
    /// passes, the stream ends, the fault clears, and the next retry stores everything that waited.
    /// </summary>
    private static async Task FaultCycleAsync(StoreFaultRig rig, string fault, Action clear)
    {
        await rig.StartAsync();
        var room = Rooms.WithMains("room-f", onSeconds: 5, offSeconds: 45);
        var monitor = rig.Monitor("room-f");
        rig.Play(monitor, room, seconds: 90);

        // Logged once, naming the file and the fault, and shown in the status with what waits.
        Assert.Equal(fault, rig.Health.Fault.ToText());
        var started = Assert.Single(rig.Logger.Entries, e => e.EventId.Id == 1340);
        Assert.Contains($"Store {rig.Store.FullPath} is {fault}:", started.Message, StringComparison.Ordinal);
        var status = rig.Status(monitor).GetProperty("store");
        Assert.Equal(fault, status.GetProperty("state").GetString());
        Assert.True(status.GetProperty("deferred").GetInt32() > 0, status.GetRawText());
        Assert.Equal(rig.Health.Deferred, status.GetProperty("deferred").GetInt32());
        Assert.Equal(0, status.GetProperty("dropped").GetInt64());
        Assert.Equal(JsonValueKind.String, status.GetProperty("since").ValueKind);
        Assert.StartsWith(rig.Store.FullPath + ": ", status.GetProperty("error").GetString(), StringComparison.Ordinal);

        // Analysis and publishing went on: the episode was raised and cleared for subscribers.
        Assert.Contains("alert/room-f", rig.Publisher.Topics);
        Assert.Contains("clear/room-f", rig.Publisher.Topics);

        // A minute more under the fault: reminders, not a warning per write.
        for (var s = 0; s < 60; s++)
        {
            rig.Time.Advance(TimeSpan.FromSeconds(1));
        }

        Assert.InRange(rig.Logger.Entries.Count(e => e.EventId.Id == 1341), 1, 3);
        Assert.Single(rig.Logger.Entries, e => e.EventId.Id == 1340);

        // The stream ends under the fault: its last minute and its spectrum part wait too.
        await monitor.DisposeAsync();
        var waiting = rig.Health.Deferred;
        Assert.True(rig.Spectra.Waiting > 0);

        clear();
        for (var s = 0; s <= StoreHealth.MaxRetryDelay.TotalSeconds; s++)
        {
            rig.Time.Advance(TimeSpan.FromSeconds(1));
        }

        Assert.False(rig.Health.IsFaulted);
        Assert.Equal(0, rig.Health.Deferred);
        var cleared = Assert.Single(rig.Logger.Entries, e => e.EventId.Id == 1342);
        Assert.True(cleared.Message.Contains($"{waiting} waiting write(s) stored", StringComparison.Ordinal), cleared.Message);
        var after = rig.Status(monitor).GetProperty("store");
        Assert.Equal("ok", after.GetProperty("state").GetString());
        Assert.Equal(0, after.GetProperty("deferred").GetInt32());
        Assert.Equal(JsonValueKind.Null, after.GetProperty("since").ValueKind);

        AssertEverythingStoredOnce(rig, "room-f");
    }

    /// <summary>Every published alert event, every minute row and every spectrum part handed out is in the store exactly once.</summary>
    internal static void AssertEverythingStoredOnce(StoreFaultRig rig, string stream)
    {
        var published = rig.Publisher.Published
            .Where(m => m.Stream == stream && m.Kind is "alert" or "clear")
            .Select(m => JsonDocument.Parse(m.Body).RootElement)
            .Select(b => (
                Key: b.GetProperty("key").GetString()!,
                Event: b.TryGetProperty("event", out var e) ? e.GetString()! : "cleared",
                UtcMs: DateTimeOffset.Parse(b.GetProperty("utc").GetString()!, CultureInfo.InvariantCulture).ToUnixTimeMilliseconds()))
            .ToList();
        var stored = rig.Store.Alerts.Between(Rooms.Start.AddDays(-1), Rooms.Start.AddDays(1), stream)
            .Select(a => (Key: a.Key.ToString(), Event: a.Event.ToText(), UtcMs: a.Utc.ToUnixTimeMilliseconds()))
            .ToList();
        Assert.NotEmpty(published);
        Assert.Equal(published.Order(), stored.Order());

        Assert.NotEmpty(rig.Rows);
        Assert.Equal(rig.Rows.Count, rig.Rows.Select(r => (r.SessionId, r.Sequence)).Distinct().Count());
        Assert.Equal(rig.Rows.Count, rig.Count("SELECT count(*) FROM minute_ledger_parts"));
        var expected = rig.Rows.GroupBy(r => (r.MinuteUtc, Key: r.SourceKey.ToString())).ToDictionary(g => g.Key, g => g.Sum(r => r.MonitoredSeconds));
        var ledger = rig.Store.Ledger.Rows(stream, Rooms.Start.AddDays(-1), Rooms.Start.AddDays(1)).ToDictionary(r => (r.MinuteUtc, Key: r.SourceKey.ToString()), r => r.MonitoredSeconds);
        Assert.Equal(expected.Keys.Order(), ledger.Keys.Order());
        Assert.All(expected, p => Assert.Equal(p.Value, ledger[p.Key], 9));

        Assert.NotEmpty(rig.Parts);
        Assert.Equal(rig.Parts.Count, rig.Count("SELECT count(*) FROM spectrum_parts"));
    }

    /// <summary>Refuses every retry and notes when it was asked.</summary>
    private sealed class RefusingBacklog(TimeProvider time) : IStoreBacklog
    {
        public List<DateTimeOffset> Attempts { get; } = [];

        public string Name => "refused writes";

        public int RetryOrder => 0;

        public int Waiting => 1;

        public int RetryWaiting(out Exception? failure)
        {
            Attempts.Add(time.GetUtcNow());
            failure = new IOException("disk gone");
            return 0;
        }
    }
}
