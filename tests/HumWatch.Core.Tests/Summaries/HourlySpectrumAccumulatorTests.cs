using HumWatch.Core.Findings;
using HumWatch.Core.Summaries;
using HumWatch.Core.Tests.Alerts.Support;
using Xunit;

namespace HumWatch.Core.Tests.Summaries;

public sealed class HourlySpectrumAccumulatorTests
{
    private sealed class CollectingParts : ISpectrumPartSink
    {
        public List<SpectrumPart> Parts { get; } = [];

        public void OnSpectrumPart(SpectrumPart part) => Parts.Add(part);
    }

    [Fact]
    public void Parts_split_at_the_utc_hour_and_weight_the_psd_by_new_stream_time()
    {
        var builder = new FrameBuilder();
        var start = new DateTimeOffset(2026, 3, 29, 0, 59, 0, TimeSpan.Zero);
        var clock = new FrameClock(builder, start);
        var parts = new CollectingParts();
        var accumulator = new HourlySpectrumAccumulator("room-a", "s1");
        for (var i = 0; i < 60; i++)
        {
            var frame = clock.Next([new LineSpec(FrameBuilder.Mains(), 50.0 + (i % 2 == 0 ? 0.01 : -0.01), 3, 1, [0])]);
            // PSD level = frame number + 1, so the mean is a weighted mean over frames.
            Array.Fill(frame.MeanPsdBuffer, i + 1.0);
            accumulator.Observe(frame, clock.EndUtc, parts);
        }

        accumulator.Flush(parts);

        Assert.Equal(2, parts.Parts.Count);
        var first = parts.Parts[0];
        var second = parts.Parts[1];
        Assert.Equal(start.AddMinutes(-59), first.HourUtc);
        Assert.Equal(start.AddMinutes(1), second.HourUtc);
        // First frame adds 8 s (ends 00:59:08), then 2 s hops: frames ending up to 00:59:58 belong to hour 00 (26 frames, 58 s).
        Assert.Equal(58, first.Seconds, 9);
        Assert.Equal(clock.EndSeconds - 58, second.Seconds, 9);
        // Weighted mean of levels 1 (8 s) and 2 … 26 (2 s each): (8 + 2 × (2 + … + 26)) / 58.
        var expected = (8.0 + (2.0 * Enumerable.Range(2, 25).Sum())) / 58;
        Assert.Equal(expected, first.MeanPsdUv2PerHz[100], 4);
        var mains = first.Lines[FindingKey.Mains(1)]; // same key as the minute ledger and alerts
        Assert.Equal(26, mains.Frames);
        Assert.Equal(50.0, mains.SumHz / mains.Frames, 3);
        Assert.Equal([1L, 2L], parts.Parts.Select(p => p.Sequence));
    }

    [Fact]
    public void A_bad_flush_interval_names_the_parameter()
    {
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new HourlySpectrumAccumulator("room-a", "s1", flushEverySeconds: 5));
        Assert.Equal("flushEverySeconds", ex.ParamName);
    }
}
