using System.Threading.Channels;
using HumWatch.Host.Ingest;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Notify;

/// <summary>
/// One place notifications go (a webhook, the mail). Owns a bounded queue that only <see cref="TryOffer"/> writes to,
/// so the dispatcher never waits; one task per target reads it, so a slow or failing target delays no other.
/// </summary>
internal abstract class NotifyTarget
{
    private readonly Channel<Notification> _queue;
    private readonly NotifyFilter _filter;
    private readonly WarningThrottle _dropWarnings;
    private readonly int _capacity;
    private long _delivered;
    private long _givenUp;
    private long _dropped;

    protected NotifyTarget(string name, NotifyFilter filter, int capacity, TimeProvider timeProvider, ILogger logger)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(name);
        ArgumentOutOfRangeException.ThrowIfLessThan(capacity, 1);
        ArgumentNullException.ThrowIfNull(timeProvider);
        ArgumentNullException.ThrowIfNull(logger);
        Name = name;
        _filter = filter;
        _capacity = capacity;
        TimeProvider = timeProvider;
        Logger = logger;
        _queue = Channel.CreateBounded<Notification>(new BoundedChannelOptions(capacity)
        {
            FullMode = BoundedChannelFullMode.Wait, // with TryWrite: full means false, counted as a drop, never a wait
            SingleReader = true,
        });
        _dropWarnings = new WarningThrottle(timeProvider, TimeSpan.FromSeconds(10));
    }

    /// <summary>The setting that made it and where it sends, never a secret: "Notify:Webhooks:0 (https://hooks.lab.example/humwatch)".</summary>
    public string Name { get; }

    /// <summary>What it takes, for the start-up line.</summary>
    public NotifyFilter Filter => _filter;

    /// <summary>Notifications this target delivered (a mail counts each event it listed).</summary>
    public long Delivered => Interlocked.Read(ref _delivered);

    /// <summary>Notifications given up on after the last attempt, or at once on a permanent refusal.</summary>
    public long GivenUp => Interlocked.Read(ref _givenUp);

    /// <summary>Notifications dropped because the queue was full, or left when the stop deadline passed.</summary>
    public long Dropped => Interlocked.Read(ref _dropped);

    protected TimeProvider TimeProvider { get; }

    protected ILogger Logger { get; }

    /// <summary>Queues <paramref name="notification"/> when the filter takes it; never waits. False when filtered out or dropped.</summary>
    public bool TryOffer(Notification notification)
    {
        if (!_filter.Accepts(notification))
        {
            return false;
        }

        if (_queue.Writer.TryWrite(notification))
        {
            return true;
        }

        var dropped = Interlocked.Increment(ref _dropped);
        if (_dropWarnings.ShouldWarn(Name, out var suppressed))
        {
            Logger.NotifyQueueFull(Name, _capacity, notification.Kind, notification.Stream, dropped, suppressed);
        }

        return false;
    }

    /// <summary>Reads secrets and files the target needs; a problem a person can fix is a <see cref="StartFailureException"/>.</summary>
    public virtual void Prepare()
    {
    }

    /// <summary>
    /// The target's task: delivers until the queue is closed and empty. <paramref name="stopping"/> ends waits that
    /// only collect (a mail batch); <paramref name="abort"/> ends everything when the stop deadline passes.
    /// </summary>
    public async Task RunAsync(CancellationToken stopping, CancellationToken abort)
    {
        try
        {
            await ConsumeAsync(_queue.Reader, stopping, abort).ConfigureAwait(false);
        }
        catch (OperationCanceledException) when (abort.IsCancellationRequested)
        {
            // The stop deadline passed: what is still queued is counted, not delivered.
            var left = 0;
            while (_queue.Reader.TryRead(out _))
            {
                left++;
            }

            left += AbandonedInFlight();
            if (left > 0)
            {
                Interlocked.Add(ref _dropped, left);
                Logger.NotifyLeftAtStop(Name, left);
            }
        }
    }

    /// <summary>No more offers are taken; the task ends once the queue is empty.</summary>
    public void Complete() => _queue.Writer.TryComplete();

    protected abstract Task ConsumeAsync(ChannelReader<Notification> reader, CancellationToken stopping, CancellationToken abort);

    /// <summary>Notifications taken off the queue but not delivered when the task was aborted.</summary>
    protected virtual int AbandonedInFlight() => 0;

    protected void CountDelivered(int count) => Interlocked.Add(ref _delivered, count);

    /// <summary>Counts <paramref name="count"/> given up and returns the total so far.</summary>
    protected long CountGivenUp(int count) => Interlocked.Add(ref _givenUp, count);
}
