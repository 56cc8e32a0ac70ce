using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Security;

/// <summary>Source-generated log messages of socket security. Event ids 1200–1249.</summary>
internal static partial class SecurityLog
{
    [LoggerMessage(1200, LogLevel.Warning, "{Endpoint} is reachable from other hosts without CURVE encryption because {Setting} is true: anyone on the network can {Exposure}. Set {KeySetting} (humwatch keys new FILE) to encrypt it")]
    public static partial void InsecureRemote(this ILogger logger, string endpoint, string setting, string exposure, string keySetting);

    [LoggerMessage(1201, LogLevel.Warning, "Refused a message on {Endpoint} from a sender not on {Setting} ({Outcome}); {Refused} refused on this socket so far, {Suppressed} similar refusals not logged since the last warning")]
    public static partial void ClientKeyRefused(this ILogger logger, string endpoint, string setting, ClientKeyCheck outcome, long refused, long suppressed);

    [LoggerMessage(1202, LogLevel.Information, "{Endpoint} accepts only the {Count} CURVE client keys listed in {Path}")]
    public static partial void ClientKeysLoaded(this ILogger logger, string endpoint, int count, string path);
}
