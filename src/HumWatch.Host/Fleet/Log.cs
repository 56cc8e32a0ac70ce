using Microsoft.Extensions.Logging;

namespace HumWatch.Host.Fleet;

/// <summary>Source-generated log messages of the instances sharing a store. Event ids 1490–1509.</summary>
internal static partial class FleetLog
{
    [LoggerMessage(EventId = 1490, Level = LogLevel.Information, Message = "Instance {Instance} registered in store {Store} (previous run: {Previous}); heartbeat every {HeartbeatSeconds} s, peers silent over {StaleAfterSeconds} s are taken as stopped")]
    public static partial void Registered(this ILogger logger, string instance, string store, string previous, double heartbeatSeconds, double staleAfterSeconds);

    [LoggerMessage(EventId = 1491, Level = LogLevel.Warning, Message = "Instance {Instance}: instance {SweptBy} found this instance's heartbeat stale and closed its open alerts (reason \"instance stopped\"); they are not closed again")]
    public static partial void FoundSwept(this ILogger logger, string instance, string sweptBy);

    [LoggerMessage(EventId = 1492, Level = LogLevel.Warning, Message = "Instance {Peer} sent no heartbeat since {LastHeartbeatUtc:o} and did not stop cleanly: taken as stopped, {Count} of its open alert(s) closed (reason \"instance stopped\")")]
    public static partial void PeerSwept(this ILogger logger, string peer, DateTimeOffset lastHeartbeatUtc, int count);

    [LoggerMessage(EventId = 1493, Level = LogLevel.Warning, Message = "Instance {Instance}: marked stopped by {SweptBy} while still running (no heartbeat reached the store for over Instance:StaleAfterSeconds); registered again")]
    public static partial void SweptWhileRunning(this ILogger logger, string instance, string sweptBy);

    [LoggerMessage(EventId = 1494, Level = LogLevel.Error, Message = "Instance {Instance}: the heartbeat could not be written to the store; tried again at the next beat")]
    public static partial void BeatFailed(this ILogger logger, Exception exception, string instance);

    [LoggerMessage(EventId = 1495, Level = LogLevel.Information, Message = "Instance {Instance} marked stopped in the store")]
    public static partial void Stopped(this ILogger logger, string instance);

    [LoggerMessage(EventId = 1496, Level = LogLevel.Error, Message = "Instance {Instance}: the clean stop could not be written to the store; peers will take this instance as stopped once its heartbeat is stale")]
    public static partial void StopFailed(this ILogger logger, Exception exception, string instance);

    [LoggerMessage(EventId = 1497, Level = LogLevel.Warning, Message = "Start: {Count} alert(s) left open by a build before instance names were closed (reason \"service restarted\")")]
    public static partial void OlderBuildAlertsClosed(this ILogger logger, int count);

    [LoggerMessage(EventId = 1498, Level = LogLevel.Error, Message = "The fleet view could not be read from the store; the rooms of other instances keep their last state")]
    public static partial void FleetReadFailed(this ILogger logger, Exception exception);
}
