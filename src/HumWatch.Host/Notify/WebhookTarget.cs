using System.Net;
using System.Net.Http.Headers;
using System.Threading.Channels;
using Microsoft.Extensions.Logging;
using Polly;
using Polly.Timeout;

namespace HumWatch.Host.Notify;

/// <summary>
/// POSTs each notification's published body to one webhook, Content-Type application/json, with headers naming the
/// kind and a delivery id that stays the same across attempts. Server errors (5xx, 408, 429), time-outs and lost
/// connections are tried again with backoff; any other answer is final.
/// </summary>
internal sealed class WebhookTarget : NotifyTarget
{
    /// <summary>Name of the HttpClient every webhook takes from the factory.</summary>
    public const string ClientName = "HumWatch.Notify";

    /// <summary>Header with the message kind: alert, clear or summary.</summary>
    public const string KindHeader = "HumWatch-Kind";

    /// <summary>Header with a delivery id, the same on every attempt at one notification.</summary>
    public const string DeliveryHeader = "HumWatch-Delivery";

    private static readonly MediaTypeHeaderValue Json = new("application/json");

    private readonly WebhookOptions _options;
    private readonly string _settingKey;
    private readonly IHttpClientFactory _clients;
    private readonly Uri _url;
    private readonly TimeSpan _attemptTimeout;
    private readonly ResiliencePipeline<HttpResponseMessage> _pipeline;
    private string? _headerValue;
    private int _inFlight;

    public WebhookTarget(string settingKey, WebhookOptions options, NotifyRetryOptions retry, int capacity, IHttpClientFactory clients, TimeProvider timeProvider, ILogger logger)
        : base($"{settingKey} ({WebhookAddress.Redact(options?.Url)})", new NotifyFilter(options!.Kinds, options.MinimumSeverity), capacity, timeProvider, logger)
    {
        ArgumentNullException.ThrowIfNull(clients);
        _options = options;
        _settingKey = settingKey;
        _clients = clients;
        _url = new Uri(options.Url, UriKind.Absolute);
        _attemptTimeout = TimeSpan.FromSeconds(options.TimeoutSeconds);
        _pipeline = DeliveryRetry.Build<HttpResponseMessage>(retry, _attemptTimeout, timeProvider, IsTemporary, (attempt, outcome, delay) =>
            Logger.NotifyRetrying(Name, attempt, Describe(outcome), delay.TotalSeconds));
    }

    /// <summary>Whether the address is plain http:// to another host (allowed only with AllowInsecureHttp; warned about at start).</summary>
    public bool IsInsecureRemote => _url.Scheme == Uri.UriSchemeHttp && !_url.IsLoopback;

    public override void Prepare()
    {
        if (_options.TokenFile is { Length: > 0 } tokenFile)
        {
            _headerValue = Security.SecretFile.Read(tokenFile, $"{_settingKey}:TokenFile");
            if (_headerValue.Any(char.IsControl))
            {
                throw new StartFailureException($"{_settingKey}:TokenFile '{tokenFile}' holds more than one line or control characters; a header value is one line.");
            }
        }
    }

    /// <summary>Delivers one notification, trying again as configured; true when the webhook took it (2xx).</summary>
    internal async Task<bool> DeliverAsync(Notification notification, CancellationToken abort)
    {
        string outcome;
        try
        {
            using var response = await _pipeline.ExecuteAsync(
                static async (state, token) =>
                {
                    using var request = state.Target.Request(state.Notification);
                    return await state.Target._clients.CreateClient(ClientName)
                        .SendAsync(request, HttpCompletionOption.ResponseHeadersRead, token).ConfigureAwait(false);
                },
                (Target: this, Notification: notification),
                abort).ConfigureAwait(false);
            if (response.IsSuccessStatusCode)
            {
                CountDelivered(1);
                Logger.WebhookDelivered(Name, notification.Kind, notification.Stream, (int)response.StatusCode);
                return true;
            }

            outcome = Describe(response);
        }
        catch (OperationCanceledException) when (abort.IsCancellationRequested)
        {
            throw;
        }
        catch (Exception ex) when (ex is HttpRequestException or TimeoutRejectedException or IOException or OperationCanceledException)
        {
            outcome = DeliveryRetry.Describe(ex, _attemptTimeout);
        }

        var givenUp = CountGivenUp(1);
        Logger.NotifyGaveUp(Name, notification.Kind, notification.Stream, outcome, givenUp);
        return false;
    }

    protected override async Task ConsumeAsync(ChannelReader<Notification> reader, CancellationToken stopping, CancellationToken abort)
    {
        await foreach (var notification in reader.ReadAllAsync(abort).ConfigureAwait(false))
        {
            _inFlight = 1;
            try
            {
                await DeliverAsync(notification, abort).ConfigureAwait(false);
            }
            catch (Exception ex) when (ex is not OperationCanceledException)
            {
                // By design: whatever else went wrong ends this notification, never the target's task.
                CountGivenUp(1);
                Logger.NotifyTargetFailed(ex, Name, notification.Kind, notification.Stream);
            }

            _inFlight = 0;
        }
    }

    protected override int AbandonedInFlight() => _inFlight;

    private HttpRequestMessage Request(Notification notification)
    {
        var content = new ByteArrayContent(notification.Body);
        content.Headers.ContentType = Json;
        var request = new HttpRequestMessage(HttpMethod.Post, _url) { Content = content };
        request.Headers.Add(KindHeader, notification.Kind);
        request.Headers.Add(DeliveryHeader, notification.DeliveryId.ToString("D"));
        if (_headerValue is not null)
        {
            request.Headers.TryAddWithoutValidation(_options.HeaderName!, _headerValue);
        }

        return request;
    }

    private static bool IsTemporary(Outcome<HttpResponseMessage> outcome) => outcome switch
    {
        { Exception: HttpRequestException or TimeoutRejectedException or IOException } => true,
        { Result: { } response } => IsTemporary(response.StatusCode),
        _ => false,
    };

    // Common practice, no source: a server error or an explicit "later" (408, 429) may pass; other refusals will not.
    private static bool IsTemporary(HttpStatusCode status) =>
        (int)status >= 500 || status is HttpStatusCode.RequestTimeout or HttpStatusCode.TooManyRequests;

    private string Describe(Outcome<HttpResponseMessage> outcome) =>
        outcome.Result is { } response ? Describe(response) : DeliveryRetry.Describe(outcome.Exception!, _attemptTimeout);

    private static string Describe(HttpResponseMessage response) =>
        NotifyOptions.Invariant($"HTTP {(int)response.StatusCode} {response.ReasonPhrase}").TrimEnd();
}
