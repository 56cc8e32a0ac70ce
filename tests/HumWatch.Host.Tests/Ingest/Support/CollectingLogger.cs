using System.Collections.Concurrent;
using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Tests.Ingest.Support;

/// <summary>Keeps every log entry for assertions. Thread-safe.</summary>
internal sealed class CollectingLogger<T> : ILogger<T>
{
    private readonly ConcurrentQueue<LogEntry> _entries = new();

    public IReadOnlyList<LogEntry> Entries => [.. _entries];

    public IDisposable? BeginScope<TState>(TState state) where TState : notnull => null;

    public bool IsEnabled(LogLevel logLevel) => true;

    public void Log<TState>(LogLevel logLevel, EventId eventId, TState state, Exception? exception, Func<TState, Exception?, string> formatter) =>
        _entries.Enqueue(new LogEntry(logLevel, eventId.Id, formatter(state, exception)));
}

internal sealed record LogEntry(LogLevel Level, int EventId, string Message);
