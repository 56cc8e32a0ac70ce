using System.Net;
using System.Text;
using HumWatch.Host.Ingest;
using HumWatch.Host.Tests.EndToEnd;
using HumWatch.Host.Tests.Web.Support;
using Microsoft.Extensions.DependencyInjection;
using Xunit;

namespace HumWatch.Host.Tests.Web;

/// <summary>/healthz, /readyz and /metrics over real HTTP; the metrics text is read by an outside parser.</summary>
[Collection(LivePageCollection.Name)]
public sealed class HealthAndMetricsTests
{
    [Fact]
    public async Task Health_says_alive_and_readiness_checks_store_sockets_and_analysis()
    {
        using var folder = new TempFolder();
        await using var page = await LivePage.StartAsync(folder.Path);

        Assert.True((await page.GetJsonAsync("/healthz")).GetProperty("alive").GetBoolean());
        var ready = await page.GetJsonAsync("/readyz");
        Assert.True(ready.GetProperty("ready").GetBoolean());
        Assert.Equal(["store", "sockets", "analysis"], ready.GetProperty("checks").EnumerateArray().Select(c => c.GetProperty("name").GetString()));
        Assert.All(ready.GetProperty("checks").EnumerateArray(), c => Assert.True(c.GetProperty("ok").GetBoolean()));
    }

    [Fact]
    public async Task Readiness_says_why_when_chunks_were_dropped_for_want_of_room()
    {
        using var folder = new TempFolder();
        await using var page = await LivePage.StartAsync(folder.Path);

        // What the monitor service records when a stream's queue is full.
        page.Service.Host.Services.GetRequiredService<IngestCounters>().RecordDropped("room-a", IngestDropReason.StreamQueueFull);

        using var response = await page.Http.GetAsync("/readyz");
        Assert.Equal(HttpStatusCode.ServiceUnavailable, response.StatusCode);
        var text = await response.Content.ReadAsStringAsync();
        Assert.Contains("\"ready\":false", text, StringComparison.Ordinal);
        Assert.Contains("chunks were dropped for want of room in the last 60 s (1 since start): analysis is not keeping up", text, StringComparison.Ordinal);
        Assert.True((await page.GetJsonAsync("/healthz")).GetProperty("alive").GetBoolean());
    }

    [PrometheusParserFact]
    public async Task Metrics_are_valid_Prometheus_text_with_the_service_counts()
    {
        using var folder = new TempFolder();
        await using var page = await LivePage.StartAsync(folder.Path);
        using var messages = new MessageCollector(page.Service.PublishEndpoint);
        using var pusher = new RoomPusher(page.Service.IngestEndpoint);
        pusher.Push("room-a", Rooms.WithMains("room-a", onSeconds: 0, offSeconds: null), seconds: 30, chunkSeconds: 0.5); // 60 chunks
        pusher.SendRaw(Encoding.UTF8.GetBytes("{not json"), new byte[16]);
        await messages.WaitForAsync((t, b) => t == "alert/room-a", "the mains raise");

        // Wait until analysis is done: two status messages in a row with the same frame count.
        var counters = page.Service.Host.Services.GetRequiredService<IngestCounters>();
        long frames = -1;
        for (var i = 0; i < 60; i++)
        {
            var status = (await page.WaitForJsonAsync("/api/v1/rooms/room-a", r => r.GetProperty("status").ValueKind == System.Text.Json.JsonValueKind.Object, "a status of room-a")).GetProperty("status");
            var now = status.GetProperty("framesAnalysed").GetInt64();
            if (now == frames && status.GetProperty("chunksAccepted").GetInt64() == 60)
            {
                break;
            }

            frames = now;
            await Task.Delay(1100);
        }

        using var response = await page.Http.GetAsync("/metrics");
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.StartsWith("text/plain", response.Content.Headers.ContentType?.MediaType, StringComparison.Ordinal);
        var samples = await PrometheusParser.ParseAsync(await response.Content.ReadAsStringAsync());
        double Value(string name, params (string Key, string Value)[] labels) =>
            samples.Single(s => s.Name == name && labels.All(l => s.Labels.TryGetValue(l.Key, out var v) && v == l.Value)).Value;

        Assert.Equal(60, Value("humwatch_chunks_accepted_total"));
        Assert.Equal(counters.AcceptedTotal, Value("humwatch_chunks_accepted_total"));
        Assert.Equal(1, samples.Where(s => s.Name == "humwatch_chunks_rejected_total").Sum(s => s.Value));
        Assert.Equal(0, samples.Where(s => s.Name == "humwatch_chunks_dropped_total").Sum(s => s.Value));
        Assert.Equal(frames, Value("humwatch_frames_analysed_total"));
        Assert.Equal(1, Value("humwatch_streams"));
        Assert.True(Value("humwatch_alerts_raised_total", ("kind", "mains")) >= 1);
        var activeMains = LivePage.Room(await page.GetJsonAsync("/api/v1/rooms"), "room-a")!.Value.GetProperty("alerts").EnumerateArray().Count(a => a.GetProperty("kind").GetString() == "mains");
        Assert.Equal(activeMains, Value("humwatch_alerts_active", ("kind", "mains")));
        Assert.Equal(0, Value("humwatch_alerts_active", ("kind", "display")));
        Assert.Equal(0, Value("humwatch_store_write_failures_total"));
        Assert.Contains(samples, s => s.Name == "humwatch_analysis_lag_seconds" && s.Labels["stream"] == "room-a");
        Assert.Equal(0, Value("humwatch_ingest_queue"));
    }
}
