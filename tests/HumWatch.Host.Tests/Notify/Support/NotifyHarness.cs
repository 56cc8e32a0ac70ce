using HumWatch.Core.Alerts;
using HumWatch.Host.Configuration;
using HumWatch.Host.Notify;
using HumWatch.Host.Publishing;
using HumWatch.Host.Store;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Logging;
using Xunit;

namespace HumWatch.Host.Tests.Notify.Support;

/// <summary>
/// Notifications wired as the host wires them (<see cref="NotifyServiceCollectionExtensions.AddHumWatchNotify"/>), fed
/// by a real <see cref="AlertDispatcher"/> with an in-memory store and a recording publisher.
/// </summary>
internal sealed class NotifyHarness : IAsyncDisposable
{
    private readonly ServiceProvider _services;
    private bool _started;

    public NotifyHarness(NotifyOptions options, TimeProvider? timeProvider = null, SiteOptions? site = null, IReadOnlyDictionary<string, string?>? environment = null)
    {
        var services = new ServiceCollection();
        services.AddLogging(b => b.AddProvider(Logs).SetMinimumLevel(LogLevel.Trace));
        if (timeProvider is not null)
        {
            services.AddSingleton(timeProvider);
        }

        services.AddHumWatchNotify(options, site ?? new SiteOptions { Name = "Test lab", TimeZone = "Europe/Berlin" }, environment ?? new Dictionary<string, string?>());
        _services = services.BuildServiceProvider();
        Notifier = _services.GetRequiredService<NotificationService>();
        Dispatcher = new AlertDispatcher(new MemoryStore(), Publisher, new RecordingLogger<AlertDispatcher>(), sinks: _services.GetServices<IDispatchSink>());
    }

    public RecordingLoggerProvider Logs { get; } = new();

    public RecordingPublisher Publisher { get; } = new();

    public NotificationService Notifier { get; }

    public AlertDispatcher Dispatcher { get; }

    public NotifyTarget Target => Assert.Single(Notifier.Targets);

    /// <summary>Options of one webhook at <paramref name="url"/>, retrying quickly (real time).</summary>
    public static NotifyOptions Webhook(string url, Action<WebhookOptions>? configure = null)
    {
        var options = new NotifyOptions();
        options.Retry.Attempts = 3;
        options.Retry.FirstDelaySeconds = 0.02;
        options.Retry.MaxDelaySeconds = 0.1;
        var webhook = new WebhookOptions { Url = url, TimeoutSeconds = 20 };
        configure?.Invoke(webhook);
        options.Webhooks.Add(webhook);
        Assert.Empty(options.Validate());
        return options;
    }

    public async Task StartAsync()
    {
        await Notifier.StartAsync(CancellationToken.None);
        _started = true;
    }

    public (bool Stored, bool Published) Dispatch(AlertEvent alertEvent) => Dispatcher.Dispatch(alertEvent);

    /// <summary>Waits (at most 30 s) until the target has delivered <paramref name="count"/> notifications.</summary>
    public async Task WaitDeliveredAsync(long count) => await WaitAsync(() => Target.Delivered >= count, $"{count} delivered");

    public async Task WaitGivenUpAsync(long count) => await WaitAsync(() => Target.GivenUp >= count, $"{count} given up");

    public async Task StopAsync()
    {
        if (_started)
        {
            _started = false;
            using var deadline = new CancellationTokenSource(TimeSpan.FromSeconds(30));
            await Notifier.StopAsync(deadline.Token);
        }
    }

    public async ValueTask DisposeAsync()
    {
        await StopAsync();
        await _services.DisposeAsync();
    }

    private async Task WaitAsync(Func<bool> done, string what)
    {
        for (var waited = 0; waited < 3000 && !done(); waited++)
        {
            await Task.Delay(10);
        }

        Assert.True(done(), $"not {what} within 30 s: delivered {Target.Delivered}, given up {Target.GivenUp}, dropped {Target.Dropped}; log: {string.Join(" | ", Logs.Entries.Select(e => e.Message))}");
    }

    private sealed class MemoryStore : IAlertEventStore
    {
        private long _count;

        public long AppendAlert(AlertEvent alertEvent) => Interlocked.Increment(ref _count);
    }
}
