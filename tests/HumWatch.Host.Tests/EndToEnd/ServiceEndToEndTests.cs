using System.Text;
using System.Text.Json;
using HumWatch.Core.Alerts;
using HumWatch.Core.Findings;
using HumWatch.Formats;
using HumWatch.Formats.Wire;
using HumWatch.Host.Ingest;
using HumWatch.Host.Tests.Ingest;
using HumWatch.Host.Tests.Ingest.Support;
using HumWatch.Simulation;
using Microsoft.Extensions.DependencyInjection;
using Xunit;

namespace HumWatch.Host.Tests.EndToEnd;

/// <summary>The whole service on loopback: sockets, analysis, alert lifecycle, store, inbox.</summary>
[Collection(IngestSocketCollection.Name)]
public sealed class ServiceEndToEndTests
{
    [Fact]
    public async Task A_pushed_stream_with_a_50_Hz_line_raises_a_mains_alert_and_clears_it_when_the_line_stops()
    {
        using var temp = new TempFolder();
        await using var service = await ServiceUnderTest.StartAsync(temp.Path, new Dictionary<string, string?> { ["Instance:Name"] = "bench-east" });
        using var messages = new MessageCollector(service.PublishEndpoint);
        using var pusher = new RoomPusher(service.IngestEndpoint);
        var room = Rooms.WithMains("room-e2e", onSeconds: 10, offSeconds: 40);

        await PushFirstAndWaitForStatus(pusher, messages, "room-e2e", room);
        pusher.Push("room-e2e", room, seconds: 69);

        var raised = await messages.WaitForAsync((t, b) => t == "alert/room-e2e" && Text(b, "source") == "mains" && b.GetProperty("harmonic").GetInt32() == 1, "the mains alert");
        var cleared = await messages.WaitForAsync((t, b) => t == "clear/room-e2e" && Text(b, "key") == Text(raised.Body, "key"), "the mains clear");

        Assert.Equal(1, raised.Body.GetProperty("v").GetInt32());
        Assert.InRange(raised.Body.GetProperty("amplitudeUvRms").GetDouble(), 8 * 0.85, 8 * 1.15); // simulated 8 µV RMS on every channel
        Assert.Equal(1.0, raised.Body.GetProperty("channelShare").GetDouble(), 3);
        Assert.Equal("subsided", Text(cleared.Body, "reason"));

        // A subscriber of several instances tells them apart by the body alone.
        var status = await messages.WaitForAsync((t, _) => t == "status/room-e2e", "a status");
        Assert.All([raised.Body, cleared.Body, status.Body], body => Assert.Equal("bench-east", Text(body, "instance")));

        // Raised while the line was on (10–40 s), cleared after it went off.
        Assert.InRange(raised.Body.GetProperty("streamSeconds").GetDouble(), 10, 40);
        Assert.InRange(cleared.Body.GetProperty("streamSeconds").GetDouble(), 40, 70);

        // Committed to the store before it was published.
        var stored = service.Store.Alerts.Between(Rooms.Start, Rooms.Start.AddHours(1), "room-e2e");
        Assert.Contains(stored, a => a.Event == AlertEventKind.Raised && a.Key.ToString() == Text(raised.Body, "key"));
        Assert.Contains(stored, a => a.Event == AlertEventKind.Cleared && a.Key.ToString() == Text(raised.Body, "key"));
    }

    [Fact]
    public async Task Bad_messages_are_rejected_with_their_reason_while_a_good_stream_on_the_same_socket_keeps_its_alerts()
    {
        using var temp = new TempFolder();
        await using var service = await ServiceUnderTest.StartAsync(temp.Path, new Dictionary<string, string?> { ["Ingest:MaxMessageBytes"] = "1048576" });
        using var messages = new MessageCollector(service.PublishEndpoint);
        using var pusher = new RoomPusher(service.IngestEndpoint);
        var room = Rooms.WithMains("good-room", onSeconds: 0, offSeconds: null);
        await PushFirstAndWaitForStatus(pusher, messages, "good-room", room);

        var layout = room.Layout;
        var header = ChunkWireCodec.EncodeHeader("bad-room", layout, 0, null);
        var fourSamples = new byte[4 * layout.ChannelCount * 4];
        var nan = new byte[fourSamples.Length];
        BitConverter.TryWriteBytes(nan.AsSpan(8), float.NaN);
        var unknownVersion = Encoding.UTF8.GetBytes("{\"v\":7,\"stream\":\"bad-room\",\"fs\":250,\"channels\":[\"A\"],\"unit\":\"uV\",\"index\":0}");
        for (var i = 0; i < 20; i++)
        {
            pusher.Push("good-room", room, seconds: 1);
            switch (i)
            {
                case 1: pusher.SendRaw(Encoding.UTF8.GetBytes("{not json"), fourSamples); break;
                case 3: pusher.SendRaw(header, fourSamples, fourSamples); break;
                case 5: pusher.SendRaw(header, new byte[7]); break;
                case 7: pusher.SendRaw(header, nan); break;
                case 9: pusher.SendRaw(unknownVersion, new byte[4]); break;
                case 11: pusher.SendRaw(header, new byte[2 * 1024 * 1024]); break;
            }
        }

        await messages.WaitForAsync((t, b) => t == "alert/good-room" && Text(b, "source") == "mains", "the good stream's mains alert");
        var counters = service.Host.Services.GetRequiredService<IngestCounters>();
        await IngestHarness.WaitUntilAsync(() => Rejected(counters) >= 6, "all six bad messages to be counted");
        Assert.Equal(1, counters.Get("bad-room")?.RejectedFor(WireRejectReason.WrongFrameCount));
        Assert.Equal(1, counters.Get("bad-room")?.RejectedFor(WireRejectReason.SampleLength));
        Assert.Equal(1, counters.Get("bad-room")?.RejectedFor(WireRejectReason.NonFiniteSample));
        Assert.Equal(1, counters.Get("bad-room")?.RejectedFor(WireRejectReason.TooLarge));
        Assert.Equal(0, counters.Get("good-room")?.RejectedTotal);
        // The alert can arrive before the last good chunks are taken in; wait for them (bounded) rather than race.
        await IngestHarness.WaitUntilAsync(() => counters.Get("good-room")?.Accepted >= 41, "every good chunk accepted");
        Assert.Equal(0, counters.Get("good-room")?.Dropped);
    }

    [Fact]
    public async Task A_recording_dropped_in_the_inbox_is_checked_archived_with_its_report_and_alerts()
    {
        using var temp = new TempFolder();
        await using var service = await ServiceUnderTest.StartAsync(temp.Path);
        using var messages = new MessageCollector(service.PublishEndpoint);
        var folder = Path.Combine(service.Inbox, "lab-3");
        Directory.CreateDirectory(folder);
        WriteRecording(Path.Combine(folder, "session-a.edf"), Rooms.WithMains("lab-3", onSeconds: 0, offSeconds: null), seconds: 40);

        var archived = Path.Combine(service.Archive, "lab-3", "session-a.edf");
        await IngestHarness.WaitUntilAsync(() => File.Exists(archived) && File.Exists(archived + ".report.json"), "the file and its report in the archive", 60);

        Assert.False(File.Exists(Path.Combine(folder, "session-a.edf")));
        using var report = JsonDocument.Parse(File.ReadAllText(archived + ".report.json"));
        Assert.Equal("fail", Text(report.RootElement, "verdict"));
        var line = report.RootElement.GetProperty("lines").EnumerateArray().First(l => Text(l, "source") == "mains" && l.GetProperty("harmonic").GetInt32() == 1);
        Assert.Equal(50.0, line.GetProperty("frequencyHz").GetDouble(), 0.1);
        var alerts = service.Store.Alerts.Between(Rooms.Start.AddYears(-30), Rooms.Start.AddYears(30), "lab-3");
        Assert.Contains(alerts, a => a.Event == AlertEventKind.Raised && a.Kind == FindingCategory.Mains);
        Assert.Contains(alerts, a => a.Event == AlertEventKind.Cleared && a.Reason == AlertClearReason.StreamEnded);
    }

    [Fact]
    public async Task An_unreadable_file_goes_to_rejected_with_a_reason_and_the_service_keeps_running()
    {
        using var temp = new TempFolder();
        await using var service = await ServiceUnderTest.StartAsync(temp.Path);
        Directory.CreateDirectory(service.Inbox);
        await File.WriteAllBytesAsync(Path.Combine(service.Inbox, "noise.edf"), Enumerable.Range(0, 3000).Select(i => (byte)(i * 37)).ToArray());

        var rejected = Path.Combine(service.Rejected, "noise.edf");
        await IngestHarness.WaitUntilAsync(() => File.Exists(rejected) && File.Exists(rejected + ".reason.txt"), "the file in rejected/ with its reason", 60);

        var reason = await File.ReadAllTextAsync(rejected + ".reason.txt");
        Assert.Contains("noise.edf", reason, StringComparison.Ordinal);

        // Still working: a good file after the bad one is archived.
        WriteRecording(Path.Combine(service.Inbox, "after.edf"), Rooms.Quiet("after"), seconds: 20);
        await IngestHarness.WaitUntilAsync(() => File.Exists(Path.Combine(service.Archive, "after", "after.edf")), "the next file archived", 60);
    }

    [Fact]
    public async Task A_restart_mid_stream_loses_no_alert_and_does_not_check_the_same_file_twice()
    {
        using var temp = new TempFolder();
        var room = Rooms.WithMains("room-r", onSeconds: 2, offSeconds: null);
        var recording = Path.Combine(temp.Path, "copy-source.edf");
        WriteRecording(recording, Rooms.WithMains("ward-7", onSeconds: 0, offSeconds: null, seed: 77), seconds: 30);
        string firstKey;

        await using (var first = await ServiceUnderTest.StartAsync(temp.Path))
        {
            using var messages = new MessageCollector(first.PublishEndpoint);
            using var pusher = new RoomPusher(first.IngestEndpoint);
            await PushFirstAndWaitForStatus(pusher, messages, "room-r", room);
            pusher.Push("room-r", room, seconds: 30);
            var raised = await messages.WaitForAsync((t, b) => t == "alert/room-r" && Text(b, "source") == "mains", "the first session's alert");
            firstKey = Text(raised.Body, "key")!;

            Directory.CreateDirectory(first.Inbox);
            File.Copy(recording, Path.Combine(first.Inbox, "ward-7.edf"));
            await IngestHarness.WaitUntilAsync(() => File.Exists(Path.Combine(first.Archive, "ward-7", "ward-7.edf")), "the file archived", 60);
        }

        await using var second = await ServiceUnderTest.StartAsync(temp.Path);
        var before = second.Store.Alerts.Between(Rooms.Start.AddYears(-30), Rooms.Start.AddYears(30));

        // Nothing raised before the restart is lost.
        Assert.Contains(before, a => a.Stream == "room-r" && a.Event == AlertEventKind.Raised && a.Key.ToString() == firstKey);
        var fileRaises = before.Count(a => a.Stream == "ward-7" && a.Event == AlertEventKind.Raised);
        Assert.True(fileRaises > 0);

        // The same content dropped again is moved aside, not checked again.
        File.Copy(recording, Path.Combine(second.Inbox, "ward-7.edf"));
        await IngestHarness.WaitUntilAsync(() => !File.Exists(Path.Combine(second.Inbox, "ward-7.edf")), "the repeated file to leave the inbox", 60);
        Assert.Equal(2, Directory.GetFiles(Path.Combine(second.Archive, "ward-7"), "ward-7*.edf").Length);
        Assert.Single(Directory.GetFiles(Path.Combine(second.Archive, "ward-7"), "*.report.json"));

        // The stream goes on after the restart and is watched again.
        using (var messages = new MessageCollector(second.PublishEndpoint))
        using (var pusher = new RoomPusher(second.IngestEndpoint))
        {
            await PushFirstAndWaitForStatus(pusher, messages, "room-r", room);
            pusher.Push("room-r", room, seconds: 20);
            await messages.WaitForAsync((t, b) => t == "alert/room-r" && Text(b, "source") == "mains", "the alert after the restart");
        }

        var after = second.Store.Alerts.Between(Rooms.Start.AddYears(-30), Rooms.Start.AddYears(30));
        Assert.Equal(fileRaises, after.Count(a => a.Stream == "ward-7" && a.Event == AlertEventKind.Raised));
    }

    internal static async Task PushFirstAndWaitForStatus(RoomPusher pusher, MessageCollector messages, string streamId, RoomSimulator room)
    {
        // Status messages only flow once the stream exists, and only reach us once the subscription is live:
        // keep sending a little until the first status arrives (a bounded handshake, not a sleep).
        var deadline = DateTime.UtcNow.AddSeconds(30);
        while (DateTime.UtcNow < deadline)
        {
            pusher.Push(streamId, room, seconds: 0.5);
            try
            {
                await messages.WaitForAsync((t, _) => t == $"status/{streamId}", "the first status", timeoutSeconds: 2);
                return;
            }
            catch (TimeoutException)
            {
                // Not yet subscribed; try again.
            }
        }

        throw new TimeoutException($"No status for {streamId}: the subscription never went live.");
    }

    internal static void WriteRecording(string path, RoomSimulator room, int seconds)
    {
        // Written under a temporary name and renamed, as acquisition software should, so the inbox never sees half a file.
        var partial = path + ".part";
        var perRecord = (int)room.Layout.SampleRateHz;
        var options = new EdfWriterOptions
        {
            Kind = EdfFileKind.EdfPlusC,
            StartLocal = new DateTime(2026, 5, 4, 11, 0, 0, DateTimeKind.Unspecified),
            Signals = [.. room.Layout.Channels.Select(c => EdfWriterSignal.Edf16(c.Label, perRecord))],
        };
        using (var writer = new EdfWriter(partial, options))
        {
            for (var r = 0; r < seconds; r++)
            {
                var chunk = room.Next(perRecord);
                writer.WriteRecord(chunk.SamplesUv.Slice(0, perRecord * room.Layout.ChannelCount));
            }
        }

        File.Move(partial, path);
    }

    private static long Rejected(IngestCounters counters) =>
        counters.Snapshot().Sum(s => s.RejectedTotal) + counters.UnattributedRejections().Sum(o => o.Rejected.Values.Sum());

    internal static string? Text(JsonElement json, string name) =>
        json.TryGetProperty(name, out var value) && value.ValueKind == JsonValueKind.String ? value.GetString() : null;
}
