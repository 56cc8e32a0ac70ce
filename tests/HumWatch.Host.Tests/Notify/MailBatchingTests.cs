using HumWatch.Core.Alerts;
using HumWatch.Core.Reporting;
using HumWatch.Host.Configuration;
using HumWatch.Host.Notify;
using HumWatch.Host.Publishing;
using HumWatch.Host.Tests.Notify.Support;
using HumWatch.Host.Tests.Publishing.Support;
using MailKit.Security;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Time.Testing;
using MimeKit;
using Xunit;

namespace HumWatch.Host.Tests.Notify;

/// <summary>Mail batching on a fake clock, with a transport that records instead of sending (SmtpDeliveryTests send for real).</summary>
public sealed class MailBatchingTests : IAsyncDisposable
{
    private readonly FakeTimeProvider _time = new(Some.Utc);
    private readonly RecordingMailTransport _transport = new();
    private readonly RecordingLoggerProvider _logs = new();
    private readonly NotifyOptions _options = new();
    private NotificationService? _notifier;

    public MailBatchingTests()
    {
        _options.Mail.Enabled = true;
        _options.Mail.Host = "smtp.lab.example";
        _options.Mail.From = "HumWatch <humwatch@lab.example>";
        _options.Mail.To.Add("eeg-tech@lab.example");
        _options.Mail.To.Add("night-shift@lab.example");
        _options.Mail.BatchSeconds = 120;
        _options.Retry.FirstDelaySeconds = 0.5;
        _options.Retry.MaxDelaySeconds = 1;
    }

    private MailTarget Target => (MailTarget)Assert.Single(Notifier.Targets);

    private NotificationService Notifier => _notifier ??= Start();

    public async ValueTask DisposeAsync()
    {
        if (_notifier is not null)
        {
            using var deadline = new CancellationTokenSource(TimeSpan.FromSeconds(30));
            await _notifier.StopAsync(deadline.Token);
            await _notifier.DisposeAsync();
        }
    }

    [Fact]
    public async Task Events_within_the_batch_time_go_out_as_one_mail_and_a_later_one_starts_the_next()
    {
        Dispatch(Some.Raised());
        _time.Advance(TimeSpan.FromSeconds(30));
        Dispatch(Some.SeverityChanged());
        _time.Advance(TimeSpan.FromSeconds(30));
        Dispatch(Some.Cleared());
        await AdvanceUntilSentAsync(1);

        var mail = Assert.Single(_transport.Sent);
        Assert.Equal("HumWatch, Test lab: 2 alerts, 1 clear", mail.Subject);
        Assert.True(_time.GetUtcNow() - Some.Utc >= TimeSpan.FromSeconds(120), "a batch closes no earlier than Notify:Mail:BatchSeconds after its first event");
        Assert.Equal(["eeg-tech@lab.example", "night-shift@lab.example"], mail.To.Mailboxes.Select(m => m.Address));
        Assert.Equal("humwatch@lab.example", Assert.Single(mail.From.Mailboxes).Address);
        Assert.Equal(3, Target.Delivered);

        Dispatch(Some.Raised("room-b"));
        await AdvanceUntilSentAsync(2);

        Assert.Equal("HumWatch, Test lab: 1 alert", _transport.Sent[1].Subject);
        Assert.Contains("room-b", _transport.Sent[1].TextBody, StringComparison.Ordinal);
        Assert.DoesNotContain("room-a", _transport.Sent[1].TextBody, StringComparison.Ordinal);
        Assert.Equal(2, _logs.WithId(1445).Count); // one line per mail
    }

    [Fact]
    public void The_mail_lists_room_source_amplitude_onset_channels_and_hint_in_site_time_and_ends_with_the_caution()
    {
        var batch = new[]
        {
            Notification.For(Some.Raised(), Messages.AlertKind, [], Some.Utc),
            Notification.For(Some.SeverityChanged(), Messages.AlertKind, [], Some.Utc),
            Notification.For(Some.Cleared(), Messages.ClearKind, [], Some.Utc),
            Notification.For(NotifySome.Day("room-c"), [], Some.Utc),
        };

        using var mail = Target.Compose(batch);
        var text = mail.TextBody!.ReplaceLineEndings("\n");

        Assert.Equal("HumWatch, Test lab: 2 alerts, 1 clear, 1 daily summary", mail.Subject);
        Assert.StartsWith("HumWatch at Test lab published 2 alerts, 1 clear, 1 daily summary. Times are Europe/Berlin.\n", text, StringComparison.Ordinal);

        // Some.Raised: onset 09:15:16 UTC, which is 10:15:16 in Berlin on 2 March (CET, UTC+1; IANA tz database).
        Assert.Contains(
            "1. Alert raised in room-a: mains h1, marked\n"
            + "   50.02 Hz, 6.5 µV RMS, since 2026-03-02 10:15:16 +01:00\n"
            + "   channels: Cz, Fp1\n"
            + "   hint: On most channels: check the ground and reference electrodes.\n",
            text,
            StringComparison.Ordinal);
        Assert.Contains("2. Alert in room-a now severe (was marked): mains h1\n   50.01 Hz, 22.0 µV RMS, at 2026-03-02 10:15:36 +01:00\n   channels: Cz\n", text, StringComparison.Ordinal);
        Assert.Contains("3. Alert cleared in room-a: mains h1 (subsided)\n   peak 22.0 µV RMS, highest severity severe, lasted 30 s\n   cleared at 2026-03-02 10:15:56 +01:00\n", text, StringComparison.Ordinal);
        Assert.Contains("4. Daily summary of room-c for 2026-03-01: warn\n   7.5 h monitored, 42 min affected, 3 alerts raised, strongest line 12.3 µV RMS\n", text, StringComparison.Ordinal);
        Assert.EndsWith(SafetyNotice.Text + "\n", text, StringComparison.Ordinal);
        Assert.Equal(Some.Utc, mail.Date);
    }

    [Fact]
    public async Task Minimum_severity_and_kinds_choose_what_is_mailed()
    {
        _options.Mail.MinimumSeverity = AlertSeverity.Severe;
        _options.Mail.Kinds = NotifyKinds.Alert | NotifyKinds.Clear | NotifyKinds.Summary;

        Dispatch(Some.Raised()); // marked: left out
        Dispatch(Some.SeverityChanged()); // severe
        Dispatch(Some.Cleared()); // its alert reached severe, so its clear is mailed too
        Notifier.OnSummaryPublished(NotifySome.Day("room-a"), []); // summaries pass every severity
        await AdvanceUntilSentAsync(1);

        var text = Assert.Single(_transport.Sent).TextBody;
        Assert.DoesNotContain("Alert raised", text, StringComparison.Ordinal);
        Assert.Contains("now severe", text, StringComparison.Ordinal);
        Assert.Contains("Alert cleared", text, StringComparison.Ordinal);
        Assert.Contains("Daily summary of room-a", text, StringComparison.Ordinal);
    }

    [Fact]
    public async Task At_a_stop_the_pending_batch_is_sent_at_once()
    {
        Dispatch(Some.Raised());
        Dispatch(Some.Cleared());

        using var deadline = new CancellationTokenSource(TimeSpan.FromSeconds(30));
        await Notifier.StopAsync(deadline.Token);

        Assert.Equal("HumWatch, Test lab: 1 alert, 1 clear", Assert.Single(_transport.Sent).Subject);
        Assert.Equal(Some.Utc, _time.GetUtcNow()); // no time passed: the stop did not wait for the batch
        Assert.Contains("2 delivered, 0 given up, 0 dropped", Assert.Single(_logs.WithId(1447)).Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task A_lost_connection_is_tried_again_and_the_mail_goes_out_once()
    {
        _transport.FailWith(new IOException("connection reset by peer"));

        Dispatch(Some.Raised());
        await AdvanceUntilSentAsync(1);

        Assert.Equal(2, _transport.Attempts);
        Assert.Single(_transport.Sent);
        Assert.Contains("attempt 1 failed (IOException: connection reset by peer)", Assert.Single(_logs.WithId(1443)).Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task A_refused_login_is_not_tried_again_and_is_logged_with_the_events_it_held()
    {
        _transport.FailWith(new AuthenticationException("535 authentication failed"));

        Dispatch(Some.Raised());
        Dispatch(Some.Cleared());
        for (var i = 0; i < 3000 && _logs.WithId(1446).Count == 0; i++)
        {
            _time.Advance(TimeSpan.FromSeconds(1));
            await Task.Delay(10);
        }

        Assert.Equal(2, Target.GivenUp);
        Assert.Equal(1, _transport.Attempts);
        var gaveUp = Assert.Single(_logs.WithId(1446));
        Assert.Contains("gave up on a mail of 2 events (AuthenticationException: 535 authentication failed)", gaveUp.Message, StringComparison.Ordinal);
        Assert.Equal(LogLevel.Error, gaveUp.Level);
    }

    private NotificationService Start()
    {
        Assert.Empty(_options.Validate());
        var factory = LoggerFactory.Create(b => b.AddProvider(_logs).SetMinimumLevel(LogLevel.Trace));
        var target = new MailTarget("Notify:Mail", _options.Mail, _options.Retry, _options.QueueCapacity, new SiteOptions { Name = "Test lab", TimeZone = "Europe/Berlin" },
            _ => null, _time, factory.CreateLogger<NotifyTarget>(), _transport);
        var notifier = new NotificationService([target], _options, _time, factory.CreateLogger<NotificationService>());
        notifier.StartAsync(CancellationToken.None).GetAwaiter().GetResult();
        return notifier;
    }

    private void Dispatch(AlertEvent alertEvent)
    {
        var (kind, body) = Messages.For(alertEvent);
        Notifier.OnAlertDispatched(alertEvent, kind, body);
    }

    /// <summary>Moves the fake clock on a second at a time until <paramref name="count"/> mails went out and were counted and logged (bounded).</summary>
    private async Task AdvanceUntilSentAsync(int count)
    {
        for (var i = 0; i < 3000 && _logs.WithId(1445).Count < count; i++)
        {
            _time.Advance(TimeSpan.FromSeconds(1));
            await Task.Delay(10);
        }

        Assert.True(_transport.Sent.Count >= count, $"{_transport.Sent.Count} mails sent, expected {count}: {string.Join(" | ", _logs.Entries.Select(e => e.Message))}");
    }
}
