using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Composition;

/// <summary>Source-generated log messages of the host's own parts. Event ids 1351–1353.</summary>
internal static partial class CompositionLog
{
    [LoggerMessage(EventId = 1351, Level = LogLevel.Warning,
        Message = "The log folder {Folder} was removed while running; it was created again and the log files reopened (lines of the last {CheckSeconds:0} s or less may be missing from the files)")]
    public static partial void LogFolderRecreated(this ILogger logger, string folder, double checkSeconds);

    [LoggerMessage(EventId = 1352, Level = LogLevel.Error,
        Message = "The log folder {Folder} is gone and cannot be created ({Error}); log lines go to the console only until it can be")]
    public static partial void LogFolderMissing(this ILogger logger, string folder, string error);

    [LoggerMessage(EventId = 1353, Level = LogLevel.Information, Message = "The log folder {Folder} could be created again; the log files are written again")]
    public static partial void LogFolderBack(this ILogger logger, string folder);
}
