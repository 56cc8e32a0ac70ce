using HumWatch.Core.Spectra;
using Xunit;

namespace HumWatch.Core.Tests.Spectra;

public sealed class SpectraArgumentTests
{
    private static SpectralOptions Small() => new() { SegmentSeconds = 1, OverlapFraction = 0.5, SpanSeconds = 3, HopSeconds = 1 };

    [Theory]
    [InlineData(0.0)]
    [InlineData(-250.0)]
    [InlineData(double.NaN)]
    [InlineData(double.PositiveInfinity)]
    public void SlidingWelch_rejects_a_sample_rate_that_is_not_positive_and_finite(double sampleRateHz)
    {
        var e = Assert.Throws<ArgumentOutOfRangeException>(() => new SlidingWelch(sampleRateHz, 2, Small()));
        Assert.Equal("sampleRateHz", e.ParamName);
    }

    [Fact]
    public void SlidingWelch_rejects_zero_channels()
    {
        var e = Assert.Throws<ArgumentOutOfRangeException>(() => new SlidingWelch(100, 0, Small()));
        Assert.Equal("channelCount", e.ParamName);
    }

    [Fact]
    public void SlidingWelch_rejects_missing_options()
    {
        var e = Assert.Throws<ArgumentNullException>(() => new SlidingWelch(100, 1, null!));
        Assert.Equal("options", e.ParamName);
    }

    [Fact]
    public void SlidingWelch_lists_every_invalid_setting_in_one_message()
    {
        var options = new SpectralOptions { SegmentSeconds = 1, OverlapFraction = 0.95, SpanSeconds = 0.5, HopSeconds = 1 };

        var e = Assert.Throws<ArgumentException>(() => new SlidingWelch(100, 1, options));

        // Core names the settings, not configuration keys: the Host passes its key prefix (see the next test).
        Assert.Equal("options", e.ParamName);
        Assert.Contains("OverlapFraction must be", e.Message, StringComparison.Ordinal);
        Assert.Contains("SpanSeconds must be", e.Message, StringComparison.Ordinal);
        Assert.DoesNotContain("Spectra:", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Spectral_options_name_the_callers_configuration_key_when_given_a_prefix()
    {
        var options = new SpectralOptions { SegmentSeconds = 1, OverlapFraction = 0.95, SpanSeconds = 0.5, HopSeconds = 1 };

        var errors = options.Validate("Analysis:Spectra");

        Assert.Contains(errors, m => m.StartsWith("Analysis:Spectra:OverlapFraction must be", StringComparison.Ordinal));
        Assert.Contains(errors, m => m.StartsWith("Analysis:Spectra:SpanSeconds must be", StringComparison.Ordinal));
        Assert.All(options.Validate(), m => Assert.DoesNotContain(":", m.Split(' ')[0], StringComparison.Ordinal));
    }

    [Fact]
    public void SlidingWelch_rejects_a_hop_that_is_not_a_whole_number_of_steps()
    {
        var options = new SpectralOptions { SegmentSeconds = 4, OverlapFraction = 0.5, SpanSeconds = 8, HopSeconds = 3 };

        var e = Assert.Throws<ArgumentException>(() => new SlidingWelch(500, 1, options));

        Assert.Equal("options", e.ParamName);
        Assert.Contains("HopSeconds", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void SlidingWelch_rejects_a_segment_shorter_than_two_samples()
    {
        var options = new SpectralOptions { SegmentSeconds = 0.001, OverlapFraction = 0, SpanSeconds = 0.001, HopSeconds = 0.001 };

        var e = Assert.Throws<ArgumentException>(() => new SlidingWelch(500, 1, options));

        Assert.Equal("options", e.ParamName);
    }

    [Fact]
    public void SlidingWelch_rejects_a_kernel_of_another_segment_length()
    {
        var e = Assert.Throws<ArgumentException>(() => new SlidingWelch(100, 1, Small(), PeriodogramKernels.Create(128, 100)));
        Assert.Equal("kernel", e.ParamName);
    }

    [Fact]
    public void Append_rejects_a_block_whose_length_does_not_match_channels_times_samples()
    {
        var welch = new SlidingWelch(100, 2, Small());
        var e = Assert.Throws<ArgumentException>(() => welch.Append(new float[7], 4, new NullSink()));
        Assert.Equal("channelMajor", e.ParamName);
    }

    [Fact]
    public void Append_rejects_a_negative_sample_count_and_a_missing_sink()
    {
        var welch = new SlidingWelch(100, 1, Small());
        Assert.Equal("samplesPerChannel", Assert.Throws<ArgumentOutOfRangeException>(() => welch.Append([], -1, new NullSink())).ParamName);
        Assert.Equal("sink", Assert.Throws<ArgumentNullException>(() => welch.Append([], 0, null!)).ParamName);
    }

    [Fact]
    public void Reading_a_channel_or_segment_outside_the_frame_names_the_argument()
    {
        var welch = new SlidingWelch(100, 2, Small());
        welch.Append(new float[2 * 300], 300, new NullSink());

        Assert.Equal("channel", Assert.Throws<ArgumentOutOfRangeException>(() => welch.AveragedPsd(2)).ParamName);
        Assert.Equal("channel", Assert.Throws<ArgumentOutOfRangeException>(() => welch.SegmentPeriodogram(-1, 0)).ParamName);
        Assert.Equal("segmentInSpan", Assert.Throws<ArgumentOutOfRangeException>(() => welch.SegmentPeriodogram(0, 5)).ParamName);
        Assert.Equal("segmentInSpan", Assert.Throws<ArgumentOutOfRangeException>(() => welch.SegmentStartSample(-1)).ParamName);
    }

    [Fact]
    public void Reading_before_the_first_frame_is_refused()
    {
        var welch = new SlidingWelch(100, 1, Small());
        welch.Append(new float[299], 299, new NullSink());

        Assert.Throws<InvalidOperationException>(() => welch.AveragedPsd(0));
        Assert.Throws<InvalidOperationException>(() => welch.SegmentStartSample(0));
    }

    [Fact]
    public void WelchPsd_rejects_bad_arguments_naming_each()
    {
        var x = new double[1000];
        var psd = new double[129];
        Assert.Equal("sampleRateHz", Assert.Throws<ArgumentOutOfRangeException>(() => WelchPsd.Compute(x, 0, 256, 128, psd)).ParamName);
        Assert.Equal("segmentLength", Assert.Throws<ArgumentOutOfRangeException>(() => WelchPsd.Compute(x, 256, 1001, 0, psd)).ParamName);
        Assert.Equal("segmentLength", Assert.Throws<ArgumentOutOfRangeException>(() => WelchPsd.Compute(x, 256, 1, 0, psd)).ParamName);
        Assert.Equal("overlapSamples", Assert.Throws<ArgumentOutOfRangeException>(() => WelchPsd.Compute(x, 256, 256, 256, psd)).ParamName);
        Assert.Equal("overlapSamples", Assert.Throws<ArgumentOutOfRangeException>(() => WelchPsd.Compute(x, 256, 256, -1, psd)).ParamName);
        Assert.Equal("psd", Assert.Throws<ArgumentException>(() => WelchPsd.Compute(x, 256, 256, 128, new double[128])).ParamName);
        Assert.Equal("bin", Assert.Throws<ArgumentOutOfRangeException>(() => WelchPsd.FrequencyOfBin(129, 256, 256)).ParamName);
        Assert.Equal("n", Assert.Throws<ArgumentOutOfRangeException>(() => WelchPsd.HannEnbwBins(1)).ParamName);
    }

    [Fact]
    public void Kernel_factory_and_kernel_reject_bad_arguments_naming_each()
    {
        Assert.Equal("segmentLength", Assert.Throws<ArgumentOutOfRangeException>(() => PeriodogramKernels.Create(1, 100)).ParamName);
        Assert.Equal("sampleRateHz", Assert.Throws<ArgumentOutOfRangeException>(() => PeriodogramKernels.Create(64, -1)).ParamName);
        var kernel = PeriodogramKernels.Create(64, 100);
        Assert.Equal("samples", Assert.Throws<ArgumentException>(() => kernel.Compute(new double[100], 2, 64, new double[66])).ParamName);
        Assert.Equal("periodograms", Assert.Throws<ArgumentException>(() => kernel.Compute(new double[128], 2, 64, new double[65])).ParamName);
        Assert.Equal("channelCount", Assert.Throws<ArgumentOutOfRangeException>(() => kernel.Compute(new double[128], -1, 64, new double[66])).ParamName);
    }

    private sealed class NullSink : ISlidingWelchSink
    {
        public void OnSpan(SlidingWelch welch, long spanStartSample, long spanEndSample)
        {
        }
    }
}
