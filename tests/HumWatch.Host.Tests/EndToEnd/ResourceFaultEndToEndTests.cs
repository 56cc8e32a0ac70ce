using System.Globalization;
using System.Text.Json;
using HumWatch.Core.Alerts;
using HumWatch.Host.Tests.Ingest;
using Microsoft.Data.Sqlite;
using Xunit;

namespace HumWatch.Host.Tests.EndToEnd;

/// <summary>The whole service on loopback while its store is locked and while its log and inbox folders are removed.</summary>
[Collection(IngestSocketCollection.Name)]
public sealed class ResourceFaultEndToEndTests
{
    [Fact]
    public async Task A_store_locked_by_another_connection_while_the_service_runs_shows_in_the_status_and_every_alert_is_stored_once_after()
    {
        using var temp = new TempFolder();
        await using var service = await ServiceUnderTest.StartAsync(temp.Path, new Dictionary<string, string?> { ["Store:BusyTimeoutMs"] = "200" });
        using var messages = new MessageCollector(service.PublishEndpoint);
        using var pusher = new RoomPusher(service.IngestEndpoint);
        var room = Rooms.WithMains("room-lock", onSeconds: 10, offSeconds: 40);
        await ServiceEndToEndTests.PushFirstAndWaitForStatus(pusher, messages, "room-lock", room);

        // Another connection holds a write transaction (SQLite docs: BEGIN EXCLUSIVE), as a backup tool or a second
        // program on the same file might, for as long as the test needs.
        using var other = new SqliteConnection($"Data Source={service.Store.FullPath};Pooling=False");
        other.Open();
        Execute(other, "BEGIN EXCLUSIVE");
        pusher.Push("room-lock", room, seconds: 69);

        // Analysis and publishing go on: the episode is raised and cleared for subscribers, and the status says why
        // the store has not got it.
        var raised = await messages.WaitForAsync((t, b) => t == "alert/room-lock" && Text(b, "source") == "mains", "the mains alert");
        await messages.WaitForAsync((t, b) => t == "clear/room-lock" && Text(b, "key") == Text(raised.Body, "key"), "the mains clear");
        var locked = await messages.WaitForAsync(
            (t, b) => t == "status/room-lock" && Store(b) is { } s && Text(s, "state") == "locked" && s.GetProperty("deferred").GetInt32() > 0,
            "a status showing the locked store");
        Assert.Contains(service.Store.FullPath, Text(Store(locked.Body)!.Value, "error"), StringComparison.Ordinal);

        var released = DateTimeOffset.UtcNow;
        Execute(other, "COMMIT");
        await messages.WaitForAsync(
            (t, b) => t == "status/room-lock" && Utc(b) > released && Store(b) is { } s && Text(s, "state") == "ok" && s.GetProperty("deferred").GetInt32() == 0,
            "a status showing the store ok again with nothing waiting");

        var published = messages.Messages
            .Where(m => m.Topic is "alert/room-lock" or "clear/room-lock")
            .Select(m => (Key: Text(m.Body, "key")!, Event: Text(m.Body, "event") ?? "cleared", UtcMs: Utc(m.Body).ToUnixTimeMilliseconds()))
            .Order()
            .ToList();
        var stored = service.Store.Alerts.Between(Rooms.Start, Rooms.Start.AddHours(1), "room-lock")
            .Select(a => (Key: a.Key.ToString(), Event: a.Event.ToText(), UtcMs: a.Utc.ToUnixTimeMilliseconds()))
            .Order()
            .ToList();
        Assert.Equal(published, stored);
        Assert.Contains(ServiceUnderTest.LogLines(Path.Combine(temp.Path, "logs")), l => l.Contains("is locked:", StringComparison.Ordinal));
        Assert.Contains(ServiceUnderTest.LogLines(Path.Combine(temp.Path, "logs")), l => l.Contains("takes writes again", StringComparison.Ordinal));
    }

    [Fact]
    public async Task Log_and_inbox_folders_removed_while_the_service_runs_are_created_again_shown_in_the_status_and_used()
    {
        using var temp = new TempFolder();
        await using var service = await ServiceUnderTest.StartAsync(temp.Path);
        using var messages = new MessageCollector(service.PublishEndpoint);
        using var pusher = new RoomPusher(service.IngestEndpoint);
        var room = Rooms.Quiet("room-dirs");
        await ServiceEndToEndTests.PushFirstAndWaitForStatus(pusher, messages, "room-dirs", room);
        var logs = Path.Combine(temp.Path, "logs");

        Directory.Delete(logs, recursive: true);
        Directory.Delete(service.Inbox, recursive: true);
        var deadline = DateTime.UtcNow.AddSeconds(30);
        while (DateTime.UtcNow < deadline && !(Directory.Exists(logs) && Directory.Exists(service.Inbox)))
        {
            pusher.Push("room-dirs", room, seconds: 0.5);
            await Task.Delay(100);
        }

        pusher.Push("room-dirs", room, seconds: 0.5);
        var status = await messages.WaitForAsync(
            (t, b) => t == "status/room-dirs" && Recreated(b, "logFolder") >= 1 && Recreated(b, "inboxFolder") >= 1,
            "a status counting both folders created again");
        Assert.Equal("ok", Text(status.Body.GetProperty("logFolder"), "state"));
        Assert.Equal("ok", Text(status.Body.GetProperty("inboxFolder"), "state"));

        // The recreated inbox is watched: a file dropped there is checked and archived.
        ServiceEndToEndTests.WriteRecording(Path.Combine(service.Inbox, "bay-e2e.edf"), Rooms.WithMains("bay-e2e", onSeconds: 0, offSeconds: null), seconds: 30);
        var archived = Path.Combine(service.Archive, "bay-e2e", "bay-e2e.edf");
        deadline = DateTime.UtcNow.AddSeconds(60);
        while (DateTime.UtcNow < deadline && !File.Exists(archived))
        {
            await Task.Delay(100);
        }

        Assert.True(File.Exists(archived), "the file dropped into the recreated inbox was not archived");

        // And the log files in the recreated folder carry the lines written since.
        var lines = ServiceUnderTest.LogLines(logs);
        Assert.Contains(lines, l => l.Contains($"The log folder {logs} was removed while running", StringComparison.Ordinal));
        Assert.Contains(lines, l => l.Contains("checked as stream bay-e2e", StringComparison.Ordinal));
    }

    private static void Execute(SqliteConnection connection, string sql)
    {
        using var command = connection.CreateCommand();
        command.CommandText = sql;
        command.ExecuteNonQuery();
    }

    private static JsonElement? Store(JsonElement body) =>
        body.TryGetProperty("store", out var store) && store.ValueKind == JsonValueKind.Object ? store : null;

    private static int Recreated(JsonElement body, string folder) =>
        body.TryGetProperty(folder, out var state) && state.ValueKind == JsonValueKind.Object ? state.GetProperty("recreated").GetInt32() : 0;

    private static DateTimeOffset Utc(JsonElement body) => DateTimeOffset.Parse(Text(body, "utc")!, CultureInfo.InvariantCulture);

    private static string? Text(JsonElement json, string name) => ServiceEndToEndTests.Text(json, name);
}
