using HumWatch.Core.Findings;
using HumWatch.Core.Summaries;
using Xunit;

namespace HumWatch.Core.Tests.Summaries;

public sealed class DaySpectrumMeanTests
{
    private static readonly DateTimeOffset Hour = new(2026, 3, 2, 9, 0, 0, TimeSpan.Zero);

    [Fact]
    public void No_part_gives_no_spectrum()
    {
        Assert.Null(DaySpectrumMean.Of([]));
    }

    [Fact]
    public void Parts_average_weighted_by_their_seconds_and_lines_by_their_frames()
    {
        // A time-weighted mean: Σ psd·seconds / Σ seconds per bin; a line's frequency: Σ sumHz / Σ frames. // common practice, no source
        var a = Part(1, 0.25, 100, [1f, 2f, 3f], new() { [FindingKey.Mains(1)] = new(500.0, 10) });
        var b = Part(2, 0.25, 300, [5f, 6f, 7f], new() { [FindingKey.Mains(1)] = new(150.3, 3), [FindingKey.Display("display 75 Hz", 1)] = new(75.2, 1) });

        var day = DaySpectrumMean.Of([a, b])!;

        Assert.Equal(0.25, day.BinWidthHz);
        Assert.Equal(400, day.Seconds);
        Assert.Equal([(1 * 100 + 5 * 300) / 400.0, (2 * 100 + 6 * 300) / 400.0, (3 * 100 + 7 * 300) / 400.0], day.MeanPsdUv2PerHz);
        Assert.Equal((500.0 + 150.3) / 13, day.LineFrequenciesHz[FindingKey.Mains(1)], 12);
        Assert.Equal(75.2, day.LineFrequenciesHz[FindingKey.Display("display 75 Hz", 1)], 12);
    }

    [Fact]
    public void Only_the_bin_layout_covering_the_most_time_is_used()
    {
        var main = Part(1, 0.25, 600, [2f, 2f], new() { [FindingKey.Mains(1)] = new(50.0, 1) });
        var otherWidth = Part(2, 0.5, 500, [9f, 9f], new() { [FindingKey.Mains(2)] = new(100.0, 1) });
        var otherCount = Part(3, 0.25, 100, [9f, 9f, 9f], []);

        var day = DaySpectrumMean.Of([otherWidth, main, otherCount])!;

        Assert.Equal(0.25, day.BinWidthHz);
        Assert.Equal(600, day.Seconds);
        Assert.Equal([2.0, 2.0], day.MeanPsdUv2PerHz);
        Assert.Equal([FindingKey.Mains(1)], day.LineFrequenciesHz.Keys);
    }

    private static SpectrumPart Part(long sequence, double binWidthHz, double seconds, float[] psd, Dictionary<FindingKey, LineFrequencyTally> lines) =>
        new("room-a", "s1", sequence, Hour, binWidthHz, seconds, psd, lines);
}
