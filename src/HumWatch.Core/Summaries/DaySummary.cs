using HumWatch.Core.Alerts;
using HumWatch.Core.Findings;

namespace HumWatch.Core.Summaries;

/// <summary>One stream's local day: what was monitored, what affected it, and the verdict. Serialised as summaries/&lt;date&gt;/&lt;stream&gt;.json.</summary>
/// <param name="V">Schema version, 1.</param>
/// <param name="Stream">Stream id.</param>
/// <param name="Day">Local date, yyyy-MM-dd.</param>
/// <param name="TimeZone">IANA time zone of the site.</param>
/// <param name="DayStartUtc">Local midnight in UTC.</param>
/// <param name="DayEndUtc">Next local midnight in UTC.</param>
/// <param name="HoursInDay">23, 24 or 25 (daylight-saving changes).</param>
/// <param name="HoursMonitored">Analysed stream time, h.</param>
/// <param name="Verdict">Pass, warn, fail, or no data (text "pass", "warn", "fail", "no data").</param>
/// <param name="VerdictReasons">One line per limit reached, naming its configuration key.</param>
/// <param name="AffectedMinutes">Time with any line at or above the ledger level, min.</param>
/// <param name="MaxAmplitudeUvRms">Largest line amplitude of the day, µV RMS; null when none.</param>
/// <param name="MedianAmplitudeUvRms">Median of the per-minute medians of the strongest line over affected minutes, µV RMS; null when none.</param>
/// <param name="LongestEpisode">Longest run of affected minutes of any line; null when none.</param>
/// <param name="WorstChannels">Channels most often among the worst, with the minutes they were.</param>
/// <param name="Categories">Affected minutes and verdict per kind of source.</param>
/// <param name="Sources">One entry per source key seen, most affected first.</param>
/// <param name="Alerts">Alerts raised and cleared during the day.</param>
/// <param name="Mains">The day's mains frequency track.</param>
/// <param name="Timeline">Affected minutes per source and local hour.</param>
public sealed record DaySummary(
    int V,
    string Stream,
    string Day,
    string TimeZone,
    DateTimeOffset DayStartUtc,
    DateTimeOffset DayEndUtc,
    int HoursInDay,
    double HoursMonitored,
    DayVerdict Verdict,
    IReadOnlyList<string> VerdictReasons,
    double AffectedMinutes,
    double? MaxAmplitudeUvRms,
    double? MedianAmplitudeUvRms,
    Episode? LongestEpisode,
    IReadOnlyList<ChannelMinutes> WorstChannels,
    IReadOnlyList<CategorySummary> Categories,
    IReadOnlyList<SourceSummary> Sources,
    AlertTally Alerts,
    MainsTrack Mains,
    HourTimeline Timeline)
{
    /// <summary>
    /// The HumWatch instances that watched the stream's data of this day, in ordinal order, as the store records them;
    /// empty when none is recorded (data of builds before instance names). Set by the host, which holds that record.
    /// </summary>
    public IReadOnlyList<string> Instances { get; init; } = [];
}

/// <summary>A run of affected minutes.</summary>
/// <param name="Source">Source key (<see cref="FindingKey.All"/>, text "*", for any line).</param>
/// <param name="StartUtc">Start of the first affected minute.</param>
/// <param name="EndUtc">End of the last affected minute.</param>
/// <param name="StartLocal">Start in site time, ISO 8601 with offset.</param>
/// <param name="EndLocal">End in site time, ISO 8601 with offset.</param>
/// <param name="SpanMinutes">From start to end, min.</param>
/// <param name="AffectedMinutes">Time the source was present within the span, min.</param>
public sealed record Episode(
    FindingKey Source,
    DateTimeOffset StartUtc,
    DateTimeOffset EndUtc,
    string StartLocal,
    string EndLocal,
    double SpanMinutes,
    double AffectedMinutes);

/// <summary>A channel and the minutes it was among the worst.</summary>
public sealed record ChannelMinutes(string Channel, int Minutes);

/// <summary>One kind of source against its daily limit.</summary>
/// <param name="Category">Kind of source (text "mains", "display", "site-tone", "unidentified" or "fault").</param>
/// <param name="AffectedMinutes">Time any source of the kind was present (per minute the largest of its sources), min.</param>
/// <param name="WarnMinutes">Configured warn level, min; null for none.</param>
/// <param name="FailMinutes">Configured fail level, min; null for none.</param>
/// <param name="Verdict">Pass, warn or fail (never no data).</param>
public sealed record CategorySummary(FindingCategory Category, double AffectedMinutes, double? WarnMinutes, double? FailMinutes, DayVerdict Verdict);

/// <summary>One source key's day.</summary>
/// <param name="Key">Source key as in the ledger and alerts.</param>
/// <param name="Category">Kind of source.</param>
/// <param name="Label">Short human label.</param>
/// <param name="Harmonic">Harmonic number of an identified line.</param>
/// <param name="FrequencyHz">Mean frequency of the line over the day, Hz, when known (spectrum store or alerts).</param>
/// <param name="AffectedMinutes">Time present, min.</param>
/// <param name="EpisodeCount">Number of episodes.</param>
/// <param name="Episodes">Longest episodes, longest first.</param>
/// <param name="MaxAmplitudeUvRms">Largest amplitude, µV RMS; null for faults.</param>
/// <param name="MedianAmplitudeUvRms">Median of per-minute medians, µV RMS; null for faults.</param>
/// <param name="WorstChannels">Channels most often among the worst for this source.</param>
public sealed record SourceSummary(
    FindingKey Key,
    FindingCategory Category,
    string Label,
    int? Harmonic,
    double? FrequencyHz,
    double AffectedMinutes,
    int EpisodeCount,
    IReadOnlyList<Episode> Episodes,
    double? MaxAmplitudeUvRms,
    double? MedianAmplitudeUvRms,
    IReadOnlyList<ChannelMinutes> WorstChannels);

/// <summary>Alert events of the day.</summary>
/// <param name="Raised">Alerts raised.</param>
/// <param name="Cleared">Alerts cleared.</param>
/// <param name="SeverityChanges">Severity changes of active alerts.</param>
/// <param name="RaisedMinor">Raised at minor.</param>
/// <param name="RaisedMarked">Raised at marked.</param>
/// <param name="RaisedSevere">Raised at severe.</param>
/// <param name="ByKey">Per alert key, ordered by key.</param>
public sealed record AlertTally(int Raised, int Cleared, int SeverityChanges, int RaisedMinor, int RaisedMarked, int RaisedSevere, IReadOnlyList<AlertKeyTally> ByKey);

/// <summary>Alert events of one key.</summary>
/// <param name="Key">Alert key.</param>
/// <param name="Raised">Times raised.</param>
/// <param name="Cleared">Times cleared.</param>
/// <param name="PeakSeverity">Highest severity seen.</param>
/// <param name="FirstRaisedLocal">First raise in site time, ISO 8601 with offset; null when only clears fell into the day.</param>
public sealed record AlertKeyTally(FindingKey Key, int Raised, int Cleared, AlertSeverity PeakSeverity, string? FirstRaisedLocal);

/// <summary>The estimated mains frequency over the day.</summary>
/// <param name="MeanHz">Mean over minutes with an estimate, Hz; null when none.</param>
/// <param name="MinHz">Lowest minute value, Hz.</param>
/// <param name="MaxHz">Highest minute value, Hz.</param>
/// <param name="MinutesWithEstimate">Minutes with an estimate.</param>
/// <param name="StepSeconds">Series step, 60 s.</param>
/// <param name="Hz">One value per minute from local midnight (null where none); length = minutes in the day.</param>
public sealed record MainsTrack(double? MeanHz, double? MinHz, double? MaxHz, int MinutesWithEstimate, int StepSeconds, IReadOnlyList<double?> Hz)
{
    /// <summary>
    /// The nominal grid the day's track belongs to (50 or 60 Hz: the one whose EN 50160 ±1 % window holds the mean);
    /// null when no fundamental was seen or the mean lies in neither window.
    /// </summary>
    public double? NominalHz => MeanHz is { } mean
        ? Attribution.SourceCatalogOptions.WorldGridsHz.Cast<double?>().FirstOrDefault(g => Math.Abs(mean - g!.Value) <= 0.01 * g.Value)
        : null;
}

/// <summary>Affected minutes per source and hour of the local day.</summary>
/// <param name="HourStartsLocal">Start of each hour in site time, ISO 8601 with offset (23, 24 or 25 entries).</param>
/// <param name="Rows">One row per source key (as in <see cref="DaySummary.Sources"/>), then categories' totals are not repeated.</param>
public sealed record HourTimeline(IReadOnlyList<string> HourStartsLocal, IReadOnlyList<TimelineRow> Rows);

/// <summary>One source's affected minutes per hour.</summary>
public sealed record TimelineRow(FindingKey Key, string Label, IReadOnlyList<double> Minutes);
