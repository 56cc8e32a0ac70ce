using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace HumWatch.Core.Spectra.Fft;

/// <summary>
/// Periodogram kernel on our own mixed-radix FFT (radix 4/2/3/5), for segment lengths with no prime factor other than
/// 2, 3 and 5 (<see cref="Supports"/>). Even N: a real FFT as one N/2-point complex FFT of z[n] = x[2n] + i·x[2n+1]
/// plus the split step; odd N: one N-point complex FFT of the real input. Channels go through in groups of four,
/// one per Vector256 lane (structure of arrays, float64); a short last group fills its spare lanes with a copy of its
/// first channel and discards them. Without hardware Vector256 the same stages run on scalars, one channel at a time.
/// Conventions as scipy.signal.welch (see <see cref="IPeriodogramKernel"/>). Allocates nothing after construction.
/// </summary>
internal sealed class FftPeriodogramKernel : IPeriodogramKernel
{
    private readonly ComplexFftPlan _plan;
    private readonly double[] _window;

    // Split-step twiddles (cos, −sin of 2πk/N) for k = 0 … M/2, even N only (PowerSteps.SplitTwiddles).
    private readonly double[] _splitTwiddles;
    private readonly AlignedScratch<double> _re;
    private readonly AlignedScratch<double> _im;

    // Vectorized even N: the four channels' raw samples as lanes, natural order (z[n] = x[2n] + i·x[2n+1]), before the
    // digit-reversed, detrended, windowed copy into _re/_im. Transposing first keeps the input reads sequential.
    private readonly AlignedScratch<double> _rawRe;
    private readonly AlignedScratch<double> _rawIm;
    private readonly double _densityScale;
    private readonly bool _even;
    private readonly bool _vectorized;

    /// <summary>Creates a kernel for <paramref name="segmentLength"/>-sample segments (≥ 2, 2·3·5-smooth) at <paramref name="sampleRateHz"/> (> 0).</summary>
    public FftPeriodogramKernel(int segmentLength, double sampleRateHz)
        : this(segmentLength, sampleRateHz, Vector256.IsHardwareAccelerated && Avx.IsSupported, 0)
    {
    }

    /// <summary>As the public constructor, choosing the lane width (<paramref name="vectorized"/>) and a deliberate scratch misalignment in bytes (for tests and benchmarks).</summary>
    internal FftPeriodogramKernel(int segmentLength, double sampleRateHz, bool vectorized, int misalignBytes)
    {
        PowerSteps.CheckKernelArguments(segmentLength, sampleRateHz);
        SegmentLength = segmentLength;
        BinCount = (segmentLength / 2) + 1;
        _even = (segmentLength & 1) == 0;
        // The vector path's lane transposes use AVX shuffles (Vector256 is only hardware accelerated on x64 with AVX anyway).
        _vectorized = vectorized && Avx.IsSupported;
        var m = _even ? segmentLength / 2 : segmentLength;
        _plan = ComplexFftPlan.Get(m);
        _window = PowerSteps.Window(segmentLength, sampleRateHz, out _densityScale);
        _splitTwiddles = PowerSteps.SplitTwiddles(segmentLength);

        var lanes = _vectorized ? Vector256<double>.Count : 1;
        _re = new AlignedScratch<double>(m * lanes, misalignBytes);
        _im = new AlignedScratch<double>(m * lanes, misalignBytes);
        var raw = _vectorized && _even ? m * lanes : 0;
        _rawRe = new AlignedScratch<double>(raw, misalignBytes);
        _rawIm = new AlignedScratch<double>(raw, misalignBytes);
    }

    /// <inheritdoc/>
    public int SegmentLength { get; }

    /// <inheritdoc/>
    public int BinCount { get; }

    /// <summary>True when channels go four to a Vector256; false on the scalar path.</summary>
    public bool Vectorized => _vectorized;

    /// <summary>True when this kernel handles <paramref name="segmentLength"/>: ≥ 2 with no prime factor other than 2, 3 and 5.</summary>
    public static bool Supports(int segmentLength) => segmentLength >= 2 && ComplexFftPlan.Supports(segmentLength);

    /// <inheritdoc/>
    public void Compute(ReadOnlySpan<double> samples, int channelCount, int sampleStride, Span<double> periodograms)
    {
        if (!PeriodogramArguments.Check(SegmentLength, BinCount, samples, channelCount, sampleStride, periodograms))
        {
            return;
        }

        var n = SegmentLength;
        var bins = BinCount;

        if (_vectorized)
        {
            var lanes = Vector256<double>.Count;
            var re = MemoryMarshal.Cast<double, Vector256<double>>(_re.Span);
            var im = MemoryMarshal.Cast<double, Vector256<double>>(_im.Span);
            for (var first = 0; first < channelCount; first += lanes)
            {
                var count = Math.Min(lanes, channelCount - first);

                // Spare lanes of a short last group repeat the group's first channel; their results are dropped.
                var s0 = samples.Slice(first * sampleStride, n);
                var s1 = count > 1 ? samples.Slice((first + 1) * sampleStride, n) : s0;
                var s2 = count > 2 ? samples.Slice((first + 2) * sampleStride, n) : s0;
                var s3 = count > 3 ? samples.Slice((first + 3) * sampleStride, n) : s0;
                LoadVector(s0, s1, s2, s3, re, im);
                Transform<Vector256Lanes, Vector256<double>>(re, im);
                Unload(lanes, count, periodograms.Slice(first * bins, count * bins));
            }
        }
        else
        {
            var re = _re.Span;
            var im = _im.Span;
            for (var c = 0; c < channelCount; c++)
            {
                LoadScalar(samples.Slice(c * sampleStride, n), re, im);
                Transform<ScalarLanes, double>(re, im);
                Unload(1, 1, periodograms.Slice(c * bins, bins));
            }
        }
    }

    private static double Mean(ReadOnlySpan<double> segment)
    {
        double sum = 0;
        for (var i = 0; i < segment.Length; i++)
        {
            sum += segment[i];
        }

        return sum / segment.Length;
    }

    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private void LoadVector(
        ReadOnlySpan<double> s0,
        ReadOnlySpan<double> s1,
        ReadOnlySpan<double> s2,
        ReadOnlySpan<double> s3,
        Span<Vector256<double>> re,
        Span<Vector256<double>> im)
    {
        var window = _window.AsSpan();
        var permutation = _plan.Permutation;
        var m = permutation.Length;

        if (_even)
        {
            // Pass 1, sequential: four samples of each channel (z[n], z[n+1]) per load, a 4×4 transpose into lanes, and
            // the per-channel sums for the mean on the way.
            var rawRe = MemoryMarshal.Cast<double, Vector256<double>>(_rawRe.Span);
            var rawIm = MemoryMarshal.Cast<double, Vector256<double>>(_rawIm.Span);
            var v0 = MemoryMarshal.Cast<double, Vector256<double>>(s0);
            var v1 = MemoryMarshal.Cast<double, Vector256<double>>(s1);
            var v2 = MemoryMarshal.Cast<double, Vector256<double>>(s2);
            var v3 = MemoryMarshal.Cast<double, Vector256<double>>(s3);
            // One accumulator, samples in order: each lane sums its channel exactly as the scalar path does, so the mean (and
            // the ill-conditioned DC bin after detrending) does not depend on the path taken.
            var sum = Vector256<double>.Zero;
            for (var q = 0; q < v0.Length; q++)
            {
                var lo01 = Avx.UnpackLow(v0[q], v1[q]);
                var hi01 = Avx.UnpackHigh(v0[q], v1[q]);
                var lo23 = Avx.UnpackLow(v2[q], v3[q]);
                var hi23 = Avx.UnpackHigh(v2[q], v3[q]);
                var re0 = Avx.Permute2x128(lo01, lo23, 0x20);
                var im0 = Avx.Permute2x128(hi01, hi23, 0x20);
                var re1 = Avx.Permute2x128(lo01, lo23, 0x31);
                var im1 = Avx.Permute2x128(hi01, hi23, 0x31);
                rawRe[2 * q] = re0;
                rawIm[2 * q] = im0;
                rawRe[(2 * q) + 1] = re1;
                rawIm[(2 * q) + 1] = im1;
                sum = sum + re0 + im0 + re1 + im1;
            }

            // N ≡ 2 (mod 4): one complex sample left over.
            for (var n = 2 * v0.Length; n < m; n++)
            {
                var e = 2 * n;
                rawRe[n] = Vector256.Create(s0[e], s1[e], s2[e], s3[e]);
                rawIm[n] = Vector256.Create(s0[e + 1], s1[e + 1], s2[e + 1], s3[e + 1]);
                sum = sum + rawRe[n] + rawIm[n];
            }

            var mean = sum / SegmentLength;

            // Pass 2: detrend and window into digit-reversed order (whole-vector reads, sequential writes).
            for (var p = 0; p < m; p++)
            {
                var n = permutation[p];
                var e = 2 * n;
                re[p] = (rawRe[n] - mean) * window[e];
                im[p] = (rawIm[n] - mean) * window[e + 1];
            }
        }
        else
        {
            var mean = Vector256.Create(Mean(s0), Mean(s1), Mean(s2), Mean(s3));
            for (var p = 0; p < m; p++)
            {
                var e = permutation[p];
                re[p] = (Vector256.Create(s0[e], s1[e], s2[e], s3[e]) - mean) * window[e];
                im[p] = Vector256<double>.Zero;
            }
        }
    }

    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private void LoadScalar(ReadOnlySpan<double> segment, Span<double> re, Span<double> im)
    {
        var mean = Mean(segment);
        var window = _window.AsSpan();
        var permutation = _plan.Permutation;
        var m = permutation.Length;
        if (_even)
        {
            for (var p = 0; p < m; p++)
            {
                var e = 2 * permutation[p];
                re[p] = (segment[e] - mean) * window[e];
                im[p] = (segment[e + 1] - mean) * window[e + 1];
            }
        }
        else
        {
            for (var p = 0; p < m; p++)
            {
                var e = permutation[p];
                re[p] = (segment[e] - mean) * window[e];
                im[p] = 0;
            }
        }
    }

    /// <summary>FFT, then scaled power per bin back into the scratch: bin k (k &lt; M) at re[k]; for even N, bin M at im[0].</summary>
    private void Transform<TOps, TVec>(Span<TVec> re, Span<TVec> im)
        where TOps : struct, ILaneOps<TVec, double>
        where TVec : struct
    {
        _plan.Forward<TOps, TVec, double>(re, im);
        if (_even)
        {
            PowerSteps.Split<TOps, TVec, double>(re, im, _plan.Length, _splitTwiddles, _densityScale);
        }
        else
        {
            PowerSteps.Odd<TOps, TVec, double>(re, im, BinCount, _densityScale);
        }
    }

    /// <summary>Copies lanes 0 … <paramref name="count"/> − 1 of the power in the scratch into consecutive output rows.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private void Unload(int lanes, int count, Span<double> rows)
    {
        var bins = BinCount;
        var re = _re.Span;
        var im = _im.Span;

        // Bins stored in re: all M for even N (bin M is in im[0]); all (N+1)/2 for odd N.
        var fromRe = _even ? bins - 1 : bins;
        var done = 0;
        if (lanes == 4 && count == 4)
        {
            // Full group: 4×4 transposes turn four bins × four channels into four bins of each channel's row.
            var vectors = MemoryMarshal.Cast<double, Vector256<double>>(re);
            var row0 = rows[..bins];
            var row1 = rows.Slice(bins, bins);
            var row2 = rows.Slice(2 * bins, bins);
            var row3 = rows.Slice(3 * bins, bins);
            for (; done + 4 <= fromRe; done += 4)
            {
                var r0 = vectors[done];
                var r1 = vectors[done + 1];
                var r2 = vectors[done + 2];
                var r3 = vectors[done + 3];
                var lo01 = Avx.UnpackLow(r0, r1);
                var hi01 = Avx.UnpackHigh(r0, r1);
                var lo23 = Avx.UnpackLow(r2, r3);
                var hi23 = Avx.UnpackHigh(r2, r3);
                Avx.Permute2x128(lo01, lo23, 0x20).CopyTo(row0[done..]);
                Avx.Permute2x128(hi01, hi23, 0x20).CopyTo(row1[done..]);
                Avx.Permute2x128(lo01, lo23, 0x31).CopyTo(row2[done..]);
                Avx.Permute2x128(hi01, hi23, 0x31).CopyTo(row3[done..]);
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
