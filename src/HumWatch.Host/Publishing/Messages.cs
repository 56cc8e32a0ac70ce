using System.Text.Json;
using System.Text.Json.Serialization;
using HumWatch.Core.Alerts;
using HumWatch.Core.Faults;
using HumWatch.Core.Findings;
using HumWatch.Host.Serialization;

namespace HumWatch.Host.Publishing;

/// <summary>Body of "alert/&lt;stream&gt;" messages: a raise or a severity change (see docs/messages.md).</summary>
internal sealed record AlertMessage(
    int V,
    string Stream,
    string Key,
    string Event,
    string Kind,
    string? Source,
    int? Harmonic,
    bool Aliased,
    string? Fault,
    double? FrequencyHz,
    double? AmplitudeUvRms,
    double? ChannelShare,
    IReadOnlyList<string> WorstChannels,
    string Severity,
    string? PreviousSeverity,
    string? Suggestion,
    double StreamSeconds,
    DateTimeOffset Utc,
    DateTimeOffset? OnsetUtc,
    double? FalseAlarmProbability)
{
    /// <summary>Other explanations that fit about as well (raises of lines only).</summary>
    public IReadOnlyList<string>? AlsoPossible { get; init; }

    /// <summary>What decided the explanation (raises of lines only), as in `check` reports.</summary>
    public Checking.CheckEvidence? Evidence { get; init; }

    /// <summary>The caution that goes with the suggestion, the text `check` reports carry; null when there is no suggestion.</summary>
    public string? Caution { get; init; }

    /// <summary>The instance that published the message (Instance:Name); null where no instance is named.</summary>
    public string? Instance { get; init; }
}

/// <summary>Body of "clear/&lt;stream&gt;" messages.</summary>
internal sealed record ClearMessage(
    int V,
    string Stream,
    string Key,
    string Kind,
    string? Source,
    int? Harmonic,
    bool Aliased,
    string? Fault,
    double? FrequencyHz,
    string Reason,
    double DurationSeconds,
    double? PeakAmplitudeUvRms,
    string PeakSeverity,
    string LastSeverity,
    double StreamSeconds,
    DateTimeOffset Utc)
{
    /// <summary>The instance that published the message (Instance:Name); null where no instance is named.</summary>
    public string? Instance { get; init; }
}

/// <summary>Body of "status/&lt;stream&gt;" messages, sent every <see cref="PublishOptions.StatusIntervalSeconds"/>.</summary>
/// <param name="V">Schema version, 1.</param>
/// <param name="Stream">Stream id.</param>
/// <param name="Utc">When the status was taken.</param>
/// <param name="FramesAnalysed">Frames analysed since the stream started.</param>
/// <param name="LinesPresent">Lines in the latest frame.</param>
/// <param name="ActiveAlerts">Alerts active now.</param>
/// <param name="ChunksAccepted">Chunks taken in since start.</param>
/// <param name="ChunksDropped">Chunks dropped because a queue was full.</param>
/// <param name="ChunksRejected">Chunks refused as malformed or out of order.</param>
/// <param name="LagSeconds">How far the latest analysed sample is behind real time, s (null when the stream has no UTC times).</param>
internal sealed record StatusMessage(
    int V,
    string Stream,
    DateTimeOffset Utc,
    long FramesAnalysed,
    int LinesPresent,
    int ActiveAlerts,
    long ChunksAccepted,
    long ChunksDropped,
    long ChunksRejected,
    double? LagSeconds)
{
    /// <summary>The grid the stream's lines are attributed against, Hz (50 or 60); null while neither configured nor seen.</summary>
    public double? MainsHz { get; init; }

    /// <summary>"configured", "measured" or "unknown".</summary>
    public string? MainsFrom { get; init; }

    /// <summary>The grid fundamental measured in the latest frame that showed it, Hz; null before one did.</summary>
    public double? MainsEstimateHz { get; init; }

    /// <summary>Whether the store takes writes, and what waits for it; the same for every stream of the process.</summary>
    public Store.StoreStatus? Store { get; init; }

    /// <summary>Whether the log folder is there.</summary>
    public Health.FolderStatus? LogFolder { get; init; }

    /// <summary>Whether the inbox folder is there ("off" when the inbox is off).</summary>
    public Health.FolderStatus? InboxFolder { get; init; }

    /// <summary>The instance that published the message (Instance:Name); null where no instance is named.</summary>
    public string? Instance { get; init; }
}

[JsonSourceGenerationOptions(PropertyNamingPolicy = JsonKnownNamingPolicy.CamelCase)]
[JsonSerializable(typeof(AlertMessage))]
[JsonSerializable(typeof(ClearMessage))]
[JsonSerializable(typeof(StatusMessage))]
internal sealed partial class MessageJsonContext : JsonSerializerContext
{
    /// <summary>The context message bodies are written with: characters as themselves.</summary>
    public static MessageJsonContext Output => field ??= new(Serialization.OutputText.JsonOptions(Default.Options));
}

/// <summary>
/// Builds message bodies: UTF-8 JSON, camelCase, "v": 1, non-finite numbers as null, every number rounded as in
/// `check` reports (<see cref="Reported"/>; docs/messages.md lists the rounding per field).
/// </summary>
internal static class Messages
{
    /// <summary>Schema version written into every body.</summary>
    public const int Version = 1;

    public const string AlertKind = "alert";
    public const string ClearKind = "clear";
    public const string StatusKind = "status";
    public const string SummaryKind = "summary";

    /// <summary>Topic frame: "&lt;kind&gt;/&lt;stream&gt;".</summary>
    public static string Topic(string kind, string streamId) => $"{kind}/{streamId}";

    /// <summary>Message kind ("alert" or "clear") and body for an alert event.</summary>
    /// <param name="alertEvent">The event.</param>
    /// <param name="instance">The publishing instance's name, written as "instance"; null leaves it null.</param>
    public static (string Kind, byte[] Body) For(AlertEvent alertEvent, string? instance = null)
    {
        ArgumentNullException.ThrowIfNull(alertEvent);
        var identified = alertEvent.Source.IsIdentified;
        var key = alertEvent.Key.ToString();
        var kind = alertEvent.Key.Category.ToText();
        var source = identified ? alertEvent.Source.Name : null;
        int? harmonic = identified ? alertEvent.Source.Harmonic : null;
        var fault = alertEvent.FaultKind?.ToText();
        switch (alertEvent)
        {
            case AlertCleared c:
                return (ClearKind, JsonSerializer.SerializeToUtf8Bytes(
                    new ClearMessage(
                        Version, c.StreamId, key, kind, source, harmonic, c.Source.Aliased, fault, Finite(Reported.Hz(c.FrequencyHz)),
                        c.Reason.ToText(), Reported.Seconds(c.DurationSeconds), Finite(Reported.UvRms(c.PeakAmplitudeUvRms)), c.PeakSeverity.ToText(),
                        c.LastSeverity.ToText(), Reported.ClockSeconds(c.StreamSeconds), c.Utc) { Instance = instance },
                    MessageJsonContext.Output.ClearMessage));
            case AlertRaised r:
                return (AlertKind, JsonSerializer.SerializeToUtf8Bytes(
                    new AlertMessage(
                        Version, r.StreamId, key, r.EventKind.ToText(), kind, source, harmonic, r.Source.Aliased, fault,
                        Finite(Reported.Hz(r.FrequencyHz)), Finite(Reported.UvRms(r.AmplitudeUvRms)), Finite(Reported.Share(r.ChannelShare)), r.WorstChannels,
                        r.Severity.ToText(), null, r.Suggestion, Reported.ClockSeconds(r.StreamSeconds), r.Utc, r.OnsetUtc, Probability(r.FalseAlarmProbability))
                    {
                        AlsoPossible = r.Category == AlertCategory.Line ? [.. r.AlsoPossible.Select(Core.Reporting.LineFinding.Describe)] : null,
                        Evidence = r.Category == AlertCategory.Line ? Checking.CheckEvidence.From(r) : null,
                        Caution = r.Suggestion is null ? null : Core.Reporting.SafetyNotice.Text,
                        Instance = instance,
                    },
                    MessageJsonContext.Output.AlertMessage));
            case AlertSeverityChanged s:
                return (AlertKind, JsonSerializer.SerializeToUtf8Bytes(
                    new AlertMessage(
                        Version, s.StreamId, key, s.EventKind.ToText(), kind, source, harmonic, s.Source.Aliased, fault,
                        Finite(Reported.Hz(s.FrequencyHz)), Finite(Reported.UvRms(s.AmplitudeUvRms)), Finite(Reported.Share(s.ChannelShare)), s.WorstChannels,
                        s.Severity.ToText(), s.PreviousSeverity.ToText(), null, Reported.ClockSeconds(s.StreamSeconds), s.Utc, null, Probability(s.FalseAlarmProbability))
                    {
                        Instance = instance,
                    },
                    MessageJsonContext.Output.AlertMessage));
            default:
                throw new ArgumentOutOfRangeException(nameof(alertEvent), alertEvent.GetType().Name, "Unknown alert event type.");
        }
    }

    /// <summary>Body of a status message.</summary>
    public static byte[] For(StatusMessage status)
    {
        ArgumentNullException.ThrowIfNull(status);
        var safe = status with
        {
            LagSeconds = status.LagSeconds is { } lag ? Finite(Reported.Seconds(lag)) : null,
            MainsHz = status.MainsHz is { } mains ? Finite(Reported.Hz(mains)) : null,
            MainsEstimateHz = status.MainsEstimateHz is { } estimate ? Finite(Reported.Hz(estimate)) : null,
        };
        return JsonSerializer.SerializeToUtf8Bytes(safe, MessageJsonContext.Output.StatusMessage);
    }

    private static double? Finite(double value) => Reported.Finite(value);

    // Infinite probabilities cannot occur; NaN (unknown) is null, as in check reports.
    private static double? Probability(double value) => double.IsFinite(value) ? Reported.Probability(value) : null;
}
