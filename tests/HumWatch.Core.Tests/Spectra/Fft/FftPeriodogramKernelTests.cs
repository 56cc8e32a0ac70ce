using System.Numerics;
using HumWatch.Core.Spectra;
using HumWatch.Core.Spectra.Fft;
using Xunit;

namespace HumWatch.Core.Tests.Spectra.Fft;

public sealed class FftPeriodogramKernelTests
{
    private static readonly int[] Sizes = [256, 1000, 1024, 2000, 2048, 4000, 4096, 8192, 16384];
    private static readonly int[] ChannelCounts = [1, 3, 4, 5, 7, 32];

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
    public void Vectorized_kernel_equals_MathNet_kernel_per_bin(int segmentLength, int channelCount)
    {
        // MathNet.Numerics 5.0.0 Fourier.ForwardReal through MathNetPeriodogramKernel (independent FFT implementation)
        AssertMatchesReference(segmentLength, channelCount, vectorized: true, seed: segmentLength + channelCount);
    }

    [Theory]
    [InlineData(256, 1)]
    [InlineData(1000, 3)]
    [InlineData(2000, 5)]
    [InlineData(2048, 2)]
    [InlineData(4000, 1)]
    [InlineData(8192, 3)]
    public void Scalar_fallback_equals_MathNet_kernel_per_bin(int segmentLength, int channelCount)
    {
        // MathNet.Numerics 5.0.0 Fourier.ForwardReal through MathNetPeriodogramKernel
        AssertMatchesReference(segmentLength, channelCount, vectorized: false, seed: 7 * segmentLength);
    }

    [Theory]
    [InlineData(2)]
    [InlineData(3)]
    [InlineData(4)]
    [InlineData(5)]
    [InlineData(6)]
    [InlineData(10)]
    [InlineData(15)]
    [InlineData(30)]
    [InlineData(45)]
    [InlineData(375)]
    [InlineData(1125)]
    [InlineData(1536)]
    [InlineData(2250)]
    public void Small_odd_and_mixed_lengths_equal_MathNet_on_both_paths(int segmentLength)
    {
        // MathNet.Numerics 5.0.0 Fourier.ForwardReal through MathNetPeriodogramKernel
        AssertMatchesReference(segmentLength, 5, vectorized: true, seed: segmentLength);
        AssertMatchesReference(segmentLength, 2, vectorized: false, seed: segmentLength + 1);
    }

    [Theory]
    [InlineData(8)]
    [InlineData(12)]
    [InlineData(25)]
    [InlineData(60)]
    public void Power_equals_a_direct_DFT_sum(int segmentLength)
    {
        // DFT definition X[k] = Σ x[n]·e^(−2πi·nk/N) with scipy.signal.welch's density scaling and one-sided doubling
        const double fs = 200;
        var x = Signal(segmentLength, 1, 0, seed: 3)[0];
        var kernel = new FftPeriodogramKernel(segmentLength, fs);
        var actual = new double[kernel.BinCount];
        kernel.Compute(x, 1, segmentLength, actual);

        var window = new double[segmentLength];
        double sumSquares = 0;
        double mean = 0;
        for (var i = 0; i < segmentLength; i++)
        {
            window[i] = 0.5 - (0.5 * Math.Cos(2 * Math.PI * i / segmentLength)); // periodic Hann, Harris 1978
            sumSquares += window[i] * window[i];
            mean += x[i] / segmentLength;
        }

        var expected = new double[kernel.BinCount];
        for (var k = 0; k < expected.Length; k++)
        {
            var sum = Complex.Zero;
            for (var i = 0; i < segmentLength; i++)
            {
                sum += (x[i] - mean) * window[i] * Complex.FromPolarCoordinates(1, -2 * Math.PI * ((long)i * k % segmentLength) / segmentLength);
            }

            var edge = k == 0 || (segmentLength % 2 == 0 && k == segmentLength / 2);
            expected[k] = sum.Magnitude * sum.Magnitude / (fs * sumSquares) * (edge ? 1 : 2);
        }

        SpectraAssert.BinsClose(expected, actual, 1e-9, 1e-12, $"N={segmentLength}");
    }

    [Theory]
    [InlineData(2000, true)]
    [InlineData(2048, true)]
    [InlineData(1125, true)]
    [InlineData(2000, false)]
    public void Power_obeys_Parseval(int segmentLength, bool vectorized)
    {
        // Parseval's theorem for the DFT: Σ_k |X[k]|² = N·Σ_n |x[n]|², folded onto the one-sided density
        const double fs = 500;
        var x = Signal(segmentLength, 3, 0, seed: 11);
        var kernel = new FftPeriodogramKernel(segmentLength, fs, vectorized, 0);
        var psd = new double[3 * kernel.BinCount];
        kernel.Compute(Flatten(x, segmentLength, 0), 3, segmentLength, psd);

        for (var c = 0; c < 3; c++)
        {
            double mean = 0;
            for (var i = 0; i < segmentLength; i++)
            {
                mean += x[c][i] / segmentLength;
            }

            double energy = 0;
            double sumSquares = 0;
            for (var i = 0; i < segmentLength; i++)
            {
                var w = 0.5 - (0.5 * Math.Cos(2 * Math.PI * i / segmentLength));
                energy += (x[c][i] - mean) * (x[c][i] - mean) * w * w;
                sumSquares += w * w;
            }

            double total = 0;
            for (var k = 0; k < kernel.BinCount; k++)
            {
                total += psd[(c * kernel.BinCount) + k];
            }

            var expected = segmentLength * energy / (fs * sumSquares);
            Assert.True(Math.Abs(total - expected) <= 1e-10 * expected, $"channel {c}: Σ PSD {total:R} vs N·Σ(xw)²/(fs·Σw²) {expected:R}");
        }
    }

    [Fact]
    public void A_bin_centred_cosine_lands_in_its_bin_with_the_Hann_coherent_gain()
    {
        // Harris 1978, Proc. IEEE 66(1): Hann coherent gain 0.5, so a cosine of amplitude A on bin k gives |X[k]| = A·N/4
        const int n = 2000;
        const double fs = 500;
        const int bin = 120;
        var x = new double[n];
        for (var i = 0; i < n; i++)
        {
            x[i] = 3 * Math.Cos(2 * Math.PI * bin * i / n);
        }

        var kernel = new FftPeriodogramKernel(n, fs);
        var psd = new double[kernel.BinCount];
        kernel.Compute(x, 1, n, psd);

        var sumSquares = 0.375 * n; // periodic Hann Σw² = 3N/8 (Harris 1978)
        var expected = 2 * Math.Pow(3.0 * n / 4, 2) / (fs * sumSquares);
        Assert.Equal(expected, psd[bin], expected * 1e-12);
        Assert.Equal(expected / 4, psd[bin - 1], expected * 1e-12);
        Assert.True(psd[bin - 5] < expected * 1e-20, $"bin {bin - 5}: leakage {psd[bin - 5]}");
    }

    [Theory]
    [InlineData(2000, true)]
    [InlineData(2048, true)]
    [InlineData(1125, true)]
    [InlineData(4000, false)]
    public void Steady_state_compute_allocates_nothing(int segmentLength, bool vectorized)
    {
        var kernel = new FftPeriodogramKernel(segmentLength, 500, vectorized, 0);
        var samples = Flatten(Signal(segmentLength, 7, 0, seed: 5), segmentLength, 0);
        var psd = new double[7 * kernel.BinCount];
        kernel.Compute(samples, 7, segmentLength, psd); // warm-up (tiering, statics)
        kernel.Compute(samples, 7, segmentLength, psd);

        var allocated = SteadyState.AllocatedBytesPerRound(() =>
        {
            for (var i = 0; i < 50; i++)
            {
                kernel.Compute(samples, 7, segmentLength, psd);
            }
        });

        Assert.True(psd[10] > 0);
        Assert.Equal(0, allocated);
    }

    [Fact]
    public void SlidingWelch_with_the_default_kernel_allocates_nothing_in_steady_state()
    {
        // 4 s segments at 250 Hz → N = 1000, served by the FFT kernel; the MathNet kernel would allocate per transform.
        var options = new SpectralOptions { SegmentSeconds = 4, OverlapFraction = 0.5, SpanSeconds = 8, HopSeconds = 2 };
        var welch = new SlidingWelch(250, 5, options);
        var channels = TestSignals.Channels(5, 250 * 40, 250, seed: 9);
        var block = TestSignals.ChannelMajor(channels, 0, 250);
        var sink = new CountingSink();
        for (var s = 0; s < 12; s++)
        {
            welch.Append(block, 250, sink); // warm-up: first frames
        }

        var framesBefore = sink.Frames;
        var before = GC.GetAllocatedBytesForCurrentThread();
        for (var s = 0; s < 40; s++)
        {
            welch.Append(block, 250, sink);
        }

        var allocated = GC.GetAllocatedBytesForCurrentThread() - before;

        Assert.True(sink.Frames - framesBefore >= 15, $"only {sink.Frames - framesBefore} frames");
        Assert.Equal(0, allocated);
    }

    [Theory]
    [InlineData(256)]
    [InlineData(1000)]
    [InlineData(2000)]
    [InlineData(2048)]
    [InlineData(4000)]
    [InlineData(8192)]
    public void Factory_uses_the_FFT_kernel_for_smooth_lengths(int segmentLength)
    {
        Assert.IsType<FftPeriodogramKernel>(PeriodogramKernels.Create(segmentLength, 250));
        Assert.IsType<MathNetPeriodogramKernel>(PeriodogramKernels.CreateReference(segmentLength, 250));
    }

    [Theory]
    [InlineData(1001)]
    [InlineData(7)]
    [InlineData(2002)]
    public void Factory_falls_back_to_MathNet_for_other_prime_factors(int segmentLength)
    {
        Assert.False(FftPeriodogramKernel.Supports(segmentLength));
        Assert.IsType<MathNetPeriodogramKernel>(PeriodogramKernels.Create(segmentLength, 250));
    }

    [Fact]
    public void Kernel_rejects_bad_arguments_naming_each()
    {
        Assert.Equal("segmentLength", Assert.Throws<ArgumentOutOfRangeException>(() => new FftPeriodogramKernel(1, 100)).ParamName);
        Assert.Equal("segmentLength", Assert.Throws<ArgumentOutOfRangeException>(() => new FftPeriodogramKernel(1001, 100)).ParamName);
        Assert.Equal("sampleRateHz", Assert.Throws<ArgumentOutOfRangeException>(() => new FftPeriodogramKernel(64, 0)).ParamName);
        Assert.Equal("sampleRateHz", Assert.Throws<ArgumentOutOfRangeException>(() => new FftPeriodogramKernel(64, double.NaN)).ParamName);
        Assert.Equal("misalignBytes", Assert.Throws<ArgumentOutOfRangeException>(() => new FftPeriodogramKernel(64, 100, true, 4)).ParamName);
        var kernel = new FftPeriodogramKernel(64, 100);
        Assert.Equal("samples", Assert.Throws<ArgumentException>(() => kernel.Compute(new double[100], 2, 64, new double[66])).ParamName);
        Assert.Equal("periodograms", Assert.Throws<ArgumentException>(() => kernel.Compute(new double[128], 2, 64, new double[65])).ParamName);
        Assert.Equal("channelCount", Assert.Throws<ArgumentOutOfRangeException>(() => kernel.Compute(new double[128], -1, 64, new double[66])).ParamName);
        Assert.Equal("sampleStride", Assert.Throws<ArgumentOutOfRangeException>(() => kernel.Compute(new double[128], 1, -1, new double[66])).ParamName);
        Assert.Equal("length", Assert.Throws<ArgumentOutOfRangeException>(() => ComplexFftPlan.Get(14)).ParamName);
    }

    [Fact]
    public void Zero_channels_write_nothing()
    {
        var kernel = new FftPeriodogramKernel(64, 100);
        var psd = new double[33];
        psd[0] = 42;
        kernel.Compute(ReadOnlySpan<double>.Empty, 0, 64, psd);
        Assert.Equal(42, psd[0]);
    }

    [Theory]
    [InlineData(2000, 9)]
    [InlineData(1125, 5)]
    [InlineData(4096, 17)]
    [InlineData(30, 3)]
    public void Every_lane_width_equals_the_scalar_kernel(int segmentLength, int channelCount)
    {
        // The scalar path is the reference: each lane runs the same operations in the same order; only the fused
        // multiply-adds of the vector widths round once where the scalar a·b + c rounds twice (≈ 1e-16 per operation),
        // so 1e-12 relative (above 1e-12·max) bounds the difference. Width 512 runs on two Vector256 halves without AVX-512.
        var stride = segmentLength + 5;
        var samples = Flatten(Signal(segmentLength, channelCount, 5, seed: 3 * segmentLength), segmentLength, 5);
        var scalar = new FftPeriodogramKernel(segmentLength, 1000, vectorBits: 0, misalignBytes: 0);
        Assert.Equal(1, scalar.Lanes);
        var expected = new double[channelCount * scalar.BinCount];
        scalar.Compute(samples, channelCount, stride, expected);
        foreach (var bits in new[] { 256, 512 })
        {
            var wide = new FftPeriodogramKernel(segmentLength, 1000, bits, 0);
            var actual = new double[expected.Length];
            wide.Compute(samples, channelCount, stride, actual);
            SpectraAssert.BinsClose(expected, actual, 1e-12, 1e-12, $"N={segmentLength} width {bits} ({wide.Lanes} lanes)");
        }
    }

    [Theory]
    [InlineData(4000, 64)]
    [InlineData(1125, 13)]
    [InlineData(2048, 3)]
    public void Widths_256_and_512_give_the_same_bits(int segmentLength, int channelCount)
    {
        // The kernel takes 512 where AVX-512 runs and 256 elsewhere, so a report must not depend on which: both widths
        // fuse the same multiply-adds (AVX-512's own or AVX2's FMA, each rounding once), lane for lane.
        var stride = segmentLength + 3;
        var samples = Flatten(Signal(segmentLength, channelCount, 3, seed: segmentLength + channelCount), segmentLength, 3);
        var narrow = new FftPeriodogramKernel(segmentLength, 1000, vectorBits: 256, misalignBytes: 0);
        var wide = new FftPeriodogramKernel(segmentLength, 1000, vectorBits: 512, misalignBytes: 0);
        Assert.Equal(narrow.Lanes * 2, wide.Lanes);
        var expected = new double[channelCount * narrow.BinCount];
        var actual = new double[expected.Length];
        narrow.Compute(samples, channelCount, stride, expected);
        wide.Compute(samples, channelCount, stride, actual);
        for (var i = 0; i < expected.Length; i++)
        {
            Assert.True(BitConverter.DoubleToInt64Bits(expected[i]) == BitConverter.DoubleToInt64Bits(actual[i]), $"bin {i % narrow.BinCount} of channel {i / narrow.BinCount}: {actual[i]:R} at 512, {expected[i]:R} at 256");
        }
    }

    [Fact]
    public void Scratch_is_64_byte_aligned_unless_misaligned_on_purpose()
    {
        Assert.Equal(0, new AlignedScratch<double>(1000).AddressModulo64);
        Assert.Equal(8, new AlignedScratch<double>(1000, 8).AddressModulo64);
        Assert.Equal(1000, new AlignedScratch<double>(1000, 8).Span.Length);
    }

    [Fact]
    public void Float32_scratch_is_64_byte_aligned_unless_misaligned_on_purpose()
    {
        Assert.Equal(0, new AlignedScratch<float>(1000).AddressModulo64);
        Assert.Equal(4, new AlignedScratch<float>(1000, 4).AddressModulo64);
        Assert.Equal(1000, new AlignedScratch<float>(1000, 4).Span.Length);
    }

    [Theory]
    [InlineData(1000)]
    [InlineData(2048)]
    [InlineData(1125)]
    public void Plans_are_shared_and_their_permutation_is_a_bijection(int length)
    {
        var plans = new ComplexFftPlan[8];
        Parallel.For(0, plans.Length, i => plans[i] = ComplexFftPlan.Get(length));
        Assert.All(plans, p => Assert.Same(plans[0], p));

        var seen = new bool[length];
        foreach (var index in plans[0].Permutation)
        {
            Assert.False(seen[index], $"index {index} twice");
            seen[index] = true;
        }

        var product = 1;
        foreach (var r in plans[0].Radices)
        {
            Assert.Contains(r, new[] { 2, 3, 4, 5 });
            product *= r;
        }

        Assert.Equal(length, product);
    }

    private static void AssertMatchesReference(int segmentLength, int channelCount, bool vectorized, int seed)
    {
        const double fs = 1000;
        var stride = segmentLength + 17; // segments not back to back, so the stride is honoured
        var x = Signal(segmentLength, channelCount, 17, seed);
        var samples = Flatten(x, segmentLength, 17);
        var kernel = new FftPeriodogramKernel(segmentLength, fs, vectorized, 0);
        var reference = new MathNetPeriodogramKernel(segmentLength, fs);
        var bins = kernel.BinCount;
        Assert.Equal(reference.BinCount, bins);
        var actual = new double[(channelCount * bins) + 3];
        actual[^1] = -1; // sentinel: nothing written past the rows
        var expected = new double[channelCount * bins];

        kernel.Compute(samples, channelCount, stride, actual);
        reference.Compute(samples, channelCount, stride, expected);

        Assert.Equal(-1, actual[^1]);
        for (var c = 0; c < channelCount; c++)
        {
            SpectraAssert.BinsClose(
                expected.AsSpan(c * bins, bins),
                actual.AsSpan(c * bins, bins),
                1e-9,
                1e-12,
                $"N={segmentLength} channels={channelCount} vectorized={vectorized} channel {c}");
        }
    }

    /// <summary>Per channel: seeded noise, a DC offset, a trend and a tone that differ by channel, so swapped lanes show.</summary>
    private static double[][] Signal(int n, int channels, int pad, int seed)
    {
        var rng = new Random(seed);
        var result = new double[channels][];
        for (var c = 0; c < channels; c++)
        {
            var x = new double[n + pad];
            var toneBin = 0.37 * (c + 1) * n / (channels + 1);
            for (var i = 0; i < x.Length; i++)
            {
                x[i] = (10 * (rng.NextDouble() - 0.5)) + (3 * c) - 40 + (0.01 * i) + ((c + 1) * Math.Sin(2 * Math.PI * toneBin * i / n));
            }

            result[c] = x;
        }

        return result;
    }

    private static double[] Flatten(double[][] channels, int n, int pad)
    {
        var flat = new double[channels.Length * (n + pad)];
        for (var c = 0; c < channels.Length; c++)
        {
            channels[c].AsSpan(0, n + pad).CopyTo(flat.AsSpan(c * (n + pad)));
        }

        return flat;
    }

    private sealed class CountingSink : ISlidingWelchSink
    {
        public int Frames { get; private set; }

        public void OnSpan(SlidingWelch welch, long spanStartSample, long spanEndSample) => Frames++;
    }
}
