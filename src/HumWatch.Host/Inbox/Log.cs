using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Inbox;

/// <summary>Source-generated log messages of the folder inbox. Event ids 4000–4099 and 1345–1350.</summary>
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

    [LoggerMessage(EventId = 1345, Level = LogLevel.Information, Message = "Inbox: {File} stays in the inbox until the store {Store} takes writes again, and is taken again then")]
    public static partial void HeldForStore(this ILogger logger, string file, string store);

    [LoggerMessage(EventId = 1346, Level = LogLevel.Information,
        Message = "Inbox: {File} is checked; it stays in the inbox until the store {Store} has taken its alert events, minute rows and journal entry, and is moved then")]
    public static partial void CompletionDeferred(this ILogger logger, string file, string store);

    [LoggerMessage(EventId = 1347, Level = LogLevel.Information, Message = "Inbox: no new file is taken while the store {Store} is {Fault} or writes wait for it; files stay in the inbox")]
    public static partial void PausedForStore(this ILogger logger, string store, string fault);

    [LoggerMessage(EventId = 1348, Level = LogLevel.Warning, Message = "Inbox: the folder {Folder} was removed while running; it was created again and is watched as before")]
    public static partial void FolderRecreated(this ILogger logger, string folder);

    [LoggerMessage(EventId = 1349, Level = LogLevel.Warning,
        Message = "Inbox: the folder {Folder} is gone and cannot be created ({Error}); tried again every {Seconds:0.#} s, files are taken once it is back")]
    public static partial void FolderMissing(this ILogger logger, string folder, string error, double seconds);

    [LoggerMessage(EventId = 1350, Level = LogLevel.Information, Message = "Inbox: the folder {Folder} is there again; files are taken again")]
    public static partial void FolderBack(this ILogger logger, string folder);
}
