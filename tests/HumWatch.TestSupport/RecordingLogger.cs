using Microsoft.Extensions.Logging;

namespace HumWatch.TestSupport;

/// <summary>One log call as the logger saw it.</summary>
public sealed record LogEntry(LogLevel Level, EventId EventId, string Message, Exception? Exception);

/// <summary>Keeps every log entry for assertions (thread-safe); optionally adds "log" to a shared step list per call.</summary>
public sealed class RecordingLogger<T>(List<string>? steps = null) : ILogger<T>
{
    private readonly List<LogEntry> _entries = [];

    /// <summary>A snapshot of the entries so far, oldest first.</summary>
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

    public IDisposable? BeginScope<TState>(TState state)
        where TState : notnull => null;

    public bool IsEnabled(LogLevel logLevel) => true;

    public void Log<TState>(LogLevel logLevel, EventId eventId, TState state, Exception? exception, Func<TState, Exception?, string> formatter)
    {
        ArgumentNullException.ThrowIfNull(formatter);
        lock (_entries)
        {
            _entries.Add(new LogEntry(logLevel, eventId, formatter(state, exception), exception));
            steps?.Add("log");
        }
    }
}
