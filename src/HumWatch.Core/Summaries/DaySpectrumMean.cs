using HumWatch.Core.Findings;

namespace HumWatch.Core.Summaries;

/// <summary>Combines stored hourly spectrum parts into a day's mean spectrum.</summary>
public static class DaySpectrumMean
{
    /// <summary>
    /// The seconds-weighted mean of <paramref name="parts"/>, using the bin layout (width and count) that covers the
    /// most time; null when there is no part. Line frequencies are the frame-weighted means over the parts used.
    /// </summary>
    public static DaySpectrum? Of(IReadOnlyList<SpectrumPart> parts)
    {
        ArgumentNullException.ThrowIfNull(parts);
        if (parts.Count == 0)
        {
            return null;
        }

        // Frames of one stream share a bin width unless its settings changed during the day; keep the dominant one.
        var byLayout = new Dictionary<(double BinWidthHz, int Bins), double>();
        foreach (var p in parts)
        {
            var layout = (p.BinWidthHz, p.MeanPsdUv2PerHz.Length);
            byLayout[layout] = byLayout.GetValueOrDefault(layout) + p.Seconds;
        }

        var best = byLayout.MaxBy(kv => (kv.Value, kv.Key.Bins)).Key;
        var sum = new double[best.Bins];
        var seconds = 0.0;
        var lineSums = new Dictionary<FindingKey, (double SumHz, double Frames)>();
        foreach (var p in parts)
        {
            if (p.BinWidthHz != best.BinWidthHz || p.MeanPsdUv2PerHz.Length != best.Bins)
            {
                continue;
            }

            for (var k = 0; k < sum.Length; k++)
            {
                sum[k] += p.MeanPsdUv2PerHz[k] * p.Seconds;
            }

            seconds += p.Seconds;
            foreach (var (key, tally) in p.Lines)
            {
                var s = lineSums.GetValueOrDefault(key);
                lineSums[key] = (s.SumHz + tally.SumHz, s.Frames + tally.Frames);
            }
        }

        var mean = new double[sum.Length];
        for (var k = 0; k < mean.Length; k++)
        {
            mean[k] = seconds > 0 ? sum[k] / seconds : 0;
        }

        var frequencies = new Dictionary<FindingKey, double>();
        foreach (var (key, s) in lineSums)
        {
            if (s.Frames > 0)
            {
                frequencies[key] = s.SumHz / s.Frames;
            }
        }

        return new DaySpectrum(best.BinWidthHz, seconds, mean, frequencies);
    }
}
