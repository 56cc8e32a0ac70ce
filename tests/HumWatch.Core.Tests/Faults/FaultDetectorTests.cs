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
