using System.Globalization;
using System.Net;
using System.Text;
using System.Text.Json;
using HumWatch.Core.Reporting;
using HumWatch.Host.Summaries;
using HumWatch.Host.Tests.EndToEnd;
using HumWatch.Host.Tests.Web.Support;
using Microsoft.Extensions.DependencyInjection;
using Xunit;

namespace HumWatch.Host.Tests.Web;

/// <summary>The API under /api/v1/, the day sheets' files and the event stream, over real HTTP against the real service.</summary>
[Collection(LivePageCollection.Name)]
public sealed class WebApiTests
{
    private const string Since = "since=2026-01-01T00:00:00Z";

    [Fact]
    public async Task Rooms_carry_the_published_messages_with_their_field_names_and_values()
    {
        using var folder = new TempFolder();
        await using var page = await LivePage.StartAsync(folder.Path);
        using var messages = new MessageCollector(page.Service.PublishEndpoint);
        using var pusher = new RoomPusher(page.Service.IngestEndpoint);
        pusher.Push("room-a", Rooms.WithMains("room-a", onSeconds: 0, offSeconds: null), seconds: 30);
        pusher.Push("room-b", Rooms.Quiet("room-b"), seconds: 30);

        var rooms = await page.WaitForJsonAsync(
            "/api/v1/rooms",
            r => LivePage.Room(r, "room-a") is { } a && a.GetProperty("state").GetString() == "affected" && a.GetProperty("status").ValueKind == JsonValueKind.Object,
            "room-a affected, with a status");
        var raised = await messages.WaitForAsync((t, b) => t == "alert/room-a" && b.GetProperty("key").GetString() == "mains/h1", "the mains raise");
        var roomA = LivePage.Room(rooms, "room-a")!.Value;
        var alert = roomA.GetProperty("alerts").EnumerateArray().Single(a => a.GetProperty("key").GetString() == "mains/h1");

        // The raise as published, field for field, with the key's label added (the spelling of the day sheets).
        foreach (var field in raised.Body.EnumerateObject())
        {
            Assert.True(alert.TryGetProperty(field.Name, out var value), $"room alert lacks the published field {field.Name}");
            if (raised.Body.GetProperty("event").GetString() == alert.GetProperty("event").GetString())
            {
                Assert.Equal(field.Value.GetRawText(), value.GetRawText());
            }
        }

        Assert.Equal("mains h1", alert.GetProperty("label").GetString());
        Assert.Equal(SafetyNotice.Text, alert.GetProperty("caution").GetString());

        // The status object is the latest status message of the room, under the same names.
        var status = (await messages.WaitForAsync((t, _) => t == "status/room-a", "a status of room-a")).Body;
        Assert.Equal(status.EnumerateObject().Select(p => p.Name).Order(), roomA.GetProperty("status").EnumerateObject().Select(p => p.Name).Order());
        Assert.True(roomA.GetProperty("status").TryGetProperty("mainsEstimateHz", out _));

        var one = await page.GetJsonAsync("/api/v1/rooms/room-b");
        Assert.Equal("room-b", one.GetProperty("stream").GetString());
        Assert.Equal("clean", one.GetProperty("state").GetString());
        Assert.Empty(one.GetProperty("alerts").EnumerateArray());
        using var missing = await page.Http.GetAsync("/api/v1/rooms/no-such-room");
        Assert.Equal(HttpStatusCode.NotFound, missing.StatusCode);
        Assert.Contains("no-such-room", await missing.Content.ReadAsStringAsync(), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Alerts_come_from_the_store_filtered_by_since_stream_and_kind()
    {
        using var folder = new TempFolder();
        await using var page = await LivePage.StartAsync(folder.Path);
        using var messages = new MessageCollector(page.Service.PublishEndpoint);
        using var pusher = new RoomPusher(page.Service.IngestEndpoint);
        pusher.Push("room-a", Rooms.WithMains("room-a", onSeconds: 0, offSeconds: null), seconds: 30);
        var raised = await messages.WaitForAsync((t, b) => t == "alert/room-a" && b.GetProperty("key").GetString() == "mains/h1", "the mains raise");

        var all = await page.WaitForJsonAsync($"/api/v1/alerts?stream=room-a&{Since}", a => a.GetProperty("alerts").GetArrayLength() > 0, "a stored alert");
        var stored = all.GetProperty("alerts").EnumerateArray().Single(a => a.GetProperty("key").GetString() == "mains/h1" && a.GetProperty("event").GetString() == "raised");
        foreach (var name in new[] { "stream", "key", "event", "kind", "source", "harmonic", "aliased", "fault", "frequencyHz", "amplitudeUvRms", "channelShare", "worstChannels", "severity", "suggestion", "caution", "streamSeconds", "utc", "onsetUtc" })
        {
            Assert.Equal(raised.Body.GetProperty(name).GetRawText(), stored.GetProperty(name).GetRawText());
        }

        Assert.Equal(0, (await page.GetJsonAsync($"/api/v1/alerts?stream=room-a&kind=display&{Since}")).GetProperty("alerts").GetArrayLength());
        Assert.Equal(0, (await page.GetJsonAsync($"/api/v1/alerts?stream=room-z&{Since}")).GetProperty("alerts").GetArrayLength());
        var afterRaise = raised.Body.GetProperty("utc").GetDateTimeOffset().AddSeconds(1).ToString("O", CultureInfo.InvariantCulture);
        var later = await page.GetJsonAsync($"/api/v1/alerts?stream=room-a&since={Uri.EscapeDataString(afterRaise)}");
        Assert.DoesNotContain(later.GetProperty("alerts").EnumerateArray(), a => a.GetProperty("event").GetString() == "raised");
        Assert.True((await page.GetJsonAsync($"/api/v1/alerts?kind=mains&limit=1&{Since}")).GetProperty("alerts").GetArrayLength() == 1);

        using var badKind = await page.Http.GetAsync("/api/v1/alerts?kind=hum");
        Assert.Equal(HttpStatusCode.BadRequest, badKind.StatusCode);
        Assert.Contains("kind must be one of mains, display, site-tone, unidentified, fault", await badKind.Content.ReadAsStringAsync(), StringComparison.Ordinal);
        using var badSince = await page.Http.GetAsync("/api/v1/alerts?since=yesterday");
        Assert.Equal(HttpStatusCode.BadRequest, badSince.StatusCode);
    }

    [Fact]
    public async Task The_latest_spectrum_shows_the_line_at_its_frequency_and_flags_the_alerted_one()
    {
        using var folder = new TempFolder();
        await using var page = await LivePage.StartAsync(folder.Path);
        using var pusher = new RoomPusher(page.Service.IngestEndpoint);
        pusher.Push("room-a", Rooms.WithMains("room-a", onSeconds: 0, offSeconds: null), seconds: 30);
        await page.WaitForJsonAsync("/api/v1/rooms/room-a", r => r.GetProperty("state").GetString() == "affected", "room-a affected");

        var spectrum = await page.WaitForJsonAsync("/api/v1/rooms/room-a/spectrum", s => s.GetProperty("lines").EnumerateArray().Any(l => l.GetProperty("flagged").GetBoolean()), "a flagged line");

        // Welch bins are fs / nperseg apart: 4 s segments give 0.25 Hz (scipy.signal.welch's frequency grid, definitional).
        var binWidthHz = spectrum.GetProperty("binWidthHz").GetDouble();
        Assert.Equal(0.25, binWidthHz, 9);
        var psd = spectrum.GetProperty("psdUv2PerHz").EnumerateArray().Select(p => p.GetDouble()).ToArray();
        Assert.Equal(250 / 2 / binWidthHz + 1, psd.Length); // bins 0 … Nyquist (125 Hz)
        var from = (int)(40 / binWidthHz);
        var peak = from + Array.IndexOf(psd[from..(int)(60 / binWidthHz)], psd[from..(int)(60 / binWidthHz)].Max());
        Assert.InRange(peak * binWidthHz, 50 - binWidthHz, 50 + binWidthHz); // the simulated 50 Hz tone

        var line = spectrum.GetProperty("lines").EnumerateArray().Single(l => l.GetProperty("flagged").GetBoolean());
        Assert.Equal("mains/h1", line.GetProperty("key").GetString());
        Assert.Equal("mains h1", line.GetProperty("label").GetString());
        Assert.InRange(line.GetProperty("frequencyHz").GetDouble(), 49.9, 50.1);

        using var none = await page.Http.GetAsync("/api/v1/rooms/room-z/spectrum");
        Assert.Equal(HttpStatusCode.NotFound, none.StatusCode);
    }

    [Fact]
    public async Task Day_sheets_are_listed_and_served_from_the_summaries_folder_and_nothing_outside_it()
    {
        using var folder = new TempFolder();
        await using var page = await LivePage.StartAsync(folder.Path);
        using var pusher = new RoomPusher(page.Service.IngestEndpoint);

        // 70 s from 09:00: the first minute's ledger row is complete; then the day is rendered as at midnight.
        pusher.Push("room-a", Rooms.WithMains("room-a", onSeconds: 0, offSeconds: null), seconds: 70);
        var day = DateOnly.FromDateTime(Rooms.Start.UtcDateTime);
        var store = page.Service.Host.Services.GetRequiredService<SummaryStore>();
        var deadline = DateTime.UtcNow.AddSeconds(60);
        while (store.LedgerMinutes("room-a", Rooms.Start, Rooms.Start.AddMinutes(1)).Count == 0 && DateTime.UtcNow < deadline)
        {
            await Task.Delay(100);
        }

        var renderer = new DailySummaryRenderer(store, new SummaryOutputOptions { Folder = Path.Combine(folder.Path, "summaries") }, "test site", TimeZoneInfo.Utc);
        Assert.Single(renderer.RenderDay(day));

        var list = await page.GetJsonAsync("/api/v1/summaries?stream=room-a&from=2026-05-01&to=2026-05-31");
        var sheet = list.GetProperty("summaries").EnumerateArray().Single();
        Assert.Equal("2026-05-04", sheet.GetProperty("day").GetString());
        Assert.Equal("room-a", sheet.GetProperty("stream").GetString());
        Assert.Equal("/sheets/2026-05-04/day.md", sheet.GetProperty("files").GetProperty("page").GetString());
        Assert.Equal(0, (await page.GetJsonAsync("/api/v1/summaries?stream=room-a")).GetProperty("summaries").GetArrayLength()); // the last 31 days by default

        using var markdown = await page.Http.GetAsync("/sheets/2026-05-04/day.md");
        Assert.Equal(HttpStatusCode.OK, markdown.StatusCode);
        Assert.Contains("room-a", await markdown.Content.ReadAsStringAsync(), StringComparison.Ordinal);
        using var timeline = await page.Http.GetAsync(sheet.GetProperty("files").GetProperty("timeline").GetString());
        Assert.Equal("image/png", timeline.Content.Headers.ContentType?.MediaType);
        var summary = await page.GetJsonAsync(sheet.GetProperty("files").GetProperty("summary").GetString()!);
        Assert.Equal(sheet.GetProperty("verdict").GetString(), summary.GetProperty("verdict").GetString());
        Assert.Equal(summary.GetRawText(), (await page.GetJsonAsync("/api/v1/summaries/2026-05-04/room-a")).GetRawText());

        File.WriteAllText(Path.Combine(folder.Path, "secret.txt"), "not for the page");
        foreach (var path in new[] { "/sheets/2026-05-04/..%2F..%2Fsecret.txt", "/sheets/..%2F/secret.txt", "/sheets/2026-05-04/room-a.plots.txt" })
        {
            using var refused = await page.Http.GetAsync(path);
            Assert.Equal(HttpStatusCode.NotFound, refused.StatusCode);
        }
    }

    [Fact]
    public async Task The_event_stream_starts_with_every_room_then_forwards_alerts_as_published()
    {
        using var folder = new TempFolder();
        await using var page = await LivePage.StartAsync(folder.Path);
        using var messages = new MessageCollector(page.Service.PublishEndpoint);
        using var pusher = new RoomPusher(page.Service.IngestEndpoint);
        pusher.Push("room-b", Rooms.Quiet("room-b"), seconds: 12);
        await page.WaitForJsonAsync("/api/v1/rooms/room-b", r => r.GetProperty("state").GetString() == "clean", "room-b analysed");

        using var response = await page.Http.GetAsync("/api/v1/events", HttpCompletionOption.ResponseHeadersRead);
        Assert.Equal("text/event-stream", response.Content.Headers.ContentType?.MediaType);
        using var reader = new StreamReader(await response.Content.ReadAsStreamAsync(), Encoding.UTF8);
        var first = await NextEvent(reader);
        Assert.Equal("rooms", first.Kind);
        Assert.True(first.Data.GetProperty("full").GetBoolean());
        Assert.Contains(first.Data.GetProperty("rooms").EnumerateArray(), r => r.GetProperty("stream").GetString() == "room-b");

        pusher.Push("room-a", Rooms.WithMains("room-a", onSeconds: 0, offSeconds: null), seconds: 30);
        (string Kind, JsonElement Data) alert;
        do
        {
            alert = await NextEvent(reader);
        }
        while (alert.Kind != "alert");

        var published = await messages.WaitForAsync((t, b) => t == "alert/room-a" && b.GetProperty("key").GetString() == alert.Data.GetProperty("key").GetString(), "the same alert on the PUB socket");
        Assert.Equal(published.Body.GetRawText(), alert.Data.GetRawText());

        (string Kind, JsonElement Data) update;
        do
        {
            update = await NextEvent(reader);
        }
        while (!(update.Kind == "rooms" && update.Data.GetProperty("rooms").EnumerateArray().Any(r => r.GetProperty("stream").GetString() == "room-a" && r.GetProperty("state").GetString() == "affected")));

        Assert.False(update.Data.GetProperty("full").GetBoolean());
    }

    /// <summary>Reads one Server-Sent Event (bounded): its "event:" name and its JSON "data:".</summary>
    private static async Task<(string Kind, JsonElement Data)> NextEvent(StreamReader reader)
    {
        using var timeout = new CancellationTokenSource(TimeSpan.FromSeconds(60));
        string? kind = null;
        string? data = null;
        while (true)
        {
            var line = await reader.ReadLineAsync(timeout.Token) ?? throw new EndOfStreamException("The event stream ended.");
            if (line.StartsWith("event: ", StringComparison.Ordinal))
            {
                kind = line["event: ".Length..];
            }
            else if (line.StartsWith("data: ", StringComparison.Ordinal))
            {
                data = line["data: ".Length..];
            }
            else if (line.Length == 0 && kind is not null && data is not null)
            {
                return (kind, JsonDocument.Parse(data).RootElement.Clone());
            }
        }
    }
}
