using System.Runtime.InteropServices;
using HumWatch.Core.Findings;
using HumWatch.Core.Numerics;
using static HumWatch.Core.Summaries.SummaryRounding;

namespace HumWatch.Core.Summaries;

/// <summary>One source key's ledger minutes over a local day, and what the summary says of them (episodes, channels).</summary>
internal sealed class DaySourceTally(FindingKey key, int dayMinutes)
{
    private readonly double[] _affectedSeconds = new double[dayMinutes];
    private readonly List<double> _minuteFigures = [];
    private readonly Dictionary<string, int> _channelMinutes = new(StringComparer.Ordinal);
    private double _max = double.NaN;

    public FindingKey Key { get; } = key;

    /// <summary>Adds the ledger row of minute <paramref name="index"/> of the day.</summary>
    public void Add(int index, LedgerMinute row)
    {
        _affectedSeconds[index] += row.AffectedSeconds;
        if (row.MaxAmplitudeUvRms is { } max && !(_max >= max))
        {
            _max = max;
        }

        if (row.MeanMedianAmplitudeUvRms is { } figure && double.IsFinite(figure) && row.AffectedSeconds > 0)
        {
            _minuteFigures.Add(figure);
        }

        if (row.AffectedSeconds > 0)
        {
            foreach (var channel in row.WorstChannels)
            {
                _channelMinutes[channel] = _channelMinutes.GetValueOrDefault(channel) + 1;
            }
        }
    }

    /// <summary>Raises each minute of <paramref name="perMinute"/> to this source's affected seconds where they are larger.</summary>
    public void MaxInto(double[] perMinute)
    {
        for (var i = 0; i < perMinute.Length; i++)
        {
            if (_affectedSeconds[i] > perMinute[i])
            {
                perMinute[i] = _affectedSeconds[i];
            }
        }
    }

    /// <summary>Affected minutes per hour of the day.</summary>
    public double[] HourlyMinutes(int hours)
    {
        var result = new double[hours];
        for (var i = 0; i < _affectedSeconds.Length; i++)
        {
            result[i / 60] += _affectedSeconds[i];
        }

        for (var h = 0; h < hours; h++)
        {
            result[h] = Round(result[h] / 60, 2);
        }

        return result;
    }

    public SourceSummary ToSummary(DaySummaryRules rules, DateTimeOffset fromUtc, TimeZoneInfo zone, double frequencyHz)
    {
        var total = 0.0;
        for (var i = 0; i < _affectedSeconds.Length; i++)
        {
            total += _affectedSeconds[i];
        }

        var episodes = Episodes(rules, fromUtc, zone);
        var episodeCount = episodes.Count;
        episodes.Sort(static (a, b) =>
        {
            var bySpan = b.SpanMinutes.CompareTo(a.SpanMinutes);
            return bySpan != 0 ? bySpan : a.StartUtc.CompareTo(b.StartUtc);
        });
        if (episodes.Count > rules.EpisodesListed)
        {
            episodes.RemoveRange(rules.EpisodesListed, episodes.Count - rules.EpisodesListed);
        }

        double? hz = frequencyHz > 0 ? Round(frequencyHz, 3) : Key.FrequencyHz;
        return new SourceSummary(
            Key,
            Key.Category,
            Key.Label,
            Key.Harmonic,
            Key.Category == FindingCategory.ChannelFault ? null : hz,
            Round(total / 60, 2),
            episodeCount,
            episodes,
            double.IsFinite(_max) ? Round(_max, 3) : null,
            RoundOrNull(Median.SortInPlace(CollectionsMarshal.AsSpan(_minuteFigures)), 3),
            WorstChannels(rules.WorstChannelCount));
    }

    private List<ChannelMinutes> WorstChannels(int count)
    {
        var channels = new List<KeyValuePair<string, int>>(_channelMinutes);
        channels.Sort(static (a, b) =>
        {
            var byMinutes = b.Value.CompareTo(a.Value);
            return byMinutes != 0 ? byMinutes : string.CompareOrdinal(a.Key, b.Key);
        });
        var worst = new List<ChannelMinutes>(Math.Min(channels.Count, count));
        for (var i = 0; i < channels.Count && i < count; i++)
        {
            worst.Add(new ChannelMinutes(channels[i].Key, channels[i].Value));
        }

        return worst;
    }

    private List<Episode> Episodes(DaySummaryRules rules, DateTimeOffset fromUtc, TimeZoneInfo zone)
    {
        var result = new List<Episode>();
        var start = -1;
        var lastOn = -1;
        for (var i = 0; i <= _affectedSeconds.Length; i++)
        {
            var on = i < _affectedSeconds.Length && _affectedSeconds[i] >= rules.EpisodeMinuteMinSeconds;
            if (on)
            {
                if (start < 0)
                {
                    start = i;
                }
                else if (i - lastOn - 1 > rules.EpisodeBridgeMinutes)
                {
                    result.Add(MakeEpisode(start, lastOn + 1, fromUtc, zone));
                    start = i;
                }

                lastOn = i;
            }
        }

        if (start >= 0)
        {
            result.Add(MakeEpisode(start, lastOn + 1, fromUtc, zone));
        }

        return result;
    }

    private Episode MakeEpisode(int start, int end, DateTimeOffset fromUtc, TimeZoneInfo zone)
    {
        var seconds = 0.0;
        for (var i = start; i < end; i++)
        {
            seconds += _affectedSeconds[i];
        }

        var startUtc = fromUtc.AddMinutes(start);
        var endUtc = fromUtc.AddMinutes(end);
        return new Episode(Key, startUtc, endUtc, LocalDay.LocalText(startUtc, zone), LocalDay.LocalText(endUtc, zone), end - start, Round(seconds / 60, 2));
    }
}
