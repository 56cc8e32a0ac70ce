using HumWatch.Core.Findings;
using static HumWatch.Core.Summaries.SummaryRounding;

namespace HumWatch.Core.Summaries;

/// <summary>Per-day figures of the lines beside the ledger: each line's frequency, and the mains frequency track.</summary>
internal static class DayLineFigures
{
    /// <summary>
    /// Mean frequency of each line key over the day: from the stored spectrum where it knows the key, otherwise the
    /// mean of the key's alert frequencies in [fromUtc, toUtc) (older data has no spectrum).
    /// </summary>
    public static Dictionary<FindingKey, double> Frequencies(IReadOnlyList<AlertRecord> alerts, DaySpectrum? spectrum, DateTimeOffset fromUtc, DateTimeOffset toUtc)
    {
        var result = new Dictionary<FindingKey, double>();
        if (spectrum is not null)
        {
            foreach (var (key, hz) in spectrum.LineFrequenciesHz)
            {
                result[key] = hz;
            }
        }

        var sums = new Dictionary<FindingKey, (double Sum, int Count)>();
        foreach (var alert in alerts)
        {
            if (alert.Utc < fromUtc || alert.Utc >= toUtc || alert.FrequencyHz is not { } hz || !double.IsFinite(hz) || result.ContainsKey(alert.Key))
            {
                continue;
            }

            sums.TryGetValue(alert.Key, out var s);
            sums[alert.Key] = (s.Sum + hz, s.Count + 1);
        }

        foreach (var (key, s) in sums)
        {
            result[key] = s.Sum / s.Count;
        }

        return result;
    }

    /// <summary>The mains track of a day from one estimate per minute (null where none).</summary>
    public static MainsTrack Mains(double?[] hz)
    {
        var count = 0;
        var sum = 0.0;
        var min = double.PositiveInfinity;
        var max = double.NegativeInfinity;
        var series = new double?[hz.Length];
        for (var i = 0; i < hz.Length; i++)
        {
            if (hz[i] is not { } value)
            {
                continue;
            }

            series[i] = Round(value, 4);
            count++;
            sum += value;
            min = Math.Min(min, value);
            max = Math.Max(max, value);
        }

        return count == 0
            ? new MainsTrack(null, null, null, 0, 60, series)
            : new MainsTrack(Round(sum / count, 4), Round(min, 4), Round(max, 4), count, 60, series);
    }
}
