using System.Text.Json.Serialization;
using HumWatch.Core.Alerts;
using HumWatch.Core.Findings;

namespace HumWatch.Host.Store;

/// <summary>One alert event row as stored, its text columns read back into their types.</summary>
internal sealed record StoredAlert(
    long Id,
    string Stream,
    FindingKey Key,
    FindingCategory Kind,
    AlertEventKind Event,
    AlertSeverity Severity,
    string? SourceName,
    int? Harmonic,
    bool Aliased,
    double? FrequencyHz,
    double? AmplitudeUvRms,
    double? ChannelShare,
    IReadOnlyList<string> WorstChannels,
    string? Suggestion,
    double StreamSeconds,
    DateTimeOffset Utc,
    DateTimeOffset? OnsetUtc,
    double? DurationSeconds,
    double? PeakUvRms,
    AlertSeverity? PeakSeverity,
    AlertClearReason? Reason)
{
    /// <summary>A raised line's evidence as stored (JSON in the shape of a `check` line's "evidence"); null otherwise.</summary>
    public string? EvidenceJson { get; init; }

    /// <summary>The instance that stored the event; null in rows of builds before schema 6.</summary>
    public string? Instance { get; init; }
}

/// <summary>One stream/minute/source row of the ledger, merged over every part delivered for it.</summary>
/// <param name="MaxUvRms">Largest amplitude of any part, µV RMS; null when none (column max_uv_rms).</param>
/// <param name="MeanMedianUvRms">
/// The parts' medians, weighted by their affected seconds, µV RMS: the minute's median when one part covers it (the usual
/// case), otherwise a weighted mean of medians; null when none (column mean_median_uv_rms, median_uv before schema 4).
/// </param>
internal sealed record StoredMinute(
    string Stream,
    DateTimeOffset MinuteUtc,
    FindingKey SourceKey,
    double MonitoredSeconds,
    double AffectedSeconds,
    double? MaxUvRms,
    double? MeanMedianUvRms,
    IReadOnlyList<string> WorstChannels,
    double? MainsHz,
    int Parts);

/// <summary>Where a file stands in processing.</summary>
internal enum FileJournalState
{
    /// <summary>Taken in; processing started and has not finished (or was interrupted).</summary>
    Received,

    /// <summary>Processed and moved to the archive.</summary>
    Archived,

    /// <summary>Refused (unreadable, wrong format …); see the reason.</summary>
    Rejected,
}

/// <summary>One file in the processed-file journal; identity is the content (SHA-256 and size), not the path.</summary>
internal sealed record FileJournalEntry(
    long Id,
    string Path,
    long SizeBytes,
    DateTimeOffset ModifiedUtc,
    string Sha256,
    FileJournalState State,
    string? ReportPath,
    string? Reason,
    DateTimeOffset Utc,
    int Attempts)
{
    /// <summary>The instance that claimed the content last (file_journal.instance); null in rows of older builds and of tools.</summary>
    public string? Instance { get; init; }
}

[JsonSerializable(typeof(string[]))]
internal sealed partial class StoreJsonContext : JsonSerializerContext
{
    /// <summary>The context store columns are written with: channel labels as themselves.</summary>
    public static StoreJsonContext Output => field ??= new(Serialization.OutputText.JsonOptions(Default.Options));
}
