using HumWatch.Core.Reporting;
using HumWatch.Host.Notify;
using HumWatch.Host.Tests.Notify.Support;
using HumWatch.Host.Tests.Publishing.Support;
using Xunit;

namespace HumWatch.Host.Tests.Notify;

/// <summary>
/// Mail through MailKit to Debian's aiosmtpd on loopback, read back by Python's email package: STARTTLS with a pinned
/// or CA-file certificate, login, one mail per batch; and the refusals (an untrusted certificate, no STARTTLS).
/// </summary>
public sealed class SmtpDeliveryTests : IDisposable
{
    private const string User = "humwatch";
    private const string Password = "pw-Ünïcode-4411";

    private readonly TempFolder _temp = new();

    public void Dispose() => _temp.Dispose();

    [SmtpPeerFact]
    public async Task Several_events_go_out_as_one_mail_over_STARTTLS_to_a_pinned_certificate_with_the_password_from_its_file()
    {
        var certificate = TestCertificate.Create(_temp.Path);
        await using var peer = await SmtpPeer.StartAsync(_temp.File("received"), certificate, (User, Password));
        var passwordFile = _temp.WriteText("smtp.password", Password + "\n");
        SecretFiles.OwnerOnly(passwordFile);
        var options = Mail(peer, m =>
        {
            m.TrustedCertificateSha256 = certificate.Sha256;
            m.User = User;
            m.PasswordFile = passwordFile;
        });
        await using var harness = new NotifyHarness(options);

        // All three are queued before the mail task starts, so they fall in one batch however slow the machine is.
        harness.Dispatch(Some.Raised());
        harness.Dispatch(Some.SeverityChanged());
        harness.Dispatch(Some.Cleared());
        await harness.StartAsync();
        await harness.WaitDeliveredAsync(3);

        var mail = Assert.Single(peer.Mails());
        Assert.True(mail.GetProperty("tls").GetBoolean(), "the session was upgraded with STARTTLS");
        Assert.Equal(User, mail.GetProperty("login").GetString());
        Assert.Equal("humwatch@lab.example", mail.GetProperty("mailFrom").GetString());
        Assert.Equal(["eeg-tech@lab.example"], mail.GetProperty("rcptTos").EnumerateArray().Select(e => e.GetString()));
        Assert.Equal("HumWatch, Test lab: 2 alerts, 1 clear", mail.GetProperty("subject").GetString());
        Assert.Equal("text/plain", mail.GetProperty("contentType").GetString());
        Assert.Equal("utf-8", mail.GetProperty("charset").GetString());

        // Decoded by Python's email package: the µ and the whole caution survive the transfer encoding.
        var text = mail.GetProperty("text").GetString()!.ReplaceLineEndings("\n");
        Assert.Contains("Alert raised in room-a: mains h1, marked\n   50.02 Hz, 6.5 µV RMS, since 2026-03-02 10:15:16 +01:00\n", text, StringComparison.Ordinal);
        Assert.Contains("channels: Cz, Fp1", text, StringComparison.Ordinal);
        Assert.Contains("hint: On most channels", text, StringComparison.Ordinal);
        Assert.Contains("Alert cleared in room-a", text, StringComparison.Ordinal);
        Assert.Contains(SafetyNotice.Text, text.Replace("\n", " ", StringComparison.Ordinal), StringComparison.Ordinal);
        Assert.Single(await harness.Logs.WaitForAsync(1445));
        Assert.All(harness.Logs.Entries, e => Assert.DoesNotContain(Password, e.Message, StringComparison.Ordinal));
    }

    [SmtpPeerFact]
    public async Task A_certificate_signed_by_the_configured_authority_is_trusted_and_the_password_can_come_from_the_environment()
    {
        var certificate = TestCertificate.Create(_temp.Path);
        await using var peer = await SmtpPeer.StartAsync(_temp.File("received"), certificate, (User, Password));
        var options = Mail(peer, m =>
        {
            m.CaFile = certificate.CertificateFile;
            m.User = User;
            m.PasswordEnvironmentVariable = "HUMWATCH_TEST_SMTP_PASSWORD";
        });
        await using var harness = new NotifyHarness(options, environment: new Dictionary<string, string?> { ["HUMWATCH_TEST_SMTP_PASSWORD"] = Password });

        harness.Dispatch(Some.Raised());
        await harness.StartAsync();
        await harness.WaitDeliveredAsync(1);

        var mail = Assert.Single(peer.Mails());
        Assert.True(mail.GetProperty("tls").GetBoolean());
        Assert.Equal(User, mail.GetProperty("login").GetString());
    }

    [SmtpPeerFact]
    public async Task A_certificate_nobody_vouches_for_is_refused_once_and_logged_with_its_fingerprint()
    {
        var certificate = TestCertificate.Create(_temp.Path);
        await using var peer = await SmtpPeer.StartAsync(_temp.File("received"), certificate);
        await using var harness = new NotifyHarness(Mail(peer));

        harness.Dispatch(Some.Raised());
        await harness.StartAsync();
        var gaveUp = Assert.Single(await harness.Logs.WaitForAsync(1446));

        Assert.Empty(peer.Mails());
        Assert.Contains("TLS refused: certificate not trusted", gaveUp.Message, StringComparison.Ordinal);
        Assert.Contains(certificate.Sha256.Replace(":", "", StringComparison.Ordinal), gaveUp.Message, StringComparison.Ordinal);
        Assert.Empty(harness.Logs.WithId(1443)); // a refused certificate is not tried again
        Assert.Equal(1, harness.Target.GivenUp);
    }

    [SmtpPeerFact]
    public async Task A_server_without_STARTTLS_is_refused_unless_plain_text_is_allowed_by_name()
    {
        await using var peer = await SmtpPeer.StartAsync(_temp.File("received"));
        await using (var required = new NotifyHarness(Mail(peer)))
        {
            required.Dispatch(Some.Raised());
            await required.StartAsync();
            var gaveUp = Assert.Single(await required.Logs.WaitForAsync(1446));

            Assert.Contains("STARTTLS", gaveUp.Message, StringComparison.Ordinal);
            Assert.Empty(peer.Mails());
        }

        await using var plain = new NotifyHarness(Mail(peer, m =>
        {
            m.StartTls = false;
            m.AllowInsecureNoTls = true;
        }));
        plain.Dispatch(Some.Raised());
        await plain.StartAsync();
        await plain.WaitDeliveredAsync(1);

        Assert.False(Assert.Single(peer.Mails()).GetProperty("tls").GetBoolean());
        Assert.Contains("Notify:Mail", Assert.Single(plain.Logs.WithId(1448)).Message, StringComparison.Ordinal);
    }

    /// <summary>Mail to the peer, batches of 1 s, quick retries on the real clock.</summary>
    private static NotifyOptions Mail(SmtpPeer peer, Action<MailOptions>? configure = null)
    {
        var options = new NotifyOptions();
        options.Retry.Attempts = 2;
        options.Retry.FirstDelaySeconds = 0.05;
        options.Retry.MaxDelaySeconds = 0.1;
        var mail = options.Mail;
        mail.Enabled = true;
        mail.Host = "127.0.0.1";
        mail.Port = peer.Port;
        mail.From = "HumWatch <humwatch@lab.example>";
        mail.To.Add("eeg-tech@lab.example");
        mail.BatchSeconds = 1;
        mail.TimeoutSeconds = 20;
        configure?.Invoke(mail);
        Assert.Empty(options.Validate());
        return options;
    }
}
