using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace HumWatch.Core.Spectra.Fft;

/// <summary>
/// The float32 periodogram kernel: the same mixed-radix FFT stages, split step and scaling as
/// <see cref="FftPeriodogramKernel"/> (shared through <see cref="ILaneOps{TVec, TScalar}"/>, <see cref="ComplexFftPlan"/>
/// and <see cref="PowerSteps"/>), on float32 lanes — eight channels per Vector256&lt;float&gt;. Only the lane transposes
/// (8×8 instead of 4×4) and the mean are its own. The segment mean is summed in float64 and subtracted as a float32
/// high part plus a float32 low part, so the detrend leaves no float32 rounding of a large DC offset behind (that residue
/// would land in bins 0 and 1). Without hardware Vector256 the same stages run on float scalars, one channel at a time.
/// Allocates nothing after construction.
/// </summary>
internal sealed class FftPeriodogramKernel32 : IPeriodogramKernel32
{
    private const int VectorLanes = 8;

    private readonly ComplexFftPlan _plan;
    private readonly float[] _window;
    private readonly float[] _splitTwiddles;
    private readonly AlignedScratch<float> _re;
    private readonly AlignedScratch<float> _im;

    // Vectorized even N: the eight channels' raw samples as lanes, natural order (z[n] = x[2n] + i·x[2n+1]), before the
    // digit-reversed, detrended, windowed copy into _re/_im. Transposing first keeps the input reads sequential.
    private readonly AlignedScratch<float> _rawRe;
    private readonly AlignedScratch<float> _rawIm;

    // Start of each lane's segment in the caller's samples for the current group (spare lanes repeat lane 0).
    private readonly int[] _laneStarts = new int[VectorLanes];
    private readonly float _densityScale;
    private readonly bool _even;
    private readonly bool _vectorized;

    /// <summary>Creates a kernel for <paramref name="segmentLength"/>-sample segments (≥ 2, 2·3·5-smooth) at <paramref name="sampleRateHz"/> (> 0).</summary>
    public FftPeriodogramKernel32(int segmentLength, double sampleRateHz)
        : this(segmentLength, sampleRateHz, Vector256.IsHardwareAccelerated && Avx.IsSupported, 0)
    {
    }

    /// <summary>As the public constructor, choosing the lane width (<paramref name="vectorized"/>) and a deliberate scratch misalignment in bytes (for tests and benchmarks).</summary>
    internal FftPeriodogramKernel32(int segmentLength, double sampleRateHz, bool vectorized, int misalignBytes)
    {
        PowerSteps.CheckKernelArguments(segmentLength, sampleRateHz);
        SegmentLength = segmentLength;
        BinCount = (segmentLength / 2) + 1;
        _even = (segmentLength & 1) == 0;
        _vectorized = vectorized && Avx.IsSupported;
        var m = _even ? segmentLength / 2 : segmentLength;
        _plan = ComplexFftPlan.Get(m);

        // Tables are made in float64 (as for the float64 kernel) and rounded once, so both kernels share one definition.
        _window = PowerSteps.ToSingle(PowerSteps.Window(segmentLength, sampleRateHz, out var densityScale));
        _densityScale = (float)densityScale;
        _splitTwiddles = PowerSteps.ToSingle(PowerSteps.SplitTwiddles(segmentLength));

        var lanes = _vectorized ? VectorLanes : 1;
        _re = new AlignedScratch<float>(m * lanes, misalignBytes);
        _im = new AlignedScratch<float>(m * lanes, misalignBytes);
        var raw = _vectorized && _even ? m * lanes : 0;
        _rawRe = new AlignedScratch<float>(raw, misalignBytes);
        _rawIm = new AlignedScratch<float>(raw, misalignBytes);
    }

    /// <inheritdoc/>
    public int SegmentLength { get; }

    /// <inheritdoc/>
    public int BinCount { get; }

    /// <summary>True when channels go eight to a Vector256&lt;float&gt;; false on the scalar path.</summary>
    public bool Vectorized => _vectorized;

    /// <inheritdoc/>
    public void Compute(ReadOnlySpan<float> samples, int channelCount, int sampleStride, Span<float> periodograms)
    {
        if (!PeriodogramArguments.Check(SegmentLength, BinCount, samples, channelCount, sampleStride, periodograms))
        {
            return;
        }

        var n = SegmentLength;
        var bins = BinCount;
        if (_vectorized)
        {
            var re = MemoryMarshal.Cast<float, Vector256<float>>(_re.Span);
            var im = MemoryMarshal.Cast<float, Vector256<float>>(_im.Span);
            for (var first = 0; first < channelCount; first += VectorLanes)
            {
                var count = Math.Min(VectorLanes, channelCount - first);

                // Spare lanes of a short last group repeat the group's first channel; their results are dropped.
                for (var lane = 0; lane < VectorLanes; lane++)
                {
                    _laneStarts[lane] = (first + (lane < count ? lane : 0)) * sampleStride;
                }

                LoadVector(samples, re, im);
                Transform<Vector256SingleLanes, Vector256<float>>(re, im);
                Unload(VectorLanes, count, periodograms.Slice(first * bins, count * bins));
            }
        }
        else
        {
            var re = _re.Span;
            var im = _im.Span;
            for (var c = 0; c < channelCount; c++)
            {
                LoadScalar(samples.Slice(c * sampleStride, n), re, im);
                Transform<SingleScalarLanes, float>(re, im);
                Unload(1, 1, periodograms.Slice(c * bins, bins));
            }
        }
    }

    /// <summary>8×8 transpose: on return r<i>j</i> holds element j of every input row (row i → lane i).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static void Transpose8x8(
        ref Vector256<float> r0,
        ref Vector256<float> r1,
        ref Vector256<float> r2,
        ref Vector256<float> r3,
        ref Vector256<float> r4,
        ref Vector256<float> r5,
        ref Vector256<float> r6,
        ref Vector256<float> r7)
    {
        // Interleave pairs, then quads within each 128-bit half, then swap halves.
        var t0 = Avx.UnpackLow(r0, r1);
        var t1 = Avx.UnpackHigh(r0, r1);
        var t2 = Avx.UnpackLow(r2, r3);
        var t3 = Avx.UnpackHigh(r2, r3);
        var t4 = Avx.UnpackLow(r4, r5);
        var t5 = Avx.UnpackHigh(r4, r5);
        var t6 = Avx.UnpackLow(r6, r7);
        var t7 = Avx.UnpackHigh(r6, r7);
        var q0 = Avx.Shuffle(t0, t2, 0x44);
        var q1 = Avx.Shuffle(t0, t2, 0xEE);
        var q2 = Avx.Shuffle(t1, t3, 0x44);
        var q3 = Avx.Shuffle(t1, t3, 0xEE);
        var q4 = Avx.Shuffle(t4, t6, 0x44);
        var q5 = Avx.Shuffle(t4, t6, 0xEE);
        var q6 = Avx.Shuffle(t5, t7, 0x44);
        var q7 = Avx.Shuffle(t5, t7, 0xEE);
        r0 = Avx.Permute2x128(q0, q4, 0x20);
        r1 = Avx.Permute2x128(q1, q5, 0x20);
        r2 = Avx.Permute2x128(q2, q6, 0x20);
        r3 = Avx.Permute2x128(q3, q7, 0x20);
        r4 = Avx.Permute2x128(q0, q4, 0x31);
        r5 = Avx.Permute2x128(q1, q5, 0x31);
        r6 = Avx.Permute2x128(q2, q6, 0x31);
        r7 = Avx.Permute2x128(q3, q7, 0x31);
    }

    /// <summary>Mean from its float64 sum, as a float32 high part and the float32 remainder (mean ≈ high + low to ~float64 precision).</summary>
    private static void SplitMean(double sum, int length, out float high, out float low)
    {
        var mean = sum / length;
        high = (float)mean;
        low = (float)(mean - high);
    }

    private static double Sum(ReadOnlySpan<float> segment)
    {
        double sum = 0;
        for (var i = 0; i < segment.Length; i++)
        {
            sum += segment[i];
        }

        return sum;
    }

    /// <summary>Gathers the group's eight segments (starts in <see cref="_laneStarts"/>) into lanes, detrended, windowed, in digit-reversed order.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private void LoadVector(ReadOnlySpan<float> samples, Span<Vector256<float>> re, Span<Vector256<float>> im)
    {
        var window = _window.AsSpan();
        var permutation = _plan.Permutation;
        var m = permutation.Length;
        var n = SegmentLength;
        var starts = _laneStarts.AsSpan();
        Span<double> sums = stackalloc double[VectorLanes];
        Vector256<float> meanHigh;
        Vector256<float> meanLow;

        if (_even)
        {
            // Pass 1, sequential: eight samples (four complex z) of each channel per load, an 8×8 transpose into lanes.
            var rawRe = MemoryMarshal.Cast<float, Vector256<float>>(_rawRe.Span);
            var rawIm = MemoryMarshal.Cast<float, Vector256<float>>(_rawIm.Span);
            var s0 = samples.Slice(starts[0], n);
            var s1 = samples.Slice(starts[1], n);
            var s2 = samples.Slice(starts[2], n);
            var s3 = samples.Slice(starts[3], n);
            var s4 = samples.Slice(starts[4], n);
            var s5 = samples.Slice(starts[5], n);
            var s6 = samples.Slice(starts[6], n);
            var s7 = samples.Slice(starts[7], n);

            // The mean is summed relative to each lane's first sample, in float32 blocks of eight that go to float64: the
            // differences are at noise scale, so the blocks round at noise scale too, not at the scale of a DC offset (a
            // 5 mV offset summed directly in float32 blocks already moves bins 0 and 1 by 1e-4).
            var pivot = Vector256.Create(s0[0], s1[0], s2[0], s3[0], s4[0], s5[0], s6[0], s7[0]);
            var sumLow = Vector256<double>.Zero;
            var sumHigh = Vector256<double>.Zero;
            var blocks = n / VectorLanes;
            for (var q = 0; q < blocks; q++)
            {
                var at = q * VectorLanes;
                var v0 = Vector256.Create(s0.Slice(at, VectorLanes));
                var v1 = Vector256.Create(s1.Slice(at, VectorLanes));
                var v2 = Vector256.Create(s2.Slice(at, VectorLanes));
                var v3 = Vector256.Create(s3.Slice(at, VectorLanes));
                var v4 = Vector256.Create(s4.Slice(at, VectorLanes));
                var v5 = Vector256.Create(s5.Slice(at, VectorLanes));
                var v6 = Vector256.Create(s6.Slice(at, VectorLanes));
                var v7 = Vector256.Create(s7.Slice(at, VectorLanes));
                Transpose8x8(ref v0, ref v1, ref v2, ref v3, ref v4, ref v5, ref v6, ref v7);
                var z = 4 * q;
                rawRe[z] = v0;
                rawIm[z] = v1;
                rawRe[z + 1] = v2;
                rawIm[z + 1] = v3;
                rawRe[z + 2] = v4;
                rawIm[z + 2] = v5;
                rawRe[z + 3] = v6;
                rawIm[z + 3] = v7;
                var block = (((v0 - pivot) + (v1 - pivot)) + ((v2 - pivot) + (v3 - pivot)))
                    + (((v4 - pivot) + (v5 - pivot)) + ((v6 - pivot) + (v7 - pivot)));
                sumLow += Avx.ConvertToVector256Double(block.GetLower());
                sumHigh += Avx.ConvertToVector256Double(block.GetUpper());
            }

            sumLow.CopyTo(sums);
            sumHigh.CopyTo(sums[4..]);

            // N not a multiple of 8: up to three complex samples left over.
            for (var z = 4 * blocks; z < m; z++)
            {
                var e = 2 * z;
                rawRe[z] = Vector256.Create(s0[e], s1[e], s2[e], s3[e], s4[e], s5[e], s6[e], s7[e]);
                rawIm[z] = Vector256.Create(s0[e + 1], s1[e + 1], s2[e + 1], s3[e + 1], s4[e + 1], s5[e + 1], s6[e + 1], s7[e + 1]);
                for (var lane = 0; lane < VectorLanes; lane++)
                {
                    sums[lane] += ((double)rawRe[z][lane] - pivot[lane]) + ((double)rawIm[z][lane] - pivot[lane]);
                }
            }

            for (var lane = 0; lane < VectorLanes; lane++)
            {
                sums[lane] += (double)pivot[lane] * n;
            }

            SplitMeans(sums, out meanHigh, out meanLow);

            // Pass 2: detrend and window into digit-reversed order (whole-vector reads, sequential writes).
            for (var p = 0; p < m; p++)
            {
                var z = permutation[p];
                var e = 2 * z;
                re[p] = (rawRe[z] - meanHigh - meanLow) * window[e];
                im[p] = (rawIm[z] - meanHigh - meanLow) * window[e + 1];
            }
        }
        else
        {
            for (var lane = 0; lane < VectorLanes; lane++)
            {
                sums[lane] = Sum(samples.Slice(starts[lane], n));
            }

            SplitMeans(sums, out meanHigh, out meanLow);
            for (var p = 0; p < m; p++)
            {
                var e = permutation[p];
                var x = Vector256.Create(
                    samples[starts[0] + e],
                    samples[starts[1] + e],
                    samples[starts[2] + e],
                    samples[starts[3] + e],
                    samples[starts[4] + e],
                    samples[starts[5] + e],
                    samples[starts[6] + e],
                    samples[starts[7] + e]);
                re[p] = (x - meanHigh - meanLow) * window[e];
                im[p] = Vector256<float>.Zero;
            }
        }
    }

    private void SplitMeans(ReadOnlySpan<double> sums, out Vector256<float> high, out Vector256<float> low)
    {
        Span<float> highs = stackalloc float[VectorLanes];
        Span<float> lows = stackalloc float[VectorLanes];
        for (var lane = 0; lane < VectorLanes; lane++)
        {
            SplitMean(sums[lane], SegmentLength, out highs[lane], out lows[lane]);
        }

        high = Vector256.Create<float>(highs);
        low = Vector256.Create<float>(lows);
    }

    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private void LoadScalar(ReadOnlySpan<float> segment, Span<float> re, Span<float> im)
    {
        SplitMean(Sum(segment), segment.Length, out var meanHigh, out var meanLow);
        var window = _window.AsSpan();
        var permutation = _plan.Permutation;
        var m = permutation.Length;
        if (_even)
        {
            for (var p = 0; p < m; p++)
            {
                var e = 2 * permutation[p];
                re[p] = (segment[e] - meanHigh - meanLow) * window[e];
                im[p] = (segment[e + 1] - meanHigh - meanLow) * window[e + 1];
            }
        }
        else
        {
            for (var p = 0; p < m; p++)
            {
                var e = permutation[p];
                re[p] = (segment[e] - meanHigh - meanLow) * window[e];
                im[p] = 0;
            }
        }
    }

    /// <summary>FFT, then scaled power per bin back into the scratch: bin k (k &lt; M) at re[k]; for even N, bin M at im[0].</summary>
    private void Transform<TOps, TVec>(Span<TVec> re, Span<TVec> im)
        where TOps : struct, ILaneOps<TVec, float>
        where TVec : struct
    {
        _plan.Forward<TOps, TVec, float>(re, im);
        if (_even)
        {
            PowerSteps.Split<TOps, TVec, float>(re, im, _plan.Length, _splitTwiddles, _densityScale);
        }
        else
        {
            PowerSteps.Odd<TOps, TVec, float>(re, im, BinCount, _densityScale);
        }
    }

    /// <summary>Copies lanes 0 … <paramref name="count"/> − 1 of the power in the scratch into consecutive output rows.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private void Unload(int lanes, int count, Span<float> rows)
    {
        var bins = BinCount;
        var re = _re.Span;
        var im = _im.Span;

        // Bins stored in re: all M for even N (bin M is in im[0]); all (N+1)/2 for odd N.
        var fromRe = _even ? bins - 1 : bins;
        var done = 0;
        if (lanes == VectorLanes && count == VectorLanes)
        {
            // Full group: 8×8 transposes turn eight bins × eight channels into eight bins of each channel's row.
            var vectors = MemoryMarshal.Cast<float, Vector256<float>>(re);
            for (; done + VectorLanes <= fromRe; done += VectorLanes)
            {
                var r0 = vectors[done];
                var r1 = vectors[done + 1];
                var r2 = vectors[done + 2];
                var r3 = vectors[done + 3];
                var r4 = vectors[done + 4];
                var r5 = vectors[done + 5];
                var r6 = vectors[done + 6];
                var r7 = vectors[done + 7];
                Transpose8x8(ref r0, ref r1, ref r2, ref r3, ref r4, ref r5, ref r6, ref r7);
                r0.CopyTo(rows[done..]);
                r1.CopyTo(rows[(bins + done)..]);
                r2.CopyTo(rows[((2 * bins) + done)..]);
                r3.CopyTo(rows[((3 * bins) + done)..]);
                r4.CopyTo(rows[((4 * bins) + done)..]);
                r5.CopyTo(rows[((5 * bins) + done)..]);
                r6.CopyTo(rows[((6 * bins) + done)..]);
                r7.CopyTo(rows[((7 * bins) + done)..]);
            }
        }

        for (var c = 0; c < count; c++)
        {
            var row = rows.Slice(c * bins, bins);
            for (var k = done; k < fromRe; k++)
            {
                row[k] = re[(k * lanes) + c];
            }

            if (_even)
            {
                row[bins - 1] = im[c];
            }
        }
    }
}
