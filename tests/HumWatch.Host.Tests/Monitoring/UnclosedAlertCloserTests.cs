using HumWatch.TestSupport;
using System.Text.Json;
using HumWatch.Core.Alerts;
using HumWatch.Core.Findings;
using HumWatch.Core.Ledger;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Publishing;
using HumWatch.Host.Store;
using HumWatch.Host.Tests.Publishing.Support;
using Microsoft.Extensions.Time.Testing;
using HumWatch.Host.Tests.Store.Postgres;
using Xunit;

namespace HumWatch.Host.Tests.Monitoring;

/// <summary>Alerts an unclean stop left open, closed at the next start; every test on SQLite and on PostgreSQL.</summary>
[Collection(PostgresCollection.Name)]
public sealed class UnclosedAlertCloserTests(PostgresServer server) : IDisposable
{
    private StoreUnderTest? _db;

    // The restart comes two hours after the kill: the clear must not stretch over the time the service was away.
    private readonly FakeTimeProvider _time = new(Some.Utc.AddHours(2));

    public void Dispose() => _db?.Dispose();

    private HumWatchStore Open() => _db!.Open();

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void An_alert_a_kill_left_open_is_closed_at_the_last_watched_moment_with_reason_service_restarted(string provider)
    {
        _db = new StoreUnderTest(provider, server, _time);
        using (var killed = Open())
        {
            // room-a: raised, then severe, then the process died. room-b: raised and cleared before the kill.
            killed.Alerts.AppendAlert(Some.Raised());
            killed.Alerts.AppendAlert(Some.SeverityChanged());
            killed.Alerts.AppendAlert(Some.Raised("room-b"));
            killed.Alerts.AppendAlert(Some.Cleared("room-b"));

            // The ledger watched room-a until 09:15 + 52 s (Some.Row's minute starts at 09:15:00).
            killed.Ledger.AddMinuteRows([Some.Row("s1", 1, 52, 40, 22, 8, MinuteLedger.AllSourcesKey)]);
        }

        using var store = Open();
        var publisher = new RecordingPublisher();
        var closer = new UnclosedAlertCloser(store, new AlertDispatcher(store.Alerts, publisher, new RecordingLogger<AlertDispatcher>()), _time, new RecordingLogger<UnclosedAlertCloser>());

        Assert.Equal(1, closer.CloseAll());

        var lastWatched = new DateTimeOffset(2026, 3, 2, 9, 15, 52, TimeSpan.Zero);
        var cleared = store.Alerts.Between(Some.Utc.AddHours(-1), Some.Utc.AddHours(3), "room-a")[^1];
        Assert.Equal(AlertEventKind.Cleared, cleared.Event);
        Assert.Equal(AlertClearReason.ServiceRestarted, cleared.Reason);
        Assert.Equal(lastWatched, cleared.Utc);
        Assert.Equal(AlertSeverity.Severe, cleared.PeakSeverity); // the severity change's, not the raise's
        Assert.Equal(22, cleared.PeakUvRms!.Value, 9);
        Assert.Equal((lastWatched - Some.Raised().OnsetUtc).TotalSeconds, cleared.DurationSeconds!.Value, 3);

        // Subscribers hear it like any clear, with the reason spelled as the docs say.
        var message = Assert.Single(publisher.Published);
        Assert.Equal("clear/room-a", message.Topic);
        using var body = JsonDocument.Parse(message.Body);
        Assert.Equal("service restarted", body.RootElement.GetProperty("reason").GetString());
        Assert.Equal("mains/h1", body.RootElement.GetProperty("key").GetString());

        // A second start finds nothing left to close.
        Assert.Equal(0, closer.CloseAll());
        Assert.Single(publisher.Published);
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void Without_ledger_rows_the_clear_sits_at_the_alerts_last_event_and_never_after_now(string provider)
    {
        _db = new StoreUnderTest(provider, server, _time);
        using (var killed = Open())
        {
            killed.Alerts.AppendAlert(Some.Raised());
        }

        using var store = Open();
        var events = store.Alerts.Unclosed();
        var only = Assert.Single(events);
        var clear = UnclosedAlertCloser.ClearOf(only, monitoredUntil: null, _time.GetUtcNow());
        Assert.Equal(Some.Utc, clear.Utc);
        Assert.Equal(Some.Raised().StreamSeconds, clear.StreamSeconds, 9);
        Assert.Equal(AlertClearReason.ServiceRestarted, clear.Reason);

        // A ledger that claims a time beyond the clock (a wrong clock before the kill) is capped at now.
        var capped = UnclosedAlertCloser.ClearOf(only, _time.GetUtcNow().AddDays(1), _time.GetUtcNow());
        Assert.Equal(_time.GetUtcNow(), capped.Utc);
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void A_fault_alert_keeps_its_fault_kind_and_no_source(string provider)
    {
        _db = new StoreUnderTest(provider, server, _time);
        var key = FindingKey.ChannelFault("Cz", Core.Faults.ChannelFaultKind.Flat);
        using (var killed = Open())
        {
            killed.Alerts.AppendAlert(new AlertRaised("room-c", key, AlertCategory.ChannelFault, Core.Attribution.SourceMatch.None,
                Core.Faults.ChannelFaultKind.Flat, 12, Some.Utc, 4, Some.Utc.AddSeconds(-8), double.NaN, double.NaN, 0.25, ["Cz"],
                "Cz is flat: check that the electrode is attached and its lead is plugged in.", AlertSeverity.Marked));
        }

        using var store = Open();
        var clear = UnclosedAlertCloser.ClearOf(Assert.Single(store.Alerts.Unclosed()), null, _time.GetUtcNow());
        Assert.Equal(AlertCategory.ChannelFault, clear.Category);
        Assert.Equal(Core.Faults.ChannelFaultKind.Flat, clear.FaultKind);
        Assert.False(clear.Source.IsIdentified);
        Assert.Equal(key, clear.Key);
    }
}
