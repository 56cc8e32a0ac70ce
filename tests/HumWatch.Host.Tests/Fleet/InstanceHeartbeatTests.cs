using HumWatch.TestSupport;
using System.Text.Json;
using HumWatch.Core.Alerts;
using HumWatch.Host.Configuration;
using HumWatch.Host.Fleet;
using HumWatch.Host.Monitoring;
using HumWatch.Host.Publishing;
using HumWatch.Host.Store;
using HumWatch.Host.Tests.Publishing.Support;
using Microsoft.Extensions.Options;
using Microsoft.Extensions.Time.Testing;
using HumWatch.Host.Tests.Store.Postgres;
using Xunit;

namespace HumWatch.Host.Tests.Fleet;

/// <summary>
/// Several instances on one store, each with its own store object (connection), on one fake clock; every test on
/// SQLite and on PostgreSQL.
/// </summary>
[Collection(PostgresCollection.Name)]
public sealed class InstanceHeartbeatTests(PostgresServer server) : IDisposable
{
    private StoreUnderTest? _db;
    private readonly FakeTimeProvider _time = new(Some.Utc.AddMinutes(5));
    private readonly List<Instance> _open = [];

    public void Dispose()
    {
        foreach (var instance in _open)
        {
            instance.Store.Dispose();
        }

        _db?.Dispose();
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void A_fresh_instance_registers_live_and_closes_what_an_older_build_left_open_once_per_store(string provider)
    {
        _db = new StoreUnderTest(provider, server, _time);
        // An older build (no instance names) was killed with an alert open.
        using (var older = _db.Open())
        {
            older.Alerts.AppendAlert(Some.Raised("room-old"));
        }

        var a = Start("lab-a");
        Assert.Equal(InstanceStart.Fresh, a.StartedAs);
        var row = a.Store.Instances.Find("lab-a")!;
        Assert.Equal(_time.GetUtcNow(), row.StartedUtc);
        Assert.Equal(_time.GetUtcNow(), row.HeartbeatUtc);
        Assert.Null(row.StoppedUtc);
        Assert.Equal(InstanceHeartbeat.BuildVersion, row.BuildVersion);

        var clear = Assert.Single(a.Publisher.Published);
        Assert.Equal("clear/room-old", clear.Topic);
        Assert.Equal("service restarted", Reason(clear.Body));
        Assert.Equal("lab-a", a.Store.Alerts.Between(Some.Utc.AddHours(-1), Some.Utc.AddHours(1), "room-old")[^1].Instance);

        // A second instance starting on the same store leaves the older build's alerts alone: they are closed.
        var b = Start("lab-b");
        Assert.Equal(InstanceStart.Fresh, b.StartedAs);
        Assert.Empty(b.Publisher.Published);
        Assert.Empty(b.Store.Alerts.Unclosed());
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void An_unclean_restart_closes_only_its_own_alerts_not_those_of_a_live_peer(string provider)
    {
        _db = new StoreUnderTest(provider, server, _time);
        var a = Start("lab-a");
        var b = Start("lab-b");
        a.Store.Alerts.AppendAlert(Some.Raised("room-a"));
        b.Store.Alerts.AppendAlert(Some.Raised("room-b"));

        // lab-a is killed: no stop mark. lab-b beats on.
        Kill(a);
        _time.Advance(TimeSpan.FromSeconds(5));
        b.Heartbeat.Beat();

        var again = Start("lab-a");
        Assert.Equal(InstanceStart.Unclean, again.StartedAs);
        var clear = Assert.Single(again.Publisher.Published);
        Assert.Equal("clear/room-a", clear.Topic);
        Assert.Equal("service restarted", Reason(clear.Body));

        var open = Assert.Single(again.Store.Alerts.Unclosed());
        Assert.Equal("room-b", open[0].Stream);
        Assert.Equal("lab-b", open[0].Instance);
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public async Task A_stale_peer_is_swept_by_exactly_one_of_two_racing_instances(string provider)
    {
        _db = new StoreUnderTest(provider, server, _time);
        var a = Start("lab-a");
        var b = Start("lab-b");
        var c = Start("lab-c");
        c.Store.Alerts.AppendAlert(Some.Raised("room-c"));
        c.Store.Alerts.AppendAlert(Some.Raised("room-d"));
        var lastBeatOfC = _time.GetUtcNow();
        Kill(c);

        // 61 s later (StaleAfterSeconds 60): lab-a and lab-b are fresh, lab-c is stale.
        _time.Advance(TimeSpan.FromSeconds(61));
        Assert.True(a.Store.Instances.Beat("lab-a", _time.GetUtcNow()));
        Assert.True(b.Store.Instances.Beat("lab-b", _time.GetUtcNow()));
        var now = _time.GetUtcNow();

        // Both claim at once, each on its own connection: the database lets one update win.
        var won = await Task.WhenAll(Task.Run(() => a.Heartbeat.Sweep(now)), Task.Run(() => b.Heartbeat.Sweep(now)));
        Assert.Equal(1, won.Sum());

        var winner = won[0] == 1 ? a : b;
        var loser = won[0] == 1 ? b : a;
        Assert.Equal(["clear/room-c", "clear/room-d"], winner.Publisher.Topics.Order(StringComparer.Ordinal));
        Assert.Empty(loser.Publisher.Published);
        Assert.All(winner.Publisher.Published, m => Assert.Equal("instance stopped", Reason(m.Body)));

        // Stored once each, at the dead instance's last heartbeat at the latest, written by the winner.
        var clears = a.Store.Alerts.Between(Some.Utc.AddHours(-1), now.AddHours(1)).Where(e => e.Event == AlertEventKind.Cleared).ToList();
        Assert.Equal(2, clears.Count);
        Assert.All(clears, e => Assert.Equal(AlertClearReason.InstanceStopped, e.Reason));
        Assert.All(clears, e => Assert.True(e.Utc <= lastBeatOfC, $"clear at {e.Utc:o} after the last heartbeat {lastBeatOfC:o}"));
        Assert.All(clears, e => Assert.Equal(winner.Name, e.Instance));

        var row = a.Store.Instances.Find("lab-c")!;
        Assert.Equal(now, row.StoppedUtc);
        Assert.Equal(InstanceTable.SweptStop, row.StopReason);
        Assert.Equal(winner.Name, row.SweptBy);

        // Later beats find nothing more to claim.
        _time.Advance(TimeSpan.FromSeconds(10));
        Assert.Equal(0, a.Heartbeat.Sweep(_time.GetUtcNow()));
        Assert.Equal(0, b.Heartbeat.Sweep(_time.GetUtcNow()));
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void A_swept_instance_that_comes_back_does_not_close_its_alerts_again(string provider)
    {
        _db = new StoreUnderTest(provider, server, _time);
        var a = Start("lab-a");
        var c = Start("lab-c");
        c.Store.Alerts.AppendAlert(Some.Raised("room-c"));
        Kill(c);
        _time.Advance(TimeSpan.FromSeconds(90));
        a.Heartbeat.Beat();
        Assert.Single(a.Publisher.Published);

        var back = Start("lab-c");
        Assert.Equal(InstanceStart.Swept, back.StartedAs);
        Assert.Empty(back.Publisher.Published);
        Assert.Single(back.Store.Alerts.Between(Some.Utc.AddHours(-1), _time.GetUtcNow(), "room-c"), e => e.Event == AlertEventKind.Cleared);

        // Live again: not stale, not stopped, and a peer's next beat leaves it be.
        var row = back.Store.Instances.Find("lab-c")!;
        Assert.Null(row.StoppedUtc);
        Assert.Null(row.SweptBy);
        _time.Advance(TimeSpan.FromSeconds(10));
        back.Heartbeat.Beat();
        a.Heartbeat.Beat();
        Assert.Single(a.Publisher.Published);
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void A_clean_stop_is_never_swept(string provider)
    {
        _db = new StoreUnderTest(provider, server, _time);
        var a = Start("lab-a");
        var b = Start("lab-b");
        b.Heartbeat.Stop();
        var stoppedAt = _time.GetUtcNow();

        _time.Advance(TimeSpan.FromMinutes(10));
        a.Heartbeat.Beat();
        Assert.Equal(0, a.Heartbeat.Sweep(_time.GetUtcNow()));

        var row = a.Store.Instances.Find("lab-b")!;
        Assert.Equal(stoppedAt, row.StoppedUtc);
        Assert.Equal(InstanceTable.CleanStop, row.StopReason);
        Assert.Null(row.SweptBy);
        Assert.Equal(InstanceStart.Clean, Start("lab-b").StartedAs);
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void Streams_seen_between_beats_are_stored_once_per_beat_with_their_owner_and_data_hour(string provider)
    {
        _db = new StoreUnderTest(provider, server, _time);
        var a = Start("lab-a");
        var b = Start("lab-b");
        for (var i = 0; i < 50; i++)
        {
            a.Sightings.Seen("room-a", Some.Utc.AddSeconds(2 * i));
        }

        a.Sightings.Seen("room-a", Some.Utc.AddHours(1)); // a replayed file reaches the next hour within the same beat
        b.Sightings.Seen("room-b", Some.Utc);
        a.Heartbeat.Beat();
        _time.Advance(TimeSpan.FromSeconds(10));
        b.Heartbeat.Beat();

        var owners = a.Store.StreamOwners.Latest(_time.GetUtcNow().AddHours(-1));
        Assert.Equal([("room-a", "lab-a"), ("room-b", "lab-b")], owners.Select(o => (o.Stream, o.Instance)));
        Assert.Equal(_time.GetUtcNow().AddSeconds(-10), owners[0].LastSeenUtc);

        // The room moves to lab-b: it is the owner now, and the day names both.
        b.Sightings.Seen("room-a", Some.Utc.AddHours(2));
        _time.Advance(TimeSpan.FromSeconds(10));
        b.Heartbeat.Beat();
        Assert.Equal("lab-b", a.Store.StreamOwners.Latest(_time.GetUtcNow().AddHours(-1))[0].Instance);
        var day = (Some.Utc.Date, Some.Utc.Date.AddDays(1));
        Assert.Equal(["lab-a", "lab-b"], a.Store.StreamOwners.InstancesBetween("room-a", new DateTimeOffset(day.Item1, TimeSpan.Zero), new DateTimeOffset(day.Item2, TimeSpan.Zero)));
        Assert.Equal(["lab-a"], a.Store.StreamOwners.InstancesBetween("room-a", Some.Utc.AddMinutes(-15), Some.Utc.AddMinutes(15)));
        Assert.Empty(a.Store.StreamOwners.InstancesBetween("room-a", Some.Utc.AddDays(1), Some.Utc.AddDays(2)));
    }

    private Instance Start(string name)
    {
        var store = _db!.Open(name);
        var publisher = new RecordingPublisher();
        var sink = new AlertDispatcher(store.Alerts, publisher, new RecordingLogger<AlertDispatcher>());
        var closer = new UnclosedAlertCloser(store, sink, _time, new RecordingLogger<UnclosedAlertCloser>());
        var sightings = new StreamSightings(_time);
        var options = Options.Create(new InstanceOptions { Name = name, HeartbeatSeconds = 10, StaleAfterSeconds = 60 });
        var heartbeat = new InstanceHeartbeat(store, closer, sightings, options, _time, new RecordingLogger<InstanceHeartbeat>());
        var instance = new Instance(name, store, publisher, sightings, heartbeat, heartbeat.Start() ?? throw new InvalidOperationException("the store refused the start"));
        _open.Add(instance);
        return instance;
    }

    /// <summary>Gone without a stop mark, as after kill -9.</summary>
    private void Kill(Instance instance)
    {
        instance.Store.Dispose();
        _open.Remove(instance);
    }

    private static string? Reason(byte[] body)
    {
        using var document = JsonDocument.Parse(body);
        return document.RootElement.GetProperty("reason").GetString();
    }

    private sealed record Instance(string Name, HumWatchStore Store, RecordingPublisher Publisher, StreamSightings Sightings, InstanceHeartbeat Heartbeat, InstanceStart StartedAs);
}
