using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Tests.Notify.Support;

/// <summary>Keeps the entries of every logger it makes in one list (thread-safe), for services that log through a factory.</summary>
internal sealed class RecordingLoggerProvider : ILoggerProvider
{
    private readonly List<LogEntry> _entries = [];

    public IReadOnlyList<LogEntry> Entries
    {
        get
        {
            lock (_entries)
            {
                return [.. _entries];
            }
        }
    }

    /// <summary>Entries with this event id.</summary>
    public List<LogEntry> WithId(int id) => [.. Entries.Where(e => e.EventId.Id == id)];

    /// <summary>Waits (at most 30 s) until <paramref name="count"/> entries with <paramref name="id"/> were logged, and returns them.</summary>
    public async Task<List<LogEntry>> WaitForAsync(int id, int count = 1)
    {
        for (var waited = 0; waited < 3000; waited++)
        {
            var found = WithId(id);
            if (found.Count >= count)
            {
                return found;
            }

            await Task.Delay(10);
        }

        throw new TimeoutException($"event {id} was logged {WithId(id).Count} times within 30 s, expected {count}: {string.Join(" | ", Entries.Select(e => e.Message))}");
    }

    public ILogger CreateLogger(string categoryName) => new Logger(this);

    public void Dispose()
    {
    }

    private sealed class Logger(RecordingLoggerProvider owner) : ILogger
    {
        public IDisposable? BeginScope<TState>(TState state)
            where TState : notnull => null;

        public bool IsEnabled(LogLevel logLevel) => true;

        public void Log<TState>(LogLevel logLevel, EventId eventId, TState state, Exception? exception, Func<TState, Exception?, string> formatter)
        {
            lock (owner._entries)
            {
                owner._entries.Add(new LogEntry(logLevel, eventId, formatter(state, exception), exception));
            }
        }
    }
}
