using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Inbox;

/// <summary>Source-generated log messages of the folder inbox. Event ids 4000–4099.</summary>
internal static partial class InboxLog
{
    [LoggerMessage(EventId = 4001, Level = LogLevel.Information, Message = "Inbox: watching {Folder}")]
    public static partial void Watching(this ILogger logger, string folder);

    [LoggerMessage(EventId = 4002, Level = LogLevel.Information, Message = "Inbox: {File} checked as stream {Stream}: {Verdict}, {Lines} line(s), {Faults} channel fault(s); archived to {Archive}")]
    public static partial void Archived(this ILogger logger, string file, string stream, string verdict, int lines, int faults, string archive);

    [LoggerMessage(EventId = 4003, Level = LogLevel.Warning, Message = "Inbox: {File} rejected: {Reason}")]
    public static partial void Rejected(this ILogger logger, string file, string reason);

    [LoggerMessage(EventId = 4004, Level = LogLevel.Information, Message = "Inbox: {File} has the same content as a file already {State}; moved without checking it again")]
    public static partial void AlreadyProcessed(this ILogger logger, string file, string state);

    [LoggerMessage(EventId = 4005, Level = LogLevel.Error, Message = "Inbox: {File} could not be processed; it stays in the inbox and is tried again")]
    public static partial void ProcessFailed(this ILogger logger, Exception exception, string file);

    [LoggerMessage(EventId = 4006, Level = LogLevel.Error, Message = "Inbox: scanning {Folder} failed")]
    public static partial void ScanFailed(this ILogger logger, Exception exception, string folder);

    [LoggerMessage(EventId = 4007, Level = LogLevel.Information, Message = "Inbox: {File} is checked again after an interrupted attempt; {Skipped} alert event(s) already stored were not stored or published again")]
    public static partial void RecheckSkipped(this ILogger logger, string file, int skipped);
}
