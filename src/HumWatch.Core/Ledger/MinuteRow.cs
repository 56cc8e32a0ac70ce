using HumWatch.Core.Findings;

namespace HumWatch.Core.Ledger;

/// <summary>
/// What one stream session saw of one source during (part of) one UTC minute. Rows are additive facts: two rows for
/// the same stream, minute and source from different sessions add their seconds and keep the larger maximum.
/// </summary>
/// <param name="StreamId">Stream the row belongs to.</param>
/// <param name="SessionId">Session that produced it; with <paramref name="Sequence"/> it identifies the row so a re-delivery is applied once.</param>
/// <param name="Sequence">Running number of the row within the session, from 1.</param>
/// <param name="MinuteUtc">Start of the UTC minute.</param>
/// <param name="SourceKey">Finding key, or <see cref="MinuteLedger.AllSourcesKey"/> for the stream as a whole.</param>
/// <param name="MonitoredSeconds">Analysed stream time that fell into this minute, s.</param>
/// <param name="AffectedSeconds">Of that, time the source was present at or above the ledger's level, s.</param>
/// <param name="MaxAmplitudeUvRms">Largest amplitude seen, µV RMS; NaN when none (faults, or no line in the minute).</param>
/// <param name="MedianAmplitudeUvRms">Median over the frames of the minute that showed the source, µV RMS; NaN when none.</param>
/// <param name="WorstChannels">Labels of the channels with the largest amplitude in the minute, largest first.</param>
/// <param name="MainsHz">Median estimated mains frequency over the minute's frames, Hz; NaN when the fundamental was not seen.</param>
public sealed record MinuteRow(
    string StreamId,
    string SessionId,
    long Sequence,
    DateTimeOffset MinuteUtc,
    FindingKey SourceKey,
    double MonitoredSeconds,
    double AffectedSeconds,
    double MaxAmplitudeUvRms,
    double MedianAmplitudeUvRms,
    IReadOnlyList<string> WorstChannels,
    double MainsHz);

/// <summary>Receives completed minute rows from a <see cref="MinuteLedger"/>.</summary>
public interface IMinuteRowSink
{
    void OnMinuteRow(MinuteRow row);
}
