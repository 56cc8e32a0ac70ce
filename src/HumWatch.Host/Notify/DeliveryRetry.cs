using Polly;
using Polly.Retry;
using Polly.Timeout;

namespace HumWatch.Host.Notify;

/// <summary>The one retry shape of every notification target: a time limit per attempt inside retries with exponential backoff and jitter, capped.</summary>
internal static class DeliveryRetry
{
    /// <param name="retry">Attempts and delays.</param>
    /// <param name="attemptTimeout">Time allowed for one attempt; a late one counts as a temporary failure.</param>
    /// <param name="timeProvider">Clock of the waits and time limits.</param>
    /// <param name="isTemporary">Whether an outcome is worth another attempt (a server error, no answer, a lost connection).</param>
    /// <param name="onRetry">Called with the number of the failed attempt (1-based), its outcome and the wait before the next one.</param>
    public static ResiliencePipeline<T> Build<T>(
        NotifyRetryOptions retry,
        TimeSpan attemptTimeout,
        TimeProvider timeProvider,
        Func<Outcome<T>, bool> isTemporary,
        Action<int, Outcome<T>, TimeSpan> onRetry)
    {
        ArgumentNullException.ThrowIfNull(retry);
        var builder = new ResiliencePipelineBuilder<T> { TimeProvider = timeProvider };
        if (retry.Attempts > 1)
        {
            builder.AddRetry(new RetryStrategyOptions<T>
            {
                MaxRetryAttempts = retry.Attempts - 1,
                BackoffType = DelayBackoffType.Exponential,
                UseJitter = true, // many HumWatch instances failing at once must not retry in step
                Delay = TimeSpan.FromSeconds(retry.FirstDelaySeconds),
                MaxDelay = TimeSpan.FromSeconds(retry.MaxDelaySeconds),
                ShouldHandle = args => ValueTask.FromResult(isTemporary(args.Outcome)),
                OnRetry = args =>
                {
                    onRetry(args.AttemptNumber + 1, args.Outcome, args.RetryDelay);
                    return default;
                },
            });
        }

        // Added after the retry, so it sits inside it: each attempt gets the whole limit.
        builder.AddTimeout(attemptTimeout);
        return builder.Build();
    }

    /// <summary>How an attempt that threw is written in the log: the limit for a time-out, else the exception's type and message.</summary>
    public static string Describe(Exception exception, TimeSpan attemptTimeout) => exception switch
    {
        TimeoutRejectedException => NotifyOptions.Invariant($"no answer within {attemptTimeout.TotalSeconds:0.###} s"),
        _ when exception.InnerException is { } inner && exception is HttpRequestException => $"{exception.Message} ({inner.Message})",
        _ => $"{exception.GetType().Name}: {exception.Message}",
    };
}
