using HumWatch.Core.Faults;
using HumWatch.Core.Signals;
using Xunit;

namespace HumWatch.Core.Tests.Faults;

public sealed class FaultDetectorTests
{
    private const int Span = 400;
    private const int Hop = 100;

    [Fact]
    public void Clean_channels_have_no_faults()
    {
        var (faults, excluded) = Judge(Layout(2), new FaultOptions(), (c, n) => Noise(c, n));

        Assert.Empty(faults);
        Assert.All(excluded, Assert.False);
    }

    [Fact]
    public void Channel_flat_for_one_hop_is_flat_and_excluded_with_its_share()
    {
        var (faults, excluded) = Judge(Layout(2), new FaultOptions(), (c, n) => c == 1 && n is >= 200 and < 300 ? 12.5f : Noise(c, n));

        var fault = Assert.Single(faults);
        Assert.Equal(new ChannelFault(1, ChannelFaultKind.Flat, 0.25), fault);
        Assert.True(excluded[1]);
        Assert.False(excluded[0]);
    }

    [Fact]
    public void Flat_test_is_immune_to_a_large_dc_offset()
    {
        // 0.5 µV noise on a 100 mV offset: float32 still resolves it (ulp ≈ 0.008 µV at 1e5 µV).
        var (faults, _) = Judge(Layout(1), new FaultOptions(), (c, n) => 100000f + (0.5f * Noise(c, n) / 10));

        Assert.Empty(faults);
    }

    [Fact]
    public void Samples_at_the_range_limits_make_the_channel_clipped_but_keep_it_analysed()
    {
        var layout = new StreamLayout(100, [new ChannelInfo("A", -50, 50), new ChannelInfo("B", -50, 50)]);

        var (faults, excluded) = Judge(layout, new FaultOptions(), (c, n) => c == 0 ? Math.Clamp(Noise(c, n) * 10, -50f, 50f) : Noise(c, n));

        var fault = Assert.Single(faults);
        Assert.Equal(0, fault.Channel);
        Assert.Equal(ChannelFaultKind.Clipped, fault.Kind);
        Assert.InRange(fault.Fraction, 0.01, 0.9);
        Assert.False(excluded[0]);
    }

    [Fact]
    public void Without_a_range_the_fallback_level_detects_clipping()
    {
        var options = new FaultOptions { FallbackClipLevelUv = 40 };

        var (faults, _) = Judge(Layout(1), options, (c, n) => n % 50 == 0 ? 40f : Noise(c, n));

        Assert.Equal(ChannelFaultKind.Clipped, Assert.Single(faults).Kind);
    }

    [Fact]
    public void A_value_repeated_at_the_top_inside_a_generous_range_is_clipped_but_keeps_the_channel_analysed()
    {
        // The same clamp at ±50 µV as above, but the file declares ±1000 µV: only the repeated extreme shows it (the
        // pseudo-noise reaches its own maximum once per span, the clamp holds dozens of samples at exactly ±50).
        var layout = new StreamLayout(100, [new ChannelInfo("A", -1000, 1000), new ChannelInfo("B", -1000, 1000)]);

        var (faults, excluded) = Judge(layout, new FaultOptions(), (c, n) => c == 0 ? Math.Clamp(Noise(c, n) * 10, -50f, 50f) : Noise(c, n));

        var fault = Assert.Single(faults);
        Assert.Equal(new ChannelFault(0, ChannelFaultKind.Clipped, fault.Fraction), fault);
        Assert.Equal(Count(Span, n => Math.Abs(Noise(0, n) * 10) >= 50) / (double)Span, fault.Fraction, 9);
        Assert.False(excluded[0]);
    }

    [Fact]
    public void A_short_run_pinned_inside_a_hop_is_clipped_by_its_repeated_value()
    {
        // 30 samples at 3000 µV inside an otherwise moving hop: the hop still moves, but 30 samples share the maximum.
        var (faults, excluded) = Judge(Layout(2), new FaultOptions(), (c, n) => c == 0 && n is >= 230 and < 260 ? 3000f : Noise(c, n));

        Assert.Equal(new ChannelFault(0, ChannelFaultKind.Clipped, 30.0 / Span), Assert.Single(faults));
        Assert.False(excluded[0]);
    }

    [Fact]
    public void A_still_hop_far_from_the_channels_own_level_is_pinned_not_flat()
    {
        // One hop still at 400 µV on a channel that otherwise moves ±10 µV around 0 (SD 5 µV): 80 SD and 400 µV away,
        // past SaturationDistanceSd and SaturationMinDistanceUv. The same hop at 12.5 µV is flat (first test above).
        var (faults, excluded) = Judge(Layout(2), new FaultOptions(), (c, n) => c == 1 && n is >= 200 and < 300 ? 400f : Noise(c, n));

        Assert.Equal(new ChannelFault(1, ChannelFaultKind.Clipped, 0.25), Assert.Single(faults));
        Assert.True(excluded[1]);
    }

    [Fact]
    public void A_still_hop_at_the_value_the_moving_part_piles_up_at_is_the_same_saturation()
    {
        // A drift onto a rail: the hop before rides the rail at 30 µV (clamped), then the channel stays on it. 30 µV is
        // within a few SD of the channel's level, so only "it holds the value the moving part keeps returning to" ties
        // the still hop to the clipping.
        var (faults, excluded) = Judge(Layout(1), new FaultOptions(), (c, n) => n >= 300 ? 30f : Math.Min(Noise(c, n) * 6, 30f));

        var fault = Assert.Single(faults);
        Assert.Equal(ChannelFaultKind.Clipped, fault.Kind);
        Assert.Equal((100 + Count(300, n => Noise(0, n) * 6 >= 30)) / (double)Span, fault.Fraction, 9);
        Assert.True(excluded[0]);
    }

    [Theory]
    [InlineData(3000f, ChannelFaultKind.Clipped)]
    [InlineData(-3000f, ChannelFaultKind.Clipped)]
    [InlineData(0f, ChannelFaultKind.Flat)]
    [InlineData(40f, ChannelFaultKind.Flat)]
    public void A_channel_still_for_the_whole_span_is_judged_against_the_moving_channels(float level, ChannelFaultKind expected)
    {
        // The other channels move ±10 µV around 0 (SD 5 µV), so they cover 0 ± 100 µV (SaturationMinDistanceUv beats
        // 8 SD): ±3000 µV lies where no working electrode goes — a rail; 0 and 40 µV lie among them — flat.
        var (faults, excluded) = Judge(Layout(3), new FaultOptions(), (c, n) => c == 2 ? level : Noise(c, n));

        Assert.Equal(new ChannelFault(2, expected, 1), Assert.Single(faults));
        Assert.True(excluded[2]);
    }

    [Fact]
    public void Without_any_moving_channel_a_still_channel_is_flat_wherever_it_sits()
    {
        // Nothing in the span says where this amplifier's rails are.
        var (faults, _) = Judge(Layout(1), new FaultOptions(), (_, _) => 3000f);

        Assert.Equal(new ChannelFault(0, ChannelFaultKind.Flat, 1), Assert.Single(faults));
    }

    [Fact]
    public void New_thresholds_are_validated_naming_the_key()
    {
        var options = new FaultOptions { SaturationDistanceSd = 0, SaturationMinDistanceUv = -1, RepeatedExtremeFraction = 1.5, RepeatedExtremeMinSamples = 1, CoarseStepSd = double.NaN };

        var errors = options.Validate("Analysis:Faults");

        Assert.Equal(5, errors.Count);
        foreach (var key in new[] { "SaturationDistanceSd", "SaturationMinDistanceUv", "RepeatedExtremeFraction", "RepeatedExtremeMinSamples", "CoarseStepSd" })
        {
            Assert.Contains(errors, e => e.StartsWith($"Analysis:Faults:{key} ", StringComparison.Ordinal));
        }

        Assert.Empty(new FaultOptions().Validate());
    }

    [Fact]
    public void NaN_samples_make_the_channel_non_finite_and_excluded()
    {
        var (faults, excluded) = Judge(Layout(2), new FaultOptions(), (c, n) => c == 0 && n is >= 10 and < 30 ? float.NaN : c == 0 && n == 77 ? float.PositiveInfinity : Noise(c, n));

        var fault = Assert.Single(faults);
        Assert.Equal(ChannelFaultKind.NonFinite, fault.Kind);
        Assert.Equal(21.0 / Span, fault.Fraction, 9);
        Assert.True(excluded[0]);
    }

    [Fact]
    public void Evaluate_allocates_nothing_and_rejects_a_span_it_no_longer_holds()
    {
        var detector = new FaultDetector(Layout(2), new FaultOptions(), Span, Hop);
        var block = new float[2 * Hop];
        var faults = new ChannelFault[detector.Capacity];
        var excluded = new bool[2];
        for (var h = 0; h < 8; h++)
        {
            Fill(block, h * Hop, (c, n) => Noise(c, n));
            detector.Append(block, Hop);
        }

        var before = GC.GetAllocatedBytesForCurrentThread();
        detector.Evaluate(400, 800, faults, excluded);
        detector.Append(block, Hop);
        Assert.Equal(0, GC.GetAllocatedBytesForCurrentThread() - before);

        Assert.Throws<ArgumentOutOfRangeException>(() => detector.Evaluate(0, 400, faults, excluded));
    }

    // Samples 0..samples−1 for which predicate holds.
    private static int Count(int samples, Func<int, bool> predicate) => Enumerable.Range(0, samples).Count(predicate);

    private static (ChannelFault[] Faults, bool[] Excluded) Judge(StreamLayout layout, FaultOptions options, Func<int, int, float> sample)
    {
        var detector = new FaultDetector(layout, options, Span, Hop);
        var block = new float[layout.ChannelCount * Hop];
        for (var h = 0; h < Span / Hop; h++)
        {
            Fill(block, h * Hop, sample, layout.ChannelCount);
            detector.Append(block, Hop);
        }

        var faults = new ChannelFault[detector.Capacity];
        var excluded = new bool[layout.ChannelCount];
        var count = detector.Evaluate(0, Span, faults, excluded);
        return (faults[..count], excluded);
    }

    private static void Fill(float[] block, int first, Func<int, int, float> sample, int channels = 2)
    {
        for (var c = 0; c < channels; c++)
        {
            for (var i = 0; i < Hop; i++)
            {
                block[(c * Hop) + i] = sample(c, first + i);
            }
        }
    }

    // Deterministic pseudo-noise, roughly ±10 µV.
    private static float Noise(int channel, int n) => (float)(10 * Math.Sin((n * 1.7) + (channel * 0.9)) * Math.Cos(n * 0.31));

    private static StreamLayout Layout(int channels) =>
        new(100, Enumerable.Range(0, channels).Select(c => new ChannelInfo($"C{c}")).ToArray());
}
