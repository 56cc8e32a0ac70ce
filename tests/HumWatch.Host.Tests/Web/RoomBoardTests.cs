using System.Text.Json;
using HumWatch.Host.Publishing;
using HumWatch.Host.Tests.Publishing.Support;
using HumWatch.Host.Web;
using Microsoft.Extensions.Logging.Abstractions;
using Microsoft.Extensions.Time.Testing;
using Xunit;

namespace HumWatch.Host.Tests.Web;

/// <summary>The room board folds the published messages into rooms; silence follows the service's clock (a fake one here).</summary>
public sealed class RoomBoardTests
{
    private readonly FakeTimeProvider _time = new(Some.Utc);

    [Fact]
    public void A_room_is_waiting_then_clean_then_affected_and_a_severity_change_keeps_the_hint_of_its_raise()
    {
        var board = Board();
        board.Offer(Messages.StatusKind, "room-a", Status(chunks: 4, frames: 0));
        Assert.Equal("waiting", State(board));

        board.Offer(Messages.StatusKind, "room-a", Status(chunks: 20, frames: 3));
        Assert.Equal("clean", State(board));

        Offer(board, Some.Raised());
        Offer(board, Some.SeverityChanged());
        var room = Room(board);
        Assert.Equal("affected", room.GetProperty("state").GetString());
        Assert.Equal("severe", room.GetProperty("severity").GetString());
        var alert = room.GetProperty("alerts").EnumerateArray().Single();
        Assert.Equal("severity", alert.GetProperty("event").GetString());
        Assert.Equal(22, alert.GetProperty("amplitudeUvRms").GetDouble());
        Assert.Equal(Some.Raised().Suggestion, alert.GetProperty("suggestion").GetString());
        Assert.Equal(Some.Raised().OnsetUtc, room.GetProperty("sinceUtc").GetDateTimeOffset());
        Assert.Equal("mains h1", alert.GetProperty("label").GetString());

        Offer(board, Some.Cleared());
        Assert.Equal("clean", State(board));
        Assert.Equal([new KeyValuePair<string, long>("mains", 1)], board.RaisedByKind());
    }

    [Fact]
    public void A_room_whose_counts_stop_moving_turns_silent_after_the_set_time_and_back_when_data_comes()
    {
        var board = Board();
        board.Offer(Messages.StatusKind, "room-a", Status(chunks: 20, frames: 3));
        Assert.NotNull(board.TakeChanges());

        // Status messages go on (the monitor is still there) but the counts stand still.
        for (var i = 0; i < 2; i++)
        {
            _time.Advance(TimeSpan.FromSeconds(10));
            board.Offer(Messages.StatusKind, "room-a", Status(chunks: 20, frames: 3));
        }

        _time.Advance(TimeSpan.FromSeconds(9.9));
        Assert.Equal("clean", State(board));
        _time.Advance(TimeSpan.FromSeconds(0.2));
        var changes = board.TakeChanges();
        Assert.Equal("silent", JsonDocument.Parse(changes!.Single().Json!).RootElement.GetProperty("state").GetString());

        // A clear because the stream ended says nothing about new data.
        Offer(board, Some.Raised() with { Utc = Some.Utc });
        Offer(board, Some.Cleared() with { Reason = Core.Alerts.AlertClearReason.StreamEnded });
        _time.Advance(TimeSpan.FromSeconds(30));
        Assert.Equal("silent", State(board));

        board.Offer(Messages.StatusKind, "room-a", Status(chunks: 22, frames: 4));
        Assert.Equal("clean", State(board));
        Assert.Equal(_time.GetUtcNow(), Room(board).GetProperty("lastDataUtc").GetDateTimeOffset());
    }

    [Fact]
    public void Rooms_from_the_store_are_silent_until_they_send_and_long_silent_rooms_are_forgotten()
    {
        var board = Board();
        board.Seed([("room-b", Some.Utc.AddMinutes(-5))]);
        Assert.Equal("silent", State(board, "room-b"));

        _time.Advance(RoomBoard.ForgetAfter);
        var changes = board.TakeChanges()!;
        Assert.Equal(("room-b", (byte[]?)null), changes.Single());
        Assert.Null(board.RoomJson("room-b"));
    }

    [Fact]
    public void A_message_that_cannot_be_read_leaves_the_room_as_it_was()
    {
        var board = Board();
        board.Offer(Messages.StatusKind, "room-a", Status(chunks: 20, frames: 3));
        board.Offer(Messages.AlertKind, "room-a", "{not json"u8.ToArray());
        Assert.Equal("clean", State(board));
    }

    [Fact]
    public void A_room_held_here_stays_ours_while_heard_and_yields_to_a_peer_once_silent_here()
    {
        var board = Board("lab-a");
        board.Offer(Messages.StatusKind, "room-a", Status(chunks: 20, frames: 3));
        var remote = new RemoteRoom("room-a", "lab-b", _time.GetUtcNow().AddSeconds(5), "{\"stream\":\"room-a\",\"instance\":\"lab-b\"}"u8.ToArray());
        board.SetRemote([remote, remote with { Stream = "room-b", Json = "{\"stream\":\"room-b\",\"instance\":\"lab-b\"}"u8.ToArray() }]);

        Assert.Equal("lab-a", Room(board).GetProperty("instance").GetString());
        Assert.Null(board.RemoteOwner("room-a"));
        Assert.Equal("lab-b", Room(board, "room-b").GetProperty("instance").GetString());
        Assert.Equal(["room-a", "room-b"], board.Snapshot().Select(j => JsonDocument.Parse(j).RootElement.GetProperty("stream").GetString()));

        // Silent here, and the peer saw it after our last data: the peer's room is shown.
        _time.Advance(TimeSpan.FromSeconds(31));
        Assert.Equal("lab-b", Room(board).GetProperty("instance").GetString());
        Assert.Equal("lab-b", board.RemoteOwner("room-a"));

        // The peer's rooms leave the board when the store no longer names them.
        board.TakeChanges();
        board.SetRemote([]);
        var changes = board.TakeChanges()!;
        Assert.Contains(("room-b", (byte[]?)null), changes.Select(c => (c.Stream, c.Json is null ? null : c.Json)));
        Assert.Equal("lab-a", Room(board).GetProperty("instance").GetString());
    }

    [Fact]
    public void Closing_a_stopped_peers_alert_does_not_add_its_room_here()
    {
        var board = Board("lab-a");
        Offer(board, Some.Cleared("room-c") with { Reason = Core.Alerts.AlertClearReason.InstanceStopped });
        Assert.Null(board.RoomJson("room-c"));

        // A room of its own it still clears as usual.
        board.Offer(Messages.StatusKind, "room-a", Status(chunks: 20, frames: 3));
        Offer(board, Some.Raised());
        Offer(board, Some.Cleared() with { Reason = Core.Alerts.AlertClearReason.InstanceStopped });
        Assert.Empty(Room(board).GetProperty("alerts").EnumerateArray());
    }

    private RoomBoard Board(string? instance = null) => new(new WebOptions { SilentAfterSeconds = 30 }, _time, NullLogger<RoomBoard>.Instance, instance);

    private byte[] Status(long chunks, long frames) =>
        Messages.For(new StatusMessage(Messages.Version, "room-a", _time.GetUtcNow(), frames, 0, 0, chunks, 0, 0, 0.5));

    private static void Offer(RoomBoard board, Core.Alerts.AlertEvent alertEvent)
    {
        var (kind, body) = Messages.For(alertEvent);
        board.Offer(kind, alertEvent.StreamId, body);
    }

    private static JsonElement Room(RoomBoard board, string stream = "room-a") => JsonDocument.Parse(board.RoomJson(stream)!).RootElement.Clone();

    private static string? State(RoomBoard board, string stream = "room-a") => Room(board, stream).GetProperty("state").GetString();
}
