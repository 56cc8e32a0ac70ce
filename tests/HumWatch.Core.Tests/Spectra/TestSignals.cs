using HumWatch.Core.Spectra;

namespace HumWatch.Core.Tests.Spectra;

internal static class TestSignals
{
    /// <summary>Per channel: seeded noise (σ ≈ 10 µV), a DC offset, a slow trend and a 10·(c+1) % of fs tone, as float32.</summary>
    public static float[][] Channels(int channels, int samples, double sampleRateHz, int seed)
    {
        var rng = new Random(seed);
        var result = new float[channels][];
        for (var c = 0; c < channels; c++)
        {
            var x = new float[samples];
            var toneHz = 0.1 * (c + 1) * sampleRateHz / 2;
            for (var i = 0; i < samples; i++)
            {
                var t = i / sampleRateHz;
                x[i] = (float)((17.3 * (rng.NextDouble() - 0.5)) + (5 * c) + (0.2 * t) + (8 * Math.Sin(2 * Math.PI * toneHz * t)));
            }

            result[c] = x;
        }

        return result;
    }

    public static double[] AsDoubles(ReadOnlySpan<float> x)
    {
        var d = new double[x.Length];
        for (var i = 0; i < x.Length; i++)
        {
            d[i] = x[i];
        }

        return d;
    }

    public static float[] ChannelMajor(float[][] channels, int samples) => ChannelMajor(channels, 0, samples);

    public static float[] ChannelMajor(float[][] channels, int offset, int count)
    {
        var block = new float[channels.Length * count];
        for (var c = 0; c < channels.Length; c++)
        {
            Array.Copy(channels[c], offset, block, c * count, count);
        }

        return block;
    }

    public static void AppendInChunks(SlidingWelch welch, float[][] channels, int total, int chunk, ISlidingWelchSink sink)
    {
        for (var offset = 0; offset < total; offset += chunk)
        {
            var count = Math.Min(chunk, total - offset);
            welch.Append(ChannelMajor(channels, offset, count), count, sink);
        }
    }
}

/// <summary>Allocation-free stand-in kernel: "periodogram" bin k = squared sample k, plus a count of periodograms computed (segments × channels).</summary>
internal sealed class CountingKernel(int segmentLength) : IPeriodogramKernel
{
    public int SegmentLength { get; } = segmentLength;

    public int BinCount { get; } = (segmentLength / 2) + 1;

    public int PeriodogramsComputed { get; private set; }

    public void Compute(ReadOnlySpan<double> samples, int channelCount, int sampleStride, Span<double> periodograms)
    {
        for (var c = 0; c < channelCount; c++)
        {
            var segment = samples.Slice(c * sampleStride, SegmentLength);
            var output = periodograms.Slice(c * BinCount, BinCount);
            for (var k = 0; k < BinCount; k++)
            {
                output[k] = segment[k] * segment[k];
            }

            PeriodogramsComputed++;
        }
    }
}
