using System.Text;
using System.Text.Json;
using HumWatch.Host.Notify;
using HumWatch.Host.Tests.Notify.Support;
using HumWatch.Host.Tests.Publishing.Support;
using Microsoft.Extensions.Time.Testing;
using Xunit;

namespace HumWatch.Host.Tests.Notify;

/// <summary>Webhooks against a real HTTP server on loopback (System.Net.HttpListener), wired as the host wires them.</summary>
public sealed class WebhookTests : IDisposable
{
    private readonly LoopbackWebhookReceiver _receiver = LoopbackWebhookReceiver.Start();
    private readonly TempFolder _temp = new();

    public void Dispose()
    {
        _receiver.Dispose();
        _temp.Dispose();
    }

    [Fact]
    public async Task An_alert_and_its_clear_are_posted_with_the_exact_published_bodies()
    {
        await using var harness = new NotifyHarness(NotifyHarness.Webhook(_receiver.BaseUrl + "hooks/humwatch"));
        await harness.StartAsync();

        harness.Dispatch(Some.Raised());
        harness.Dispatch(Some.Cleared());
        var alert = await _receiver.NextAsync();
        var clear = await _receiver.NextAsync();

        var published = harness.Publisher.Published;
        Assert.Equal(["alert/room-a", "clear/room-a"], harness.Publisher.Topics);
        Assert.Equal(published[0].Body, alert.Body);
        Assert.Equal(published[1].Body, clear.Body);
        foreach (var (request, kind) in new[] { (alert, "alert"), (clear, "clear") })
        {
            Assert.Equal("POST", request.Method);
            Assert.Equal("/hooks/humwatch", request.Path);
            Assert.Equal("application/json", request.ContentType);
            Assert.Equal(kind, request.Headers[WebhookTarget.KindHeader]);
            Assert.True(Guid.TryParse(request.Headers[WebhookTarget.DeliveryHeader], out _));
        }

        // The body is the JSON of docs/messages.md, read by System.Text.Json rather than compared with itself only.
        using var body = JsonDocument.Parse(alert.Body);
        Assert.Equal(1, body.RootElement.GetProperty("v").GetInt32());
        Assert.Equal("raised", body.RootElement.GetProperty("event").GetString());
        await harness.WaitDeliveredAsync(2);
    }

    [Fact]
    public async Task A_server_error_is_tried_again_with_the_same_body_and_delivery_id()
    {
        _receiver.Answer(500);
        await using var harness = new NotifyHarness(NotifyHarness.Webhook(_receiver.BaseUrl));
        await harness.StartAsync();

        harness.Dispatch(Some.Raised());
        var first = await _receiver.NextAsync();
        var second = await _receiver.NextAsync();
        await harness.WaitDeliveredAsync(1);

        Assert.Equal(first.Body, second.Body);
        Assert.Equal(first.Headers[WebhookTarget.DeliveryHeader], second.Headers[WebhookTarget.DeliveryHeader]);
        var retry = Assert.Single(harness.Logs.WithId(1443));
        Assert.Contains("attempt 1 failed (HTTP 500", retry.Message, StringComparison.Ordinal);
        Assert.Equal(0, harness.Target.GivenUp);
    }

    [Fact]
    public async Task A_webhook_that_keeps_failing_is_given_up_after_the_last_attempt_and_never_holds_up_dispatch()
    {
        _receiver.DefaultStatus = 503;
        _receiver.Hold = true;
        await using var harness = new NotifyHarness(NotifyHarness.Webhook(_receiver.BaseUrl));
        await harness.StartAsync();

        harness.Dispatch(Some.Raised());
        await _receiver.NextAsync(); // the first attempt is now held by the server

        // The dispatcher returns while that delivery hangs: storing and publishing never wait for a webhook.
        Assert.Equal((true, true), harness.Dispatch(Some.SeverityChanged()));
        Assert.Equal((true, true), harness.Dispatch(Some.Cleared()));
        Assert.Equal(3, harness.Publisher.Published.Count);

        _receiver.Release();
        await harness.WaitGivenUpAsync(3);

        Assert.Equal(9, _receiver.Count); // 3 notifications × Notify:Retry:Attempts = 3
        Assert.Equal(0, harness.Target.Delivered);
        var gaveUp = await harness.Logs.WaitForAsync(1444, 3);
        Assert.Equal(3, gaveUp.Count);
        Assert.All(gaveUp, e => Assert.Contains("HTTP 503", e.Message, StringComparison.Ordinal));
        Assert.Contains("3 given up so far", gaveUp[^1].Message, StringComparison.Ordinal);
        Assert.Equal(6, harness.Logs.WithId(1443).Count);
    }

    [Fact]
    public async Task A_refusal_other_than_a_server_error_is_final_at_once()
    {
        _receiver.DefaultStatus = 404;
        await using var harness = new NotifyHarness(NotifyHarness.Webhook(_receiver.BaseUrl));
        await harness.StartAsync();

        harness.Dispatch(Some.Raised());
        await harness.WaitGivenUpAsync(1);

        Assert.Equal(1, _receiver.Count);
        Assert.Empty(harness.Logs.WithId(1443));
        Assert.Contains("HTTP 404", Assert.Single(await harness.Logs.WaitForAsync(1444)).Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task When_the_queue_is_full_new_events_are_dropped_counted_and_warned_about_once()
    {
        _receiver.Hold = true;
        var options = NotifyHarness.Webhook(_receiver.BaseUrl);
        options.QueueCapacity = 2;

        // Fake time: the drops happen at one instant, so the throttle lets exactly one warning through.
        await using var harness = new NotifyHarness(options, new FakeTimeProvider(Some.Utc));
        await harness.StartAsync();

        harness.Dispatch(Some.Raised("room-1"));
        await _receiver.NextAsync(); // in flight, off the queue
        for (var i = 2; i <= 5; i++)
        {
            harness.Dispatch(Some.Raised($"room-{i}"));
        }

        Assert.Equal(2, harness.Target.Dropped);
        var warning = Assert.Single(harness.Logs.WithId(1441));
        Assert.Contains("dropped the alert of room-4", warning.Message, StringComparison.Ordinal);

        _receiver.Release();
        await harness.WaitDeliveredAsync(3);
        var streams = new[] { await _receiver.NextAsync(), await _receiver.NextAsync() }
            .Select(r => JsonDocument.Parse(r.Body).RootElement.GetProperty("stream").GetString());
        Assert.Equal(["room-2", "room-3"], streams);
    }

    [Fact]
    public async Task Kinds_and_minimum_severity_choose_what_a_webhook_gets()
    {
        await using var harness = new NotifyHarness(NotifyHarness.Webhook(_receiver.BaseUrl, w =>
        {
            w.Kinds = NotifyKinds.Alert;
            w.MinimumSeverity = Core.Alerts.AlertSeverity.Severe;
        }));
        await harness.StartAsync();

        harness.Dispatch(Some.Raised()); // marked: below the minimum
        harness.Dispatch(Some.SeverityChanged()); // now severe
        harness.Dispatch(Some.Cleared()); // a clear: not a kind this webhook takes
        var request = await _receiver.NextAsync();
        await harness.StopAsync();

        Assert.Equal("severity", JsonDocument.Parse(request.Body).RootElement.GetProperty("event").GetString());
        Assert.Empty(_receiver.Drain());
        Assert.Equal(1, _receiver.Count);
    }

    [Fact]
    public async Task A_token_from_its_file_goes_in_the_configured_header_and_never_into_the_log()
    {
        var tokenFile = _temp.WriteText("hook.token", "Bearer s3cret-7781\n");
        SecretFiles.OwnerOnly(tokenFile);
        await using var harness = new NotifyHarness(NotifyHarness.Webhook(_receiver.BaseUrl + "in?key=q-secret-55", w =>
        {
            w.HeaderName = "Authorization";
            w.TokenFile = tokenFile;
        }));
        await harness.StartAsync();

        harness.Dispatch(Some.Raised());
        var request = await _receiver.NextAsync();
        await harness.WaitDeliveredAsync(1);

        Assert.Equal("Bearer s3cret-7781", request.Headers["Authorization"]);
        Assert.Equal("/in?key=q-secret-55", request.Path);
        var start = Assert.Single(harness.Logs.WithId(1440));
        Assert.Contains($"{_receiver.BaseUrl}in?…", start.Message, StringComparison.Ordinal);
        Assert.All(harness.Logs.Entries, e =>
        {
            Assert.DoesNotContain("s3cret", e.Message, StringComparison.Ordinal);
            Assert.DoesNotContain("q-secret", e.Message, StringComparison.Ordinal);
        });
    }

    [Fact]
    public async Task A_token_file_other_users_can_read_stops_the_start_naming_the_setting()
    {
        if (OperatingSystem.IsWindows())
        {
            return; // Windows files have no Unix mode bits; the check is skipped there by design.
        }

        var tokenFile = _temp.WriteText("hook.token", "Bearer s3cret-7781");
        File.SetUnixFileMode(tokenFile, UnixFileMode.UserRead | UnixFileMode.UserWrite | UnixFileMode.GroupRead | UnixFileMode.OtherRead);
        await using var harness = new NotifyHarness(NotifyHarness.Webhook(_receiver.BaseUrl, w =>
        {
            w.HeaderName = "Authorization";
            w.TokenFile = tokenFile;
        }));

        var ex = await Assert.ThrowsAsync<StartFailureException>(harness.StartAsync);

        Assert.Contains("Notify:Webhooks:0:TokenFile", ex.Message, StringComparison.Ordinal);
        Assert.Contains("mode 0644", ex.Message, StringComparison.Ordinal);
        Assert.Contains($"chmod 600 {tokenFile}", ex.Message, StringComparison.Ordinal);
        Assert.DoesNotContain("s3cret", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task A_daily_summary_is_posted_when_the_webhook_takes_summaries()
    {
        await using var harness = new NotifyHarness(NotifyHarness.Webhook(_receiver.BaseUrl, w => w.Kinds = NotifyKinds.Summary));
        await harness.StartAsync();
        var body = Encoding.UTF8.GetBytes("{\"v\":1,\"stream\":\"room-a\"}");

        harness.Dispatch(Some.Raised()); // not taken
        harness.Notifier.OnSummaryPublished(NotifySome.Day("room-a"), body);
        var request = await _receiver.NextAsync();

        Assert.Equal("summary", request.Headers[WebhookTarget.KindHeader]);
        Assert.Equal(body, request.Body);
        await harness.WaitDeliveredAsync(1);
        Assert.Equal(1, _receiver.Count);
    }
}
