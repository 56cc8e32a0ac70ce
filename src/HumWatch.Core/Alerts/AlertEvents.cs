using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;
using HumWatch.Core.Findings;
using HumWatch.Core.Text;

namespace HumWatch.Core.Alerts;

/// <summary>What an alert is about.</summary>
public enum AlertCategory
{
    /// <summary>A narrowband line (identified or not).</summary>
    Line = 0,

    /// <summary>A channel fault: flat, clipped or non-finite samples.</summary>
    ChannelFault,
}

/// <summary>Why an alert ended.</summary>
public enum AlertClearReason
{
    /// <summary>The finding stayed below its level for <see cref="AlertOptions.ClearAfterFrames"/> frames.</summary>
    Subsided = 0,

    /// <summary>The stream (or file) ended while the alert was active.</summary>
    StreamEnded,

    /// <summary>
    /// The service stopped without closing the alert (killed, crashed, power lost); the next start closed it, at the
    /// last moment the stream is known to have been watched.
    /// </summary>
    ServiceRestarted,

    /// <summary>
    /// The instance that held the alert stopped without closing it and a peer sharing the store found its heartbeat
    /// stale and closed it, at the last moment the stream is known to have been watched.
    /// </summary>
    InstanceStopped,
}

/// <summary>Text forms of <see cref="AlertClearReason"/>.</summary>
public static class AlertClearReasonText
{
    /// <summary>The table: "subsided", "stream ended", "service restarted", "instance stopped" (an undefined value is written "subsided").</summary>
    public static TextForms<AlertClearReason> Forms { get; } = new(
        AlertClearReason.Subsided,
        (AlertClearReason.Subsided, "subsided"),
        (AlertClearReason.StreamEnded, "stream ended"),
        (AlertClearReason.ServiceRestarted, "service restarted"),
        (AlertClearReason.InstanceStopped, "instance stopped"));

    /// <summary>"subsided", "stream ended", "service restarted" or "instance stopped".</summary>
    public static string ToText(this AlertClearReason reason) => Forms.ToText(reason);

    /// <summary>Parses the text form; unknown text gives false.</summary>
    public static bool TryParse(string? text, out AlertClearReason reason) => Forms.TryParse(text, out reason);
}

/// <summary>What happened to an alert.</summary>
public enum AlertEventKind
{
    /// <summary>The alert started (<see cref="AlertRaised"/>).</summary>
    Raised = 0,

    /// <summary>An active alert's severity changed (<see cref="AlertSeverityChanged"/>).</summary>
    SeverityChanged,

    /// <summary>The alert ended (<see cref="AlertCleared"/>).</summary>
    Cleared,
}

/// <summary>Text forms of <see cref="AlertEventKind"/>: the message and store "event".</summary>
public static class AlertEventKindText
{
    /// <summary>The table: "raised", "severity", "cleared" (an undefined value is written "raised").</summary>
    public static TextForms<AlertEventKind> Forms { get; } = new(
        AlertEventKind.Raised,
        (AlertEventKind.Raised, "raised"),
        (AlertEventKind.SeverityChanged, "severity"),
        (AlertEventKind.Cleared, "cleared"));

    /// <summary>"raised", "severity" or "cleared".</summary>
    public static string ToText(this AlertEventKind kind) => Forms.ToText(kind);

    /// <summary>Parses the text form; unknown text gives false.</summary>
    public static bool TryParse(string? text, out AlertEventKind kind) => Forms.TryParse(text, out kind);
}

/// <summary>
/// Something that happened to one alert. Immutable; created only when the alert changes.
/// </summary>
/// <param name="StreamId">Stream the alert belongs to.</param>
/// <param name="Key">Stable key within the stream (text e.g. "mains/h1", "display 75 Hz/h2", "unidentified/37.25Hz", "fault/Fp1/flat").</param>
/// <param name="Category">Line or channel fault.</param>
/// <param name="Source">Most likely source of a line; <see cref="SourceMatch.None"/> for unidentified lines and faults.</param>
/// <param name="FaultKind">The fault for channel-fault alerts, else null.</param>
/// <param name="StreamSeconds">Stream time of the frame end that caused the event, s.</param>
/// <param name="Utc">UTC time of that frame end.</param>
public abstract record AlertEvent(
    string StreamId,
    FindingKey Key,
    AlertCategory Category,
    SourceMatch Source,
    ChannelFaultKind? FaultKind,
    double StreamSeconds,
    DateTimeOffset Utc)
{
    /// <summary>Raised, severity changed or cleared.</summary>
    public abstract AlertEventKind EventKind { get; }

    /// <summary>Severity the alert has after this event (for a clear: the severity it last had).</summary>
    public abstract AlertSeverity Severity { get; }
}

/// <summary>An alert started.</summary>
/// <param name="OnsetSeconds">Stream time where the first qualifying frame began, s.</param>
/// <param name="OnsetUtc">UTC time of <paramref name="OnsetSeconds"/>.</param>
/// <param name="FrequencyHz">Line frequency, Hz (NaN for faults).</param>
/// <param name="AmplitudeUvRms">Line amplitude of the raising frame, µV RMS (NaN for faults).</param>
/// <param name="ChannelShare">Share of analysed channels carrying the line, 0..1 (for faults: one channel's share).</param>
/// <param name="WorstChannels">Labels of the channels with the largest amplitude, largest first.</param>
/// <param name="Suggestion">One short line for the technician; never a diagnosis.</param>
/// <param name="RaisedSeverity">Severity at raise.</param>
/// <param name="FalseAlarmProbability">The raising frame's <see cref="Lines.FrameLine.FalseAlarmProbability"/> (NaN for faults).</param>
public sealed record AlertRaised(
    string StreamId,
    FindingKey Key,
    AlertCategory Category,
    SourceMatch Source,
    ChannelFaultKind? FaultKind,
    double StreamSeconds,
    DateTimeOffset Utc,
    double OnsetSeconds,
    DateTimeOffset OnsetUtc,
    double FrequencyHz,
    double AmplitudeUvRms,
    double ChannelShare,
    IReadOnlyList<string> WorstChannels,
    string Suggestion,
    AlertSeverity RaisedSeverity,
    double FalseAlarmProbability = double.NaN)
    : AlertEvent(StreamId, Key, Category, Source, FaultKind, StreamSeconds, Utc)
{
    public override AlertEventKind EventKind => AlertEventKind.Raised;

    public override AlertSeverity Severity => RaisedSeverity;

    /// <summary>What decided the line's explanation (the tracker's evidence at the raise); none for faults.</summary>
    public Tracking.LineEvidence Evidence { get; init; } = Tracking.LineEvidence.None;

    /// <summary>Other explanations that fit about as well, at the raise.</summary>
    public IReadOnlyList<SourceMatch> AlsoPossible { get; init; } = [];
}

/// <summary>An active alert's severity changed (after <see cref="AlertOptions.SeverityHoldFrames"/> frames at the new level).</summary>
/// <param name="FalseAlarmProbability">The frame's <see cref="Lines.FrameLine.FalseAlarmProbability"/> (NaN for faults).</param>
public sealed record AlertSeverityChanged(
    string StreamId,
    FindingKey Key,
    AlertCategory Category,
    SourceMatch Source,
    ChannelFaultKind? FaultKind,
    double StreamSeconds,
    DateTimeOffset Utc,
    double FrequencyHz,
    double AmplitudeUvRms,
    double ChannelShare,
    IReadOnlyList<string> WorstChannels,
    AlertSeverity PreviousSeverity,
    AlertSeverity NewSeverity,
    double FalseAlarmProbability = double.NaN)
    : AlertEvent(StreamId, Key, Category, Source, FaultKind, StreamSeconds, Utc)
{
    public override AlertEventKind EventKind => AlertEventKind.SeverityChanged;

    public override AlertSeverity Severity => NewSeverity;
}

/// <summary>An alert ended.</summary>
/// <param name="FrequencyHz">Last seen line frequency, Hz (NaN for faults).</param>
/// <param name="Reason">Why it ended.</param>
/// <param name="DurationSeconds">From onset to the end of the last qualifying frame, s.</param>
/// <param name="PeakAmplitudeUvRms">Largest amplitude while it was pending or active, µV RMS (NaN for faults).</param>
/// <param name="PeakSeverity">Highest severity it reached.</param>
/// <param name="LastSeverity">Severity it had when it ended.</param>
public sealed record AlertCleared(
    string StreamId,
    FindingKey Key,
    AlertCategory Category,
    SourceMatch Source,
    ChannelFaultKind? FaultKind,
    double StreamSeconds,
    DateTimeOffset Utc,
    double FrequencyHz,
    AlertClearReason Reason,
    double DurationSeconds,
    double PeakAmplitudeUvRms,
    AlertSeverity PeakSeverity,
    AlertSeverity LastSeverity)
    : AlertEvent(StreamId, Key, Category, Source, FaultKind, StreamSeconds, Utc)
{
    public override AlertEventKind EventKind => AlertEventKind.Cleared;

    public override AlertSeverity Severity => LastSeverity;
}

/// <summary>An alert that is active now (a snapshot, replaced on each event).</summary>
/// <param name="Key">Stable key within the stream.</param>
/// <param name="Category">Line or channel fault.</param>
/// <param name="Source">Most likely source of a line.</param>
/// <param name="FaultKind">The fault for channel-fault alerts.</param>
/// <param name="FrequencyHz">Frequency at the last event, Hz.</param>
/// <param name="Severity">Current severity.</param>
/// <param name="OnsetUtc">When it began.</param>
/// <param name="WorstChannels">Worst channels at the last event.</param>
/// <param name="Suggestion">Suggestion given at raise.</param>
public sealed record ActiveAlert(
    FindingKey Key,
    AlertCategory Category,
    SourceMatch Source,
    ChannelFaultKind? FaultKind,
    double FrequencyHz,
    AlertSeverity Severity,
    DateTimeOffset OnsetUtc,
    IReadOnlyList<string> WorstChannels,
    string Suggestion);

/// <summary>Receives alert events from an <see cref="AlertBook"/>, on the caller's thread.</summary>
public interface IAlertEventSink
{
    void OnAlertEvent(AlertEvent alertEvent);
}
