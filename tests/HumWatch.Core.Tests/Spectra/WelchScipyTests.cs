using HumWatch.Core.Spectra;
using Xunit;

namespace HumWatch.Core.Tests.Spectra;

public sealed class WelchScipyTests
{
    public static IEnumerable<object[]> Cases() => ScipyWelchFixtures.CaseNames();

    [Theory]
    [MemberData(nameof(Cases))]
    public void WelchPsd_matches_scipy_welch_per_bin(string caseName)
    {
        var c = ScipyWelchFixtures.Load(caseName);
        Assert.Equal("1.10.1", c.ScipyVersion);
        var psd = new double[(c.SegmentLength / 2) + 1];

        var segments = WelchPsd.Compute(c.InputAsDouble(), c.SampleRateHz, c.SegmentLength, c.OverlapSamples, psd);

        // scipy 1.10.1 signal.welch (hann, constant detrend, density, mean), fixture tests/fixtures/scipy
        Assert.Equal(c.Segments, segments);
        SpectraAssert.BinsClose(c.ScipyPsd, psd, 1e-9, 1e-12, caseName);
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void Bin_frequencies_match_scipy_grid(string caseName)
    {
        var c = ScipyWelchFixtures.Load(caseName);
        var bins = c.ScipyPsd.Length;

        // scipy 1.10.1 signal.welch returns f = rfftfreq(nperseg, 1/fs): k·fs/nperseg, last = floor(nperseg/2)·fs/nperseg
        Assert.Equal((c.SegmentLength / 2) + 1, bins);
        Assert.Equal(Math.Floor(c.SegmentLength / 2.0) * c.SampleRateHz / c.SegmentLength, WelchPsd.FrequencyOfBin(bins - 1, c.SampleRateHz, c.SegmentLength), 12);
        Assert.Equal(c.SampleRateHz / c.SegmentLength, WelchPsd.FrequencyOfBin(1, c.SampleRateHz, c.SegmentLength), 12);
    }

    [Fact]
    public void SlidingWelch_first_frame_matches_scipy_over_the_same_samples()
    {
        // Fixture: fs 500 Hz, nperseg 2000, noverlap 1500, 12333 samples → 21 segments, scipy drops the last 333.
        var c = ScipyWelchFixtures.Load("fs500_n2000_ov75_tone");
        var options = new SpectralOptions { SegmentSeconds = 4, OverlapFraction = 0.75, SpanSeconds = 24, HopSeconds = 1 };
        var welch = new SlidingWelch(c.SampleRateHz, 1, options);
        var sink = new FirstFrameSink();

        welch.Append(c.Input, c.Input.Length, sink);

        Assert.Equal(c.Segments, welch.SegmentsPerSpan);
        Assert.NotNull(sink.FirstPsd);
        Assert.Equal(0, sink.FirstStart);
        Assert.Equal(12000, sink.FirstEnd);

        // scipy 1.10.1 signal.welch, fixture tests/fixtures/scipy/fs500_n2000_ov75_tone
        SpectraAssert.BinsClose(c.ScipyPsd, sink.FirstPsd, 1e-9, 1e-12, c.Name);
    }

    private sealed class FirstFrameSink : ISlidingWelchSink
    {
        public double[]? FirstPsd { get; private set; }

        public long FirstStart { get; private set; } = -1;

        public long FirstEnd { get; private set; } = -1;

        public void OnSpan(SlidingWelch welch, long spanStartSample, long spanEndSample)
        {
            if (FirstPsd is null)
            {
                FirstPsd = welch.AveragedPsd(0).ToArray();
                FirstStart = spanStartSample;
                FirstEnd = spanEndSample;
            }
        }
    }
}
