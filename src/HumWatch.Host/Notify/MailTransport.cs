using System.Net;
using MailKit.Net.Smtp;
using MailKit.Security;
using MimeKit;

namespace HumWatch.Host.Notify;

/// <summary>Sends one composed mail; one connection per mail (a batch is minutes apart).</summary>
internal interface IMailTransport
{
    /// <summary>Where it sends, for log lines: "smtp.lab.example:587".</summary>
    string Server { get; }

    Task SendAsync(MimeMessage message, CancellationToken cancellationToken);
}

/// <summary>SMTP through MailKit: STARTTLS required unless configured off, certificate checked by <see cref="MailCertificateTrust"/>, optional login.</summary>
internal sealed class SmtpMailTransport : IMailTransport
{
    private readonly MailOptions _options;
    private readonly NetworkCredential? _credential;
    private readonly MailCertificateTrust _trust;

    public SmtpMailTransport(MailOptions options, NetworkCredential? credential, MailCertificateTrust trust)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(trust);
        _options = options;
        _credential = credential;
        _trust = trust;
    }

    public string Server => $"{_options.Host}:{_options.Port}";

    /// <summary>Why the server's certificate was last refused, for the log; null when none was.</summary>
    public string? LastCertificateRefusal => _trust.LastRefusal;

    public async Task SendAsync(MimeMessage message, CancellationToken cancellationToken)
    {
        using var client = new SmtpClient
        {
            Timeout = (int)TimeSpan.FromSeconds(_options.TimeoutSeconds).TotalMilliseconds,
            ServerCertificateValidationCallback = _trust.Validate,
        };

        // StartTls: refuse a server that does not offer it, rather than fall back to plain text.
        var security = _options.StartTls ? SecureSocketOptions.StartTls : SecureSocketOptions.None;
        await client.ConnectAsync(_options.Host, _options.Port, security, cancellationToken).ConfigureAwait(false);
        if (_credential is not null)
        {
            await client.AuthenticateAsync(_credential, cancellationToken).ConfigureAwait(false);
        }

        await client.SendAsync(message, cancellationToken).ConfigureAwait(false);
        await client.DisconnectAsync(quit: true, cancellationToken).ConfigureAwait(false);
    }
}
