using HumWatch.Core.Alerts;
using HumWatch.Core.Summaries;
using HumWatch.Host.Publishing;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Notify;

/// <summary>
/// Takes each published alert, clear and summary from the dispatcher and hands it to every target whose filter takes
/// it, without waiting (each target has its own bounded queue and task). Starts before the analysis, so the clears of
/// alerts a crash left open are sent too, and stops after it, so the clears of the final drain are sent as well.
/// </summary>
internal sealed class NotificationService : IHostedService, IDispatchSink, IAsyncDisposable
{
    private readonly IReadOnlyList<NotifyTarget> _targets;
    private readonly NotifyOptions _options;
    private readonly TimeProvider _timeProvider;
    private readonly ILogger<NotificationService> _logger;
    private readonly CancellationTokenSource _stopping = new();
    private readonly CancellationTokenSource _abort = new();
    private Task[] _running = [];
    private int _disposed;

    public NotificationService(IReadOnlyList<NotifyTarget> targets, NotifyOptions options, TimeProvider timeProvider, ILogger<NotificationService> logger)
    {
        ArgumentNullException.ThrowIfNull(targets);
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(timeProvider);
        ArgumentNullException.ThrowIfNull(logger);
        _targets = targets;
        _options = options;
        _timeProvider = timeProvider;
        _logger = logger;
    }

    /// <summary>The targets, in settings order (webhooks, then mail).</summary>
    public IReadOnlyList<NotifyTarget> Targets => _targets;

    public void OnAlertDispatched(AlertEvent alertEvent, string kind, byte[] body)
    {
        ArgumentNullException.ThrowIfNull(alertEvent);
        Offer(Notification.For(alertEvent, kind, body, _timeProvider.GetUtcNow()));
    }

    public void OnSummaryPublished(DaySummary summary, byte[] body)
    {
        ArgumentNullException.ThrowIfNull(summary);
        Offer(Notification.For(summary, body, _timeProvider.GetUtcNow()));
    }

    public Task StartAsync(CancellationToken cancellationToken)
    {
        // Secrets and certificate files first: a problem stops the start with a message naming the setting.
        foreach (var target in _targets)
        {
            target.Prepare();
        }

        foreach (var target in _targets)
        {
            _logger.NotifyTargetOn(target.Name, target.Filter.ToString());
            if (target is WebhookTarget { IsInsecureRemote: true })
            {
                _logger.NotifyInsecure(target.Name, "AllowInsecureHttp", "bodies and any token cross the network unencrypted");
            }
            else if (target is MailTarget && !_options.Mail.StartTls)
            {
                _logger.NotifyInsecure(target.Name, "AllowInsecureNoTls", "mails cross the network unencrypted");
            }
        }

        _running = [.. _targets.Select(t => Task.Run(() => t.RunAsync(_stopping.Token, _abort.Token), CancellationToken.None))];
        return Task.CompletedTask;
    }

    public async Task StopAsync(CancellationToken cancellationToken)
    {
        foreach (var target in _targets)
        {
            target.Complete();
        }

        await _stopping.CancelAsync().ConfigureAwait(false);

        // Queued events may still go out until the drain deadline or the host's own, whichever comes first.
        using var deadline = new CancellationTokenSource(TimeSpan.FromSeconds(_options.StopDrainSeconds), _timeProvider);
        using var either = CancellationTokenSource.CreateLinkedTokenSource(deadline.Token, cancellationToken);
        await using (either.Token.Register(_abort.Cancel).ConfigureAwait(false))
        {
            await Task.WhenAll(_running).ConfigureAwait(false);
        }

        foreach (var target in _targets)
        {
            _logger.NotifyTargetStopped(target.Name, target.Delivered, target.GivenUp, target.Dropped);
        }
    }

    public async ValueTask DisposeAsync()
    {
        // Registered under three service types, so the container disposes it up to three times.
        if (Interlocked.Exchange(ref _disposed, 1) != 0)
        {
            return;
        }

        await _abort.CancelAsync().ConfigureAwait(false);
        try
        {
            await Task.WhenAll(_running).ConfigureAwait(false);
        }
        catch (OperationCanceledException)
        {
            // Ending anyway.
        }

        _stopping.Dispose();
        _abort.Dispose();
    }

    private void Offer(Notification notification)
    {
        foreach (var target in _targets)
        {
            target.TryOffer(notification);
        }
    }
}
