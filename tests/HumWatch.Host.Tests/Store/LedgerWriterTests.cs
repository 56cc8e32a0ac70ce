using HumWatch.Core.Ledger;
using HumWatch.Host.Store;
using HumWatch.Host.Tests.Publishing.Support;
using Microsoft.Extensions.Time.Testing;
using Xunit;

namespace HumWatch.Host.Tests.Store;

public sealed class LedgerWriterTests : IDisposable
{
    private readonly TempFolder _temp = new();

    public void Dispose() => _temp.Dispose();

    /// <summary>Fails the first N writes, then passes them to the real store.</summary>
    private sealed class FlakyLedgerStore(ILedgerStore inner, int failures) : ILedgerStore
    {
        private int _failuresLeft = failures;

        public int AddMinuteRows(IReadOnlyList<MinuteRow> rows)
        {
            if (_failuresLeft-- > 0)
            {
                throw new IOException("database is locked");
            }

            return inner.AddMinuteRows(rows);
        }
    }

    [Fact]
    public void Rows_refused_by_the_store_are_written_later_exactly_once()
    {
        var time = new FakeTimeProvider(Some.Utc);
        using var store = new HumWatchStore(new StoreOptions { Path = _temp.File("l.db") }, time);
        var logger = new RecordingLogger<LedgerWriter>();
        using var health = new StoreHealth(store.FullPath, time, logger);
        var writer = new LedgerWriter(new FlakyLedgerStore(store.Ledger, failures: 2), logger, time, health: health);

        writer.OnMinuteRow(Some.Row("s1", 1, 20, 10, 3, 2));
        Assert.False(writer.Flush());
        writer.OnMinuteRow(Some.Row("s1", 2, 20, 10, 5, 4, key: MinuteLedger.AllSourcesKey));
        Assert.False(writer.Flush());
        Assert.Equal(2, writer.PendingCount);

        Assert.Equal(2, health.Deferred);
        Assert.True(health.RetryNow());
        Assert.Equal(0, writer.PendingCount);
        Assert.Equal(0, health.Deferred);
        Assert.True(writer.Flush());

        var rows = store.Ledger.Rows("room-a", Some.Utc.AddMinutes(-1), Some.Utc.AddMinutes(1));
        Assert.Equal(2, rows.Count);
        Assert.All(rows, r => Assert.Equal(20, r.MonitoredSeconds, 9));
        // One warning when the fault began (the second refusal is part of it), one line when it ended.
        Assert.Single(logger.Entries, e => e.EventId.Id == 1340);
        var cleared = Assert.Single(logger.Entries, e => e.EventId.Id == 1342);
        Assert.Contains("2 waiting write(s) stored (2 minute ledger rows)", cleared.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void The_backlog_is_bounded_and_drops_are_logged()
    {
        var time = new FakeTimeProvider(Some.Utc);
        var logger = new RecordingLogger<LedgerWriter>();
        using var health = new StoreHealth("bounded.db", time, logger);
        var writer = new LedgerWriter(new FlakyLedgerStore(null!, failures: int.MaxValue), logger, time, maxPendingRows: 3, health: health);
        for (var i = 1; i <= 5; i++)
        {
            writer.OnMinuteRow(Some.Row("s", i, 1, 0, 1, 1));
        }

        // Two given up, counted; the first reported at once, the second held for the next report (at most one a minute).
        Assert.Equal(3, writer.PendingCount);
        Assert.Equal(2, health.Dropped);
        var first = Assert.Single(logger.Entries, e => e.EventId.Id == 1343);
        Assert.Contains("gave up 1 oldest write(s) (1 in all), the latest row 1 of session s", first.Message, StringComparison.Ordinal);

        time.Advance(StoreHealth.ReminderInterval);
        writer.OnMinuteRow(Some.Row("s", 6, 1, 0, 1, 1));
        Assert.Equal(3, health.Dropped);
        Assert.Contains(logger.Entries, e => e.EventId.Id == 1343 && e.Message.Contains("gave up 2 oldest write(s) (3 in all)", StringComparison.Ordinal));
        Assert.False(writer.Flush());
    }

    /// <summary>Hands a row in while the write is under way (as a session would from another thread), then refuses the write once.</summary>
    private sealed class RowDuringWriteStore(Func<LedgerWriter> writer, MinuteRow lateRow) : ILedgerStore
    {
        private bool _refused;

        public List<MinuteRow> Written { get; } = [];

        public int AddMinuteRows(IReadOnlyList<MinuteRow> rows)
        {
            if (!_refused)
            {
                _refused = true;
                writer().OnMinuteRow(lateRow);
                throw new IOException("database is locked");
            }

            Written.AddRange(rows);
            return rows.Count;
        }
    }

    [Fact]
    public void Rows_handed_in_during_a_refused_write_queue_behind_the_refused_ones()
    {
        LedgerWriter? writer = null;
        var late = Some.Row("s", 3, 20, 0, 1, 1);
        var store = new RowDuringWriteStore(() => writer!, late);
        writer = new LedgerWriter(store, new RecordingLogger<LedgerWriter>());
        writer.OnMinuteRow(Some.Row("s", 1, 20, 0, 1, 1));
        writer.OnMinuteRow(Some.Row("s", 2, 20, 0, 1, 1));

        Assert.False(writer.Flush());
        Assert.Equal(3, writer.PendingCount);
        Assert.True(writer.Flush());

        Assert.Equal([1L, 2L, 3L], store.Written.Select(r => r.Sequence));
        Assert.Equal(0, writer.PendingCount);
    }
}
