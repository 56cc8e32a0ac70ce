using System.Net;
using System.Net.Sockets;
using System.Threading.Channels;
using MailKit;
using MailKit.Net.Smtp;
using MailKit.Security;
using Microsoft.Extensions.Logging;
using MimeKit;
using Polly;
using Polly.Timeout;

namespace HumWatch.Host.Notify;

/// <summary>
/// Collects notifications for <see cref="MailOptions.BatchSeconds"/> from the first one of a batch, then sends one
/// plain-text mail listing them all (at most <see cref="MailText.MaxEventsPerMail"/>; a longer backlog goes out in
/// further mails at once). At a stop the pending batch is sent without waiting for its time.
/// </summary>
internal sealed class MailTarget : NotifyTarget
{
    private readonly MailOptions _options;
    private readonly string _settingKey;
    private readonly string _siteName;
    private readonly TimeZoneInfo _zone;
    private readonly Func<string, string?> _environment;
    private readonly TimeSpan _batch;
    private readonly TimeSpan _attemptTimeout;
    private readonly ResiliencePipeline<bool> _pipeline;
    private IMailTransport? _transport;
    private int _inFlight;

    /// <param name="settingKey">"Notify:Mail", for names and messages.</param>
    /// <param name="options">The mail settings.</param>
    /// <param name="retry">Attempts and delays.</param>
    /// <param name="capacity">Queue capacity.</param>
    /// <param name="site">Site name for the subject and time zone for the times listed.</param>
    /// <param name="environment">Reads an environment variable (the password's, when so configured).</param>
    /// <param name="timeProvider">Clock of the batches and retries.</param>
    /// <param name="logger">Where deliveries and failures are logged.</param>
    /// <param name="transport">Sends the mail; null (the service) makes the SMTP transport in <see cref="Prepare"/>.</param>
    public MailTarget(
        string settingKey,
        MailOptions options,
        NotifyRetryOptions retry,
        int capacity,
        Configuration.SiteOptions site,
        Func<string, string?> environment,
        TimeProvider timeProvider,
        ILogger logger,
        IMailTransport? transport = null)
        : base($"{settingKey} ({options?.Host}:{options?.Port})", new NotifyFilter(options!.Kinds, options.MinimumSeverity), capacity, timeProvider, logger)
    {
        ArgumentNullException.ThrowIfNull(site);
        ArgumentNullException.ThrowIfNull(environment);
        _options = options;
        _settingKey = settingKey;
        _siteName = site.Name;
        _zone = site.ResolveTimeZone();
        _environment = environment;
        _transport = transport;
        _batch = TimeSpan.FromSeconds(options.BatchSeconds);
        _attemptTimeout = TimeSpan.FromSeconds(options.TimeoutSeconds);
        _pipeline = DeliveryRetry.Build<bool>(retry, _attemptTimeout, timeProvider, IsTemporary, (attempt, outcome, delay) =>
            Logger.NotifyRetrying(Name, attempt, Describe(outcome.Exception), delay.TotalSeconds));
    }

    public override void Prepare()
    {
        if (_transport is not null)
        {
            return;
        }

        var pin = _options.TrustedCertificateSha256 is { } text ? MailCertificateTrust.ParseSha256(text) : null;
        var authorities = _options.CaFile is { } caFile ? MailCertificateTrust.ReadAuthorities(caFile, $"{_settingKey}:CaFile") : null;
        _transport = new SmtpMailTransport(_options, Credential(), new MailCertificateTrust(pin, authorities));
    }

    /// <summary>Composes and sends one mail for <paramref name="batch"/>, trying again as configured; true when the server took it.</summary>
    internal async Task<bool> SendBatchAsync(IReadOnlyList<Notification> batch, CancellationToken abort)
    {
        var transport = _transport ?? throw new InvalidOperationException("Prepare the mail target before sending.");
        using var message = Compose(batch);
        string outcome;
        try
        {
            await _pipeline.ExecuteAsync(
                static async (state, token) =>
                {
                    await state.Transport.SendAsync(state.Message, token).ConfigureAwait(false);
                    return true;
                },
                (Transport: transport, Message: message),
                abort).ConfigureAwait(false);
            CountDelivered(batch.Count);
            Logger.MailSent(Name, batch.Count, _options.To.Count);
            return true;
        }
        catch (OperationCanceledException) when (abort.IsCancellationRequested)
        {
            throw;
        }
        catch (Exception ex) when (ex is not OperationCanceledException)
        {
            outcome = Describe(ex);
        }

        var givenUp = CountGivenUp(batch.Count);
        Logger.MailGaveUp(Name, batch.Count, outcome, givenUp);
        return false;
    }

    /// <summary>The mail for <paramref name="batch"/>: from, to, subject, the date now, a plain-text body.</summary>
    internal MimeMessage Compose(IReadOnlyList<Notification> batch)
    {
        var message = new MimeMessage();
        message.From.Add(MailboxAddress.Parse(_options.From));
        foreach (var to in _options.To)
        {
            message.To.Add(MailboxAddress.Parse(to));
        }

        message.Subject = MailText.Subject(_siteName, batch);
        message.Date = TimeProvider.GetUtcNow();
        message.Body = new TextPart(MimeKit.Text.TextFormat.Plain) { Text = MailText.Body(_siteName, _zone, batch) };
        return message;
    }

    protected override async Task ConsumeAsync(ChannelReader<Notification> reader, CancellationToken stopping, CancellationToken abort)
    {
        var batch = new List<Notification>(MailText.MaxEventsPerMail);
        while (await reader.WaitToReadAsync(abort).ConfigureAwait(false))
        {
            if (!reader.TryPeek(out var first))
            {
                continue;
            }

            // Counted from the first event's own time, so a batch closes on time however late this task looks.
            var wait = first.OfferedUtc + _batch - TimeProvider.GetUtcNow();
            if (wait > TimeSpan.Zero && !stopping.IsCancellationRequested)
            {
                try
                {
                    await Task.Delay(wait, TimeProvider, stopping).ConfigureAwait(false);
                }
                catch (OperationCanceledException) when (stopping.IsCancellationRequested)
                {
                    // Stopping: send what was collected now.
                }
            }

            batch.Clear();
            while (batch.Count < MailText.MaxEventsPerMail && reader.TryRead(out var notification))
            {
                batch.Add(notification);
            }

            _inFlight = batch.Count;
            try
            {
                await SendBatchAsync(batch, abort).ConfigureAwait(false);
            }
            catch (Exception ex) when (ex is not OperationCanceledException)
            {
                // By design: whatever else went wrong ends this batch, never the target's task.
                CountGivenUp(batch.Count);
                Logger.NotifyTargetFailed(ex, Name, "mail", $"{batch.Count} events");
            }

            _inFlight = 0;
        }
    }

    protected override int AbandonedInFlight() => _inFlight;

    private NetworkCredential? Credential()
    {
        if (string.IsNullOrWhiteSpace(_options.User))
        {
            return null;
        }

        if (_options.PasswordFile is { Length: > 0 } file)
        {
            return new NetworkCredential(_options.User, Security.SecretFile.Read(file, $"{_settingKey}:PasswordFile"));
        }

        var variable = _options.PasswordEnvironmentVariable!;
        var password = _environment(variable);
        return string.IsNullOrEmpty(password)
            ? throw new StartFailureException($"{_settingKey}:PasswordEnvironmentVariable names {variable}, which is not set or empty; set it in the service's environment, or use {_settingKey}:PasswordFile.")
            : new NetworkCredential(_options.User, password);
    }

    private static bool IsTemporary(Outcome<bool> outcome) => outcome.Exception switch
    {
        // A refused certificate, a refused login or a server without STARTTLS will not change on a second try.
        SslHandshakeException or AuthenticationException or NotSupportedException => false,

        // RFC 5321 section 4.2.1: 4yz replies are transient failures, 5yz permanent.
        SmtpCommandException command => (int)command.StatusCode is >= 400 and < 500,
        SmtpProtocolException or ServiceNotConnectedException or IOException or SocketException or TimeoutException or TimeoutRejectedException => true,
        _ => false,
    };

    private string Describe(Exception? exception) => exception switch
    {
        null => "no error",
        SslHandshakeException when _transport is SmtpMailTransport { LastCertificateRefusal: { } refusal } => $"TLS refused: {refusal}",
        SmtpCommandException command => NotifyOptions.Invariant($"the server answered {(int)command.StatusCode}: {command.Message}"),
        _ => DeliveryRetry.Describe(exception, _attemptTimeout).Split('\n')[0].Trim(),
    };
}
