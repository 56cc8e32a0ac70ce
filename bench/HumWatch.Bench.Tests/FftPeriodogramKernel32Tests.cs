using HumWatch.Bench.Float32;
using HumWatch.Core.Spectra;
using HumWatch.Core.Tests.Spectra;
using Xunit;

namespace HumWatch.Bench.Tests;

public sealed class FftPeriodogramKernel32Tests
{
    // Float32 tolerances. Unit roundoff u = 2⁻²⁴ ≈ 6.0e-8 (float32 machine epsilon 1.19e-7 = 2u). A radix-2/4 FFT of
    // length M in floating point has a normwise relative error ≤ log2 M·η, η ≈ (4√2 + 1)·u ≈ 6.7u (Higham 2002, Accuracy
    // and Stability of Numerical Algorithms, Thm 24.2 (from memory)); spread over the bins that is about 6.7·u·log2 N of the
    // RMS bin amplitude per bin, so bin k's power p_k moves by about 2·6.7·u·log2 N·√(p_k·p̄), p̄ the mean bin power.
    // Relative to p_k that is 2·6.7·u·log2 N·√(p̄/p_k) — at N = 4096 about 1e-5·√(p̄/p_k): 1e-5 for a bin at the mean
    // power, more for bins below it. A single periodogram of noise has bins far below its mean (exponentially distributed:
    // 1 bin in 10⁴ is below 1e-4·p̄, i.e. 1e-3 relative there), so per bin we allow 1e-5 relative plus that rounding term
    // (constant 16: 6.7 doubled and rounded up, for the largest of ~10⁵ bins). scipy 1.10.1's own float32 welch misses a
    // plain 1e-5 relative bound above 1e-6·max by up to 2.5e-4 on single segments of signals like these (measured with
    // /usr/bin/python3), so the limit is float32's, not this kernel's. Bins below 1e-6·max (amplitude 1e-3 of the peak, where the rounding term is ≥ 1e-5·max
    // relative anyway) are held to an absolute 1e-6·max as in the float64 tests' floor.
    private const double RelativeTolerance = 1e-5;
    private const double FloorFraction = 1e-6;
    private const double RoundingConstant = 16;
    private const double UnitRoundoff = 5.9604644775390625e-8; // 2⁻²⁴, IEEE 754 binary32

    private static readonly int[] Sizes = [256, 1000, 1024, 2000, 2048, 4000, 4096, 8192, 16384];
    private static readonly int[] ChannelCounts = [1, 3, 8, 9, 17];

    public static TheoryData<int, int> SizeAndChannels()
    {
        var data = new TheoryData<int, int>();
        foreach (var n in Sizes)
        {
            foreach (var c in ChannelCounts)
            {
                data.Add(n, c);
            }
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(SizeAndChannels))]
    public void Float32_kernel_equals_MathNet_kernel_per_bin(int segmentLength, int channelCount)
    {
        // MathNet.Numerics 5.0.0 Fourier.ForwardReal in float64 through MathNetPeriodogramKernel (independent FFT implementation)
        AssertMatchesReference(segmentLength, channelCount, vectorized: true, seed: segmentLength + channelCount);
    }

    [Theory]
    [InlineData(256, 1)]
    [InlineData(1000, 3)]
    [InlineData(2000, 9)]
    [InlineData(2048, 2)]
    [InlineData(4000, 1)]
    [InlineData(8192, 3)]
    public void Float32_scalar_fallback_equals_MathNet_kernel_per_bin(int segmentLength, int channelCount)
    {
        // MathNet.Numerics 5.0.0 Fourier.ForwardReal in float64 through MathNetPeriodogramKernel
        AssertMatchesReference(segmentLength, channelCount, vectorized: false, seed: 7 * segmentLength);
    }

    [Theory]
    [InlineData(2)]
    [InlineData(4)]
    [InlineData(6)]
    [InlineData(10)]
    [InlineData(15)]
    [InlineData(30)]
    [InlineData(45)]
    [InlineData(250)]
    [InlineData(1125)]
    [InlineData(1536)]
    [InlineData(2250)]
    public void Float32_small_odd_and_mixed_lengths_equal_MathNet_on_both_paths(int segmentLength)
    {
        // MathNet.Numerics 5.0.0 Fourier.ForwardReal in float64 through MathNetPeriodogramKernel
        AssertMatchesReference(segmentLength, 9, vectorized: true, seed: segmentLength);
        AssertMatchesReference(segmentLength, 2, vectorized: false, seed: segmentLength + 1);
    }

    [Fact]
    public void Float32_detrend_keeps_a_large_DC_offset_out_of_bins_0_and_1()
    {
        // MathNet.Numerics 5.0.0 in float64 as reference. A 5 mV offset on 10 µV noise: the float32 mean alone is off by up
        // to ~2.4e-4 µV, which would put ~1e-4 relative error into bins 0 and 1 if subtracted as one float32.
        const int n = 4096;
        var rng = new Random(41);
        var x = new float[n];
        for (var i = 0; i < n; i++)
        {
            x[i] = (float)(5000 + (17.3 * (rng.NextDouble() - 0.5)));
        }

        var kernel = new FftPeriodogramKernel32(n, 1000);
        var actual = new float[kernel.BinCount];
        kernel.Compute(x, 1, n, actual);
        var expected = new double[kernel.BinCount];
        PeriodogramKernels.CreateReference(n, 1000).Compute(TestSignals.AsDoubles(x), 1, n, expected);

        for (var k = 0; k < 2; k++)
        {
            Assert.True(Math.Abs(actual[k] - expected[k]) <= 1e-4 * expected[k], $"bin {k}: {actual[k]:R} vs {expected[k]:R}");
        }
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void Float32_Welch_mean_matches_scipy_welch_per_bin(string caseName)
    {
        var c = ScipyWelchFixtures.Load(caseName);
        Assert.Equal("1.10.1", c.ScipyVersion);
        var kernel = FftPeriodogramKernel32.Create(c.SegmentLength, c.SampleRateHz);
        var step = c.SegmentLength - c.OverlapSamples;
        var segments = ((c.Input.Length - c.SegmentLength) / step) + 1;
        var periodograms = new float[segments * kernel.BinCount];

        // All segments of the one channel as a batch (stride = step), then their float32 mean per bin.
        kernel.Compute(c.Input, segments, step, periodograms);
        var sum = new float[kernel.BinCount];
        for (var s = 0; s < segments; s++)
        {
            for (var k = 0; k < sum.Length; k++)
            {
                sum[k] += periodograms[(s * kernel.BinCount) + k];
            }
        }

        var psd = new double[sum.Length];
        for (var k = 0; k < psd.Length; k++)
        {
            psd[k] = sum[k] / segments;
        }

        // scipy 1.10.1 signal.welch (hann, constant detrend, density, mean), fixture tests/fixtures/scipy. Averaged over
        // ≥ 7 segments no bin sits far below the mean any more, so the plain 1e-5 relative bound holds above 1e-6·max.
        Assert.Equal(c.Segments, segments);
        SpectraAssert.BinsClose(c.ScipyPsd, psd, RelativeTolerance, FloorFraction, caseName);
    }

    public static IEnumerable<object[]> Cases() => ScipyWelchFixtures.CaseNames();

    [Theory]
    [InlineData(256)]
    [InlineData(1000)]
    [InlineData(2048)]
    [InlineData(4000)]
    public void Factory_uses_the_float32_FFT_kernel_for_smooth_lengths(int segmentLength)
    {
        var kernel = FftPeriodogramKernel32.Create(segmentLength, 250);
        Assert.IsType<FftPeriodogramKernel32>(kernel);
        Assert.Equal(segmentLength, kernel.SegmentLength);
        Assert.Equal((segmentLength / 2) + 1, kernel.BinCount);
    }

    [Theory]
    [InlineData(1001)]
    [InlineData(7)]
    public void Factory_widens_to_MathNet_for_other_prime_factors(int segmentLength)
    {
        // MathNet.Numerics 5.0.0 in float64: the adapter's output is the reference rounded to float32
        var kernel = FftPeriodogramKernel32.Create(segmentLength, 250);
        Assert.IsType<WidenedPeriodogramKernel32>(kernel);
        var x = Signal(segmentLength, 3, 5, seed: segmentLength);
        var actual = new float[3 * kernel.BinCount];
        kernel.Compute(x, 3, segmentLength + 5, actual);
        var expected = new double[actual.Length];
        PeriodogramKernels.CreateReference(segmentLength, 250).Compute(TestSignals.AsDoubles(x), 3, segmentLength + 5, expected);
        for (var i = 0; i < actual.Length; i++)
        {
            Assert.Equal((float)expected[i], actual[i]);
        }
    }

    [Theory]
    [InlineData(2000, true)]
    [InlineData(2048, true)]
    [InlineData(1125, true)]
    [InlineData(4000, false)]
    [InlineData(1001, true)]
    public void Float32_steady_state_compute_allocates_nothing(int segmentLength, bool vectorized)
    {
        var smooth = FftPeriodogramKernel32.Create(segmentLength, 500) is FftPeriodogramKernel32;
        IPeriodogramKernel32 kernel = smooth
            ? new FftPeriodogramKernel32(segmentLength, 500, vectorized, 0)
            : FftPeriodogramKernel32.Create(segmentLength, 500);
        var samples = Signal(segmentLength, 9, 0, seed: 5);
        var psd = new float[9 * kernel.BinCount];
        kernel.Compute(samples, 9, segmentLength, psd); // warm-up (tiering, statics, adapter buffers)
        kernel.Compute(samples, 9, segmentLength, psd);

        var allocated = SteadyState.AllocatedBytesPerRound(() =>
        {
            for (var i = 0; i < 50; i++)
            {
                kernel.Compute(samples, 9, segmentLength, psd);
            }
        });

        Assert.True(psd[10] > 0);
        if (kernel is FftPeriodogramKernel32)
        {
            Assert.Equal(0, allocated);
        }
        else
        {
            // MathNet 5.0.0 allocates scratch per transform (see MathNetPeriodogramKernel); the adapter adds nothing per call.
            Assert.True(allocated < 50 * 9 * 200_000, $"{allocated} bytes");
        }
    }

    [Fact]
    public void Float32_kernel_rejects_bad_arguments_naming_each()
    {
        Assert.Equal("segmentLength", Assert.Throws<ArgumentOutOfRangeException>(() => new FftPeriodogramKernel32(1, 100)).ParamName);
        Assert.Equal("segmentLength", Assert.Throws<ArgumentOutOfRangeException>(() => new FftPeriodogramKernel32(1001, 100)).ParamName);
        Assert.Equal("sampleRateHz", Assert.Throws<ArgumentOutOfRangeException>(() => new FftPeriodogramKernel32(64, 0)).ParamName);
        Assert.Equal("sampleRateHz", Assert.Throws<ArgumentOutOfRangeException>(() => new FftPeriodogramKernel32(64, double.PositiveInfinity)).ParamName);
        Assert.Equal("misalignBytes", Assert.Throws<ArgumentOutOfRangeException>(() => new FftPeriodogramKernel32(64, 100, true, 2)).ParamName);
        Assert.Equal("segmentLength", Assert.Throws<ArgumentOutOfRangeException>(() => FftPeriodogramKernel32.Create(1, 100)).ParamName);
        Assert.Equal("sampleRateHz", Assert.Throws<ArgumentOutOfRangeException>(() => FftPeriodogramKernel32.Create(1001, -1)).ParamName);
        foreach (var kernel in new[] { FftPeriodogramKernel32.Create(64, 100), FftPeriodogramKernel32.Create(63, 100) })
        {
            var n = kernel.SegmentLength;
            var bins = kernel.BinCount;
            Assert.Equal("samples", Assert.Throws<ArgumentException>(() => kernel.Compute(new float[(2 * n) - 1], 2, n, new float[2 * bins])).ParamName);
            Assert.Equal("periodograms", Assert.Throws<ArgumentException>(() => kernel.Compute(new float[2 * n], 2, n, new float[(2 * bins) - 1])).ParamName);
            Assert.Equal("channelCount", Assert.Throws<ArgumentOutOfRangeException>(() => kernel.Compute(new float[2 * n], -1, n, new float[2 * bins])).ParamName);
            Assert.Equal("sampleStride", Assert.Throws<ArgumentOutOfRangeException>(() => kernel.Compute(new float[2 * n], 1, -1, new float[2 * bins])).ParamName);
        }
    }

    [Fact]
    public void Float32_zero_channels_write_nothing()
    {
        var kernel = new FftPeriodogramKernel32(64, 100);
        var psd = new float[33];
        psd[0] = 42;
        kernel.Compute(ReadOnlySpan<float>.Empty, 0, 64, psd);
        Assert.Equal(42, psd[0]);
    }

    private static void AssertMatchesReference(int segmentLength, int channelCount, bool vectorized, int seed)
    {
        const double fs = 1000;
        const int pad = 13; // segments not back to back, so the stride is honoured
        var stride = segmentLength + pad;
        var samples = Signal(segmentLength, channelCount, pad, seed);
        var kernel = new FftPeriodogramKernel32(segmentLength, fs, vectorized, 0);
        var reference = PeriodogramKernels.CreateReference(segmentLength, fs);
        var bins = kernel.BinCount;
        Assert.Equal(vectorized && System.Runtime.Intrinsics.Vector256.IsHardwareAccelerated, kernel.Vectorized);
        Assert.Equal(reference.BinCount, bins);
        var actual = new float[(channelCount * bins) + 3];
        actual[^1] = -1; // sentinel: nothing written past the rows
        var expected = new double[channelCount * bins];

        kernel.Compute(samples, channelCount, stride, actual);
        reference.Compute(TestSignals.AsDoubles(samples), channelCount, stride, expected);

        Assert.Equal(-1, actual[^1]);
        var widened = TestSignals.AsDoubles(actual);
        for (var c = 0; c < channelCount; c++)
        {
            AssertWithinFloat32Rounding(
                expected.AsSpan(c * bins, bins),
                widened.AsSpan(c * bins, bins),
                segmentLength,
                $"N={segmentLength} channels={channelCount} vectorized={vectorized} channel {c}");
        }
    }

    /// <summary>|actual − expected| ≤ 1e-5·expected + 2·16·u·log2 N·√(expected·mean) per bin; below 1e-6·max, ≤ 1e-6·max (see the constants).</summary>
    private static void AssertWithinFloat32Rounding(ReadOnlySpan<double> expected, ReadOnlySpan<double> actual, int segmentLength, string what)
    {
        Assert.Equal(expected.Length, actual.Length);
        double max = 0;
        double mean = 0;
        for (var k = 0; k < expected.Length; k++)
        {
            max = Math.Max(max, expected[k]);
            mean += expected[k] / expected.Length;
        }

        Assert.True(max > 0, $"{what}: reference is all zero.");
        var rounding = 2 * RoundingConstant * UnitRoundoff * Math.Log2(segmentLength);
        for (var k = 0; k < expected.Length; k++)
        {
            var allowed = (RelativeTolerance * expected[k]) + (rounding * Math.Sqrt(expected[k] * mean));
            if (expected[k] <= FloorFraction * max)
            {
                allowed = Math.Max(allowed, FloorFraction * max);
            }

            var error = Math.Abs(actual[k] - expected[k]);
            Assert.True(error <= allowed, $"{what}: bin {k} {actual[k]:R} vs {expected[k]:R}, error {error:E3} > allowed {allowed:E3} (relative {error / expected[k]:E3}).");
        }
    }

    /// <summary>
    /// Channel-major float32 block, <paramref name="pad"/> extra samples after each channel: seeded noise (σ ≈ 10 µV), a DC
    /// offset (−40 … +60 µV), a drift of a few µV per segment and a tone, all differing by channel so swapped lanes show.
    /// </summary>
    private static float[] Signal(int n, int channels, int pad, int seed)
    {
        var rng = new Random(seed);
        var stride = n + pad;
        var flat = new float[channels * stride];
        for (var c = 0; c < channels; c++)
        {
            var toneBin = 0.37 * (c + 1) * n / (channels + 1);
            var offsetUv = (6 * c) - 40;
            for (var i = 0; i < stride; i++)
            {
                flat[(c * stride) + i] = (float)((34.6 * (rng.NextDouble() - 0.5)) + offsetUv + (3.0 * i / n) + ((c + 1) * Math.Sin(2 * Math.PI * toneBin * i / n)));
            }
        }

        return flat;
    }
}
