using HumWatch.Core.Alerts;
using HumWatch.Core.Findings;
using HumWatch.Host.Publishing;
using HumWatch.Host.Store;
using HumWatch.Host.Tests.Publishing.Support;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Time.Testing;
using Xunit;

namespace HumWatch.Host.Tests.Publishing;

public sealed class AlertDispatcherTests : IDisposable
{
    private readonly TempFolder _temp = new();
    private readonly List<string> _steps = [];

    public void Dispose() => _temp.Dispose();

    private sealed class RecordingStore(List<string> steps) : IAlertEventStore
    {
        public bool Fail { get; set; }

        public List<AlertEvent> Stored { get; } = [];

        public long AppendAlert(AlertEvent alertEvent)
        {
            steps.Add("store");
            if (Fail)
            {
                throw new IOException("disk full");
            }

            Stored.Add(alertEvent);
            return Stored.Count;
        }
    }

    private sealed class ThrowingPublisher : IMessagePublisher
    {
        public bool TryPublish(string kind, string streamId, byte[] body) => throw new InvalidOperationException("socket gone");
    }

    [Fact]
    public void Each_event_is_stored_then_logged_then_published()
    {
        var store = new RecordingStore(_steps);
        var publisher = new RecordingPublisher(_steps);
        var dispatcher = new AlertDispatcher(store, publisher, new RecordingLogger<AlertDispatcher>(_steps));

        dispatcher.OnAlertEvent(Some.Raised());
        dispatcher.OnAlertEvent(Some.Cleared());

        Assert.Equal(["store", "log", "publish", "store", "log", "publish"], _steps);
        Assert.Equal(["alert/room-a", "clear/room-a"], publisher.Topics);
    }

    [Fact]
    public void A_failing_publisher_never_loses_the_stored_row()
    {
        using var store = new HumWatchStore(new StoreOptions { Path = _temp.File("a.db") }, new FakeTimeProvider(Some.Utc));
        var logger = new RecordingLogger<AlertDispatcher>();
        var dispatcher = new AlertDispatcher(store.Alerts, new ThrowingPublisher(), logger);

        var outcome = dispatcher.Dispatch(Some.Raised());

        Assert.Equal((true, false), outcome);
        Assert.Single(store.Alerts.Between(Some.Utc.AddMinutes(-1), Some.Utc.AddMinutes(1)));
        Assert.Contains(logger.Entries, e => e.EventId.Id == 3000 && e.Level == LogLevel.Warning);
        Assert.Contains(logger.Entries, e => e.EventId.Id == 3013 && e.Exception is InvalidOperationException);
    }

    [Fact]
    public void A_failing_store_still_logs_and_publishes_and_catches_up_in_order()
    {
        var store = new RecordingStore(_steps) { Fail = true };
        var publisher = new RecordingPublisher(_steps);
        var logger = new RecordingLogger<AlertDispatcher>();
        var time = new FakeTimeProvider(Some.Utc);
        using var health = new StoreHealth("alerts.db", time, logger);
        var dispatcher = new AlertDispatcher(store, publisher, logger, health);

        Assert.Equal((false, true), dispatcher.Dispatch(Some.Raised()));
        Assert.Equal((false, true), dispatcher.Dispatch(Some.SeverityChanged()));
        Assert.Equal(2, dispatcher.PendingStoreCount);
        Assert.Single(logger.Entries, e => e.EventId.Id == 1340 && e.Level == LogLevel.Warning);

        // The store works again, but a new event queues behind the waiting ones until the retry (after 1 s) has run.
        store.Fail = false;
        Assert.Equal((false, true), dispatcher.Dispatch(Some.Cleared()));
        Assert.False(health.RetryIfDue());
        time.Advance(StoreHealth.FirstRetryDelay);
        Assert.True(health.RetryIfDue());

        Assert.Equal(0, dispatcher.PendingStoreCount);
        Assert.Single(logger.Entries, e => e.EventId.Id == 1342);
        Assert.Equal(["raised", "severity", "cleared"], store.Stored.Select(e => e.EventKind.ToText()));
        Assert.Equal(3, publisher.Topics.Count);
    }

    [Fact]
    public void Channel_faults_are_logged_without_line_numbers()
    {
        var logger = new RecordingLogger<AlertDispatcher>();
        var dispatcher = new AlertDispatcher(new RecordingStore(_steps), new RecordingPublisher(_steps), logger);
        var fault = new AlertRaised("room-a", FindingKey.ChannelFault("Cz", Core.Faults.ChannelFaultKind.Flat), AlertCategory.ChannelFault, Core.Attribution.SourceMatch.None,
            Core.Faults.ChannelFaultKind.Flat, 12, Some.Utc, 4, Some.Utc.AddSeconds(-8), double.NaN, double.NaN, 0.25, ["Cz"],
            "Cz is flat: check that the electrode is attached and its lead is plugged in.", AlertSeverity.Marked);

        dispatcher.Dispatch(fault);

        var entry = Assert.Single(logger.Entries);
        Assert.Equal(3003, entry.EventId.Id);
        Assert.DoesNotContain("NaN", entry.Message, StringComparison.Ordinal);
        Assert.Contains("fault/Cz/flat", entry.Message, StringComparison.Ordinal);
    }
}
