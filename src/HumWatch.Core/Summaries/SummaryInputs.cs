using HumWatch.Core.Alerts;
using HumWatch.Core.Findings;

namespace HumWatch.Core.Summaries;

/// <summary>One stream/minute/source row of the stored minute ledger (merged over sessions).</summary>
/// <param name="MinuteUtc">Start of the UTC minute.</param>
/// <param name="SourceKey">Finding key, or <see cref="FindingKey.All"/> for the stream as a whole.</param>
/// <param name="MonitoredSeconds">Analysed stream time in the minute, s.</param>
/// <param name="AffectedSeconds">Time the source was present, s.</param>
/// <param name="MaxAmplitudeUvRms">Largest amplitude, µV RMS; null when none.</param>
/// <param name="MeanMedianAmplitudeUvRms">
/// The sessions' per-minute medians weighted by their affected seconds, µV RMS (the median itself when one session
/// covers the minute, the usual case); null when none.
/// </param>
/// <param name="WorstChannels">Channel labels, worst first.</param>
/// <param name="MainsHz">Estimated mains frequency in the minute, Hz; null when not seen.</param>
public sealed record LedgerMinute(
    DateTimeOffset MinuteUtc,
    FindingKey SourceKey,
    double MonitoredSeconds,
    double AffectedSeconds,
    double? MaxAmplitudeUvRms,
    double? MeanMedianAmplitudeUvRms,
    IReadOnlyList<string> WorstChannels,
    double? MainsHz);

/// <summary>One stored alert event.</summary>
/// <param name="Utc">When it happened.</param>
/// <param name="Key">Alert key.</param>
/// <param name="Event">Raised, severity changed or cleared.</param>
/// <param name="Severity">Severity after the event (for a clear: the severity it last had).</param>
/// <param name="FrequencyHz">Line frequency at the event, Hz; null for faults.</param>
public sealed record AlertRecord(DateTimeOffset Utc, FindingKey Key, AlertEventKind Event, AlertSeverity Severity, double? FrequencyHz);

/// <summary>The day's mean spectrum of one stream, from the hourly spectrum store.</summary>
/// <param name="BinWidthHz">Bin spacing, Hz; bin k is at k × BinWidthHz.</param>
/// <param name="Seconds">Analysed time the mean covers, s.</param>
/// <param name="MeanPsdUv2PerHz">Time-weighted mean PSD over the analysed channels, µV²/Hz.</param>
/// <param name="LineFrequenciesHz">Mean frequency of each line key seen in that time, Hz, by key.</param>
public sealed record DaySpectrum(
    double BinWidthHz,
    double Seconds,
    IReadOnlyList<double> MeanPsdUv2PerHz,
    IReadOnlyDictionary<FindingKey, double> LineFrequenciesHz);
