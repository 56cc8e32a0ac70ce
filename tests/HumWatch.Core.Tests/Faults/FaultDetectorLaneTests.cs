using HumWatch.Core.Faults;
using HumWatch.Core.Signals;
using Xunit;

namespace HumWatch.Core.Tests.Faults;

/// <summary>
/// Channels are accumulated four at a time (one per vector lane) and the rest one by one; a channel's statistics must
/// not depend on which path took it. A one-channel detector always takes the one-by-one path, so it is the reference.
/// </summary>
public sealed class FaultDetectorLaneTests
{
    [Theory]
    [InlineData(512)]
    [InlineData(256)]
    public void Statistics_of_every_channel_match_a_one_channel_detector_bit_for_bit_on_seeded_random_samples(int vectorBits)
    {
        // The one-channel detector runs the scalar loop, the reference; the multi-channel one runs groups of the given
        // width (8 or 4 float64 lanes, emulated where the hardware lacks it) and the scalar loop for the last channels.
        var random = new Random(4242);
        var compared = 0;
        for (var trial = 0; trial < 60; trial++)
        {
            var channels = 1 + random.Next(13);
            var span = 100 * (2 + random.Next(4));
            var hop = 50 * (1 + random.Next(3));
            var options = new FaultOptions { FallbackClipLevelUv = trial % 2 == 0 ? 500 : 0, FlatStdDevUv = 0.1 + random.NextDouble() };
            var infos = new ChannelInfo[channels];
            for (var c = 0; c < channels; c++)
            {
                infos[c] = random.Next(3) == 0 ? new ChannelInfo($"C{c}") : new ChannelInfo($"C{c}", -200 - random.Next(100), 200 + random.Next(100));
            }

            var layout = new StreamLayout(100, infos);
            var detector = new FaultDetector(layout, options, span, hop, vectorBits);
            var singles = new FaultDetector[channels];
            for (var c = 0; c < channels; c++)
            {
                singles[c] = new FaultDetector(new StreamLayout(100, [infos[c]]), options, span, hop);
            }

            var kinds = new int[channels];
            for (var step = 0; step < 40; step++)
            {
                var n = 1 + random.Next(hop);
                var block = new float[channels * n];
                for (var c = 0; c < channels; c++)
                {
                    if (random.Next(8) == 0)
                    {
                        kinds[c] = random.Next(8);
                    }

                    for (var i = 0; i < n; i++)
                    {
                        block[(c * n) + i] = Sample(random, kinds[c], infos[c]);
                    }
                }

                detector.Append(block, n);
                for (var c = 0; c < channels; c++)
                {
                    singles[c].Append(block.AsSpan(c * n, n), n);
                }

                for (var slot = 0; slot < detector.RingBlocks; slot++)
                {
                    for (var c = 0; c < channels; c++)
                    {
                        var lanes = detector.SlotStatistics(slot, c);
                        var single = singles[c].SlotStatistics(slot, 0);
                        var where = $"trial {trial}, step {step}, slot {slot}, channel {c} of {channels}";
                        AssertSameBits(single.Reference, lanes.Reference, where + " reference");
                        AssertSameBits(single.Sum, lanes.Sum, where + " sum");
                        AssertSameBits(single.SumSquares, lanes.SumSquares, where + " sum of squares");
                        AssertSameBits(single.Max, lanes.Max, where + " max");
                        AssertSameBits(single.Min, lanes.Min, where + " min");
                        AssertSameBits(single.Last, lanes.Last, where + " last");
                        AssertSameBits(single.MinStep, lanes.MinStep, where + " smallest step");
                        Assert.True(single.Finite == lanes.Finite && single.Clipped == lanes.Clipped && single.NonFinite == lanes.NonFinite, where + " counts");
                        Assert.True(single.AtMax == lanes.AtMax && single.AtMin == lanes.AtMin, where + " counts at the extremes");
                        compared++;
                    }
                }
            }
        }

        Assert.True(compared > 20000, $"only {compared} cells compared");
    }

    // Kinds: noise; noise on a large DC offset; constant; at or beyond the range limits; sparse NaN/±∞/−0; tiny and huge;
    // quantised in 1 µV steps (repeated extremes and steps); pinned at a rail inside the range, ±0 mixed in.
    private static float Sample(Random random, int kind, ChannelInfo info)
    {
        var noise = (float)((random.NextDouble() - 0.5) * 40);
        switch (kind)
        {
            case 6:
                return MathF.Round(noise / 4);
            case 7:
                return random.Next(4) switch
                {
                    0 => 0.0f,
                    1 => -0.0f,
                    _ => Math.Min(noise, 15f),
                };
            case 1:
                return 30000.5f + noise;
            case 2:
                return 12.5f;
            case 3:
                return random.Next(3) switch
                {
                    0 => (float)(info.RangeMaxUv ?? 500),
                    1 => (float)(info.RangeMinUv ?? -500) - 1,
                    _ => noise,
                };
            case 4:
                return random.Next(6) switch
                {
                    0 => float.NaN,
                    1 => float.PositiveInfinity,
                    2 => float.NegativeInfinity,
                    3 => -0.0f,
                    _ => noise,
                };
            case 5:
                return random.Next(2) == 0 ? 1e-40f * random.Next(1, 100) : 1e30f * noise;
            default:
                return noise;
        }
    }

    private static void AssertSameBits(double expected, double actual, string where) =>
        Assert.True(BitConverter.DoubleToInt64Bits(expected) == BitConverter.DoubleToInt64Bits(actual), $"{where}: {actual:R}, one by one {expected:R}");
}
