using System.Globalization;
using HumWatch.Core.Alerts;

namespace HumWatch.Host.Notify;

/// <summary>Which published kinds a notification target takes. Written in settings as "Alert, Clear" (any case).</summary>
[Flags]
public enum NotifyKinds
{
    /// <summary>Nothing (not valid for a target).</summary>
    None = 0,

    /// <summary>"alert/&lt;stream&gt;": raises and severity changes.</summary>
    Alert = 1,

    /// <summary>"clear/&lt;stream&gt;": an alert ended.</summary>
    Clear = 2,

    /// <summary>"summary/&lt;stream&gt;": a stream's daily summary.</summary>
    Summary = 4,
}

/// <summary>
/// Notifications beyond the PUB socket: webhooks and e-mail. Bound from section "Notify". Off by default: no webhook
/// is listed and <see cref="MailOptions.Enabled"/> is false.
/// </summary>
public sealed class NotifyOptions
{
    /// <summary>Configuration section name ("Notify").</summary>
    public const string SectionName = "Notify";

    /// <summary>Webhooks, each an HTTP POST of the message body. The default is none.</summary>
    public IList<WebhookOptions> Webhooks { get; } = [];

    /// <summary>One e-mail per batch of events. Off by default.</summary>
    public MailOptions Mail { get; } = new();

    /// <summary>How failed deliveries are tried again (webhooks and mail alike).</summary>
    public NotifyRetryOptions Retry { get; } = new();

    /// <summary>Events waiting per target, 1 to 100 000; when full, new events for that target are dropped and counted. The default is 1000.</summary>
    public int QueueCapacity { get; set; } = 1000;

    /// <summary>At a stop, how long queued events may still take to go out, 0 to 60 s (pending mail is sent at once, without waiting for its batch). The default is 10 s.</summary>
    public double StopDrainSeconds { get; set; } = 10;

    /// <summary>True when any webhook or the mail is on.</summary>
    public bool AnyEnabled => Mail.Enabled || Webhooks.Any(w => w.Enabled);

    /// <summary>One message per problem, each naming the configuration key; empty when valid.</summary>
    public IReadOnlyList<string> Validate(string prefix = SectionName)
    {
        var errors = new List<string>();
        for (var i = 0; i < Webhooks.Count; i++)
        {
            Webhooks[i].Validate($"{prefix}:Webhooks:{i}", errors);
        }

        Mail.Validate($"{prefix}:Mail", errors);
        Retry.Validate($"{prefix}:Retry", errors);
        if (QueueCapacity is < 1 or > 100_000)
        {
            errors.Add($"{prefix}:QueueCapacity must be between 1 and 100000 (got {QueueCapacity}).");
        }

        if (!(StopDrainSeconds >= 0 && StopDrainSeconds <= 60))
        {
            errors.Add(Invariant($"{prefix}:StopDrainSeconds must be between 0 and 60 s (got {StopDrainSeconds})."));
        }

        return errors;
    }

    internal static void CheckFilter(string prefix, NotifyKinds kinds, AlertSeverity minimumSeverity, List<string> errors)
    {
        if (kinds == NotifyKinds.None || (kinds & ~(NotifyKinds.Alert | NotifyKinds.Clear | NotifyKinds.Summary)) != 0)
        {
            errors.Add($"{prefix}:Kinds must name one or more of Alert, Clear, Summary, e.g. \"Alert, Clear\" (got \"{kinds}\").");
        }

        if (minimumSeverity is not (AlertSeverity.Minor or AlertSeverity.Marked or AlertSeverity.Severe))
        {
            errors.Add($"{prefix}:MinimumSeverity must be Minor, Marked or Severe (got \"{minimumSeverity}\").");
        }
    }

    internal static void CheckSeconds(string key, double value, double min, double max, List<string> errors)
    {
        if (!(value >= min && value <= max))
        {
            errors.Add(Invariant($"{key} must be between {min} and {max} s (got {value})."));
        }
    }

    internal static string Invariant(FormattableString text) => text.ToString(CultureInfo.InvariantCulture);
}

/// <summary>One webhook: every event it takes is POSTed to <see cref="Url"/> with the published JSON body.</summary>
public sealed class WebhookOptions
{
    /// <summary>Whether this webhook is used. The default is true (a listed webhook is on).</summary>
    public bool Enabled { get; set; } = true;

    /// <summary>Absolute http:// or https:// address to POST to. Required.</summary>
    public string Url { get; set; } = string.Empty;

    /// <summary>
    /// Must be true for an http:// address to a host other than loopback: bodies (and any token) then cross the network
    /// unencrypted. Logged as a warning. The default is false.
    /// </summary>
    public bool AllowInsecureHttp { get; set; }

    /// <summary>Which kinds are sent. The default is Alert, Clear.</summary>
    public NotifyKinds Kinds { get; set; } = NotifyKinds.Alert | NotifyKinds.Clear;

    /// <summary>
    /// Least severity of alerts and clears that are sent (a clear counts with the highest severity its alert reached);
    /// summaries are not filtered by it. The default is Minor (all).
    /// </summary>
    public AlertSeverity MinimumSeverity { get; set; } = AlertSeverity.Minor;

    /// <summary>Name of a request header that carries a token (e.g. Authorization); null (the default) sends none.</summary>
    public string? HeaderName { get; set; }

    /// <summary>File whose content (trimmed) is the value of <see cref="HeaderName"/>, e.g. "Bearer …"; it must not be readable by other users.</summary>
    public string? TokenFile { get; set; }

    /// <summary>Time allowed for one attempt, 1 to 300 s. The default is 10 s.</summary>
    public double TimeoutSeconds { get; set; } = 10;

    internal void Validate(string prefix, List<string> errors)
    {
        if (!Enabled)
        {
            return;
        }

        if (!Uri.TryCreate(Url, UriKind.Absolute, out var uri) || (uri.Scheme != Uri.UriSchemeHttp && uri.Scheme != Uri.UriSchemeHttps))
        {
            errors.Add($"{prefix}:Url must be an absolute http:// or https:// address (got \"{WebhookAddress.Redact(Url)}\").");
        }
        else if (uri.Scheme == Uri.UriSchemeHttp && !uri.IsLoopback && !AllowInsecureHttp)
        {
            errors.Add($"{prefix}:Url {WebhookAddress.Redact(Url)} is plain http:// to another host, so bodies and any token would cross the network unencrypted; "
                + $"use https://, or set {prefix}:AllowInsecureHttp = true to accept that on a trusted network.");
        }

        NotifyOptions.CheckFilter(prefix, Kinds, MinimumSeverity, errors);
        var hasHeader = !string.IsNullOrWhiteSpace(HeaderName);
        var hasToken = !string.IsNullOrWhiteSpace(TokenFile);
        if (hasHeader != hasToken)
        {
            errors.Add($"{prefix}:HeaderName and {prefix}:TokenFile go together: set both to send a token, or neither.");
        }
        else if (hasHeader && !IsToken(HeaderName!))
        {
            errors.Add($"{prefix}:HeaderName must be an HTTP header name (letters, digits and !#$%&'*+-.^_`|~), e.g. Authorization (got \"{HeaderName}\").");
        }

        NotifyOptions.CheckSeconds($"{prefix}:TimeoutSeconds", TimeoutSeconds, 1, 300, errors);
    }

    // RFC 9110 section 5.6.2: token = 1*tchar.
    private static bool IsToken(string name) => name.All(c => char.IsAsciiLetterOrDigit(c) || "!#$%&'*+-.^_`|~".Contains(c, StringComparison.Ordinal));
}

/// <summary>E-mail: events are collected for <see cref="BatchSeconds"/> and sent as one plain-text mail.</summary>
public sealed class MailOptions
{
    /// <summary>Whether mail is sent. The default is false.</summary>
    public bool Enabled { get; set; }

    /// <summary>SMTP server host name or address. Required when enabled.</summary>
    public string Host { get; set; } = string.Empty;

    /// <summary>SMTP port, 1 to 65535. The default is 587 (submission with STARTTLS).</summary>
    public int Port { get; set; } = 587;

    /// <summary>Whether the connection must be upgraded with STARTTLS before anything is sent; a server that does not offer it is refused. The default is true.</summary>
    public bool StartTls { get; set; } = true;

    /// <summary>Must be true when <see cref="StartTls"/> is false: mails then cross the network unencrypted. Logged as a warning. The default is false.</summary>
    public bool AllowInsecureNoTls { get; set; }

    /// <summary>
    /// SHA-256 fingerprint of the server's own certificate (64 hex digits, colons allowed) that is trusted even when no
    /// trusted authority signed it; null (the default) trusts only what the system trusts (or <see cref="CaFile"/>).
    /// </summary>
    public string? TrustedCertificateSha256 { get; set; }

    /// <summary>PEM file of the authority (or authorities) that signed the server's certificate, trusted in addition to the system's; null (the default) for none.</summary>
    public string? CaFile { get; set; }

    /// <summary>User name to log in with; null (the default) sends without logging in.</summary>
    public string? User { get; set; }

    /// <summary>File holding the password of <see cref="User"/> (trimmed); it must not be readable by other users.</summary>
    public string? PasswordFile { get; set; }

    /// <summary>Name of an environment variable holding the password of <see cref="User"/>, instead of <see cref="PasswordFile"/>.</summary>
    public string? PasswordEnvironmentVariable { get; set; }

    /// <summary>Sender address, e.g. "HumWatch &lt;humwatch@lab.example&gt;". Required when enabled.</summary>
    public string From { get; set; } = string.Empty;

    /// <summary>Recipient addresses; at least one when enabled.</summary>
    public IList<string> To { get; } = [];

    /// <summary>
    /// How long events are collected before one mail goes out, 0 to 86 400 s, counted from the first event of a batch;
    /// a bad morning of forty events is one mail. The default is 120 s.
    /// </summary>
    public double BatchSeconds { get; set; } = 120;

    /// <summary>Which kinds are mailed. The default is Alert, Clear.</summary>
    public NotifyKinds Kinds { get; set; } = NotifyKinds.Alert | NotifyKinds.Clear;

    /// <summary>Least severity of alerts and clears that are mailed (as for webhooks). The default is Minor (all).</summary>
    public AlertSeverity MinimumSeverity { get; set; } = AlertSeverity.Minor;

    /// <summary>Time allowed for one attempt (connect, log in, send), 1 to 300 s. The default is 60 s.</summary>
    public double TimeoutSeconds { get; set; } = 60;

    internal void Validate(string prefix, List<string> errors)
    {
        if (!Enabled)
        {
            return;
        }

        if (string.IsNullOrWhiteSpace(Host) || Uri.CheckHostName(Host) == UriHostNameType.Unknown)
        {
            errors.Add($"{prefix}:Host must name the SMTP server (a host name or address) when {prefix}:Enabled is true (got \"{Host}\").");
        }

        if (Port is < 1 or > 65535)
        {
            errors.Add($"{prefix}:Port must be between 1 and 65535 (got {Port}).");
        }

        if (!StartTls && !AllowInsecureNoTls)
        {
            errors.Add($"{prefix}:StartTls is false, so mails would cross the network unencrypted; set {prefix}:AllowInsecureNoTls = true to accept that, or keep StartTls on.");
        }

        if (!StartTls && (TrustedCertificateSha256 is not null || CaFile is not null))
        {
            errors.Add($"{prefix}:TrustedCertificateSha256 and {prefix}:CaFile apply to STARTTLS only; {prefix}:StartTls is false.");
        }

        if (TrustedCertificateSha256 is { } pin && MailCertificateTrust.ParseSha256(pin) is null)
        {
            errors.Add($"{prefix}:TrustedCertificateSha256 must be 64 hexadecimal digits (colons or spaces between pairs allowed), the SHA-256 of the server's certificate (got \"{pin}\").");
        }

        if (CaFile is { Length: 0 })
        {
            errors.Add($"{prefix}:CaFile must name a PEM file, or be null.");
        }

        ValidateLogin(prefix, errors);
        if (!MimeKit.MailboxAddress.TryParse(From, out _))
        {
            errors.Add($"{prefix}:From must be one mail address, e.g. \"HumWatch <humwatch@lab.example>\" (got \"{From}\").");
        }

        if (To.Count == 0)
        {
            errors.Add($"{prefix}:To must list at least one recipient address when {prefix}:Enabled is true.");
        }

        for (var i = 0; i < To.Count; i++)
        {
            if (!MimeKit.MailboxAddress.TryParse(To[i], out _))
            {
                errors.Add($"{prefix}:To:{i} must be one mail address (got \"{To[i]}\").");
            }
        }

        NotifyOptions.CheckSeconds($"{prefix}:BatchSeconds", BatchSeconds, 0, 86_400, errors);
        NotifyOptions.CheckFilter(prefix, Kinds, MinimumSeverity, errors);
        NotifyOptions.CheckSeconds($"{prefix}:TimeoutSeconds", TimeoutSeconds, 1, 300, errors);
    }

    private void ValidateLogin(string prefix, List<string> errors)
    {
        var hasFile = !string.IsNullOrWhiteSpace(PasswordFile);
        var hasVariable = !string.IsNullOrWhiteSpace(PasswordEnvironmentVariable);
        if (string.IsNullOrWhiteSpace(User))
        {
            if (hasFile || hasVariable)
            {
                errors.Add($"{prefix}:PasswordFile and {prefix}:PasswordEnvironmentVariable need {prefix}:User.");
            }

            return;
        }

        if (hasFile == hasVariable)
        {
            errors.Add($"{prefix}:User needs its password from exactly one of {prefix}:PasswordFile and {prefix}:PasswordEnvironmentVariable.");
        }

        if (!StartTls)
        {
            errors.Add($"{prefix}:User is set but {prefix}:StartTls is false: the password would be sent unencrypted. Keep StartTls on to log in.");
        }
    }
}

/// <summary>Tries again after a failed delivery, waiting longer each time (exponential, with random jitter), up to a cap.</summary>
public sealed class NotifyRetryOptions
{
    /// <summary>Attempts per delivery including the first, 1 to 20. The default is 6.</summary>
    public int Attempts { get; set; } = 6;

    /// <summary>Wait before the second attempt, 0.01 to 600 s; doubled for each further one. The default is 2 s.</summary>
    public double FirstDelaySeconds { get; set; } = 2;

    /// <summary>Longest wait between attempts, 0.01 to 3600 s and at least <see cref="FirstDelaySeconds"/>. The default is 60 s.</summary>
    public double MaxDelaySeconds { get; set; } = 60;

    internal void Validate(string prefix, List<string> errors)
    {
        if (Attempts is < 1 or > 20)
        {
            errors.Add($"{prefix}:Attempts must be between 1 and 20 (got {Attempts}).");
        }

        NotifyOptions.CheckSeconds($"{prefix}:FirstDelaySeconds", FirstDelaySeconds, 0.01, 600, errors);
        NotifyOptions.CheckSeconds($"{prefix}:MaxDelaySeconds", MaxDelaySeconds, 0.01, 3600, errors);
        if (MaxDelaySeconds < FirstDelaySeconds)
        {
            errors.Add(NotifyOptions.Invariant($"{prefix}:MaxDelaySeconds ({MaxDelaySeconds} s) must be at least {prefix}:FirstDelaySeconds ({FirstDelaySeconds} s)."));
        }
    }
}
